// The two-stage Miller topology's hand estimates and large-signal figure,
// against the textbook formulas and a fact of the trade.
import { describe, expect, it } from 'vitest';
import { evaluate } from '../../src/model/model';
import { twoStageMiller } from '../../src/topologies/two-stage-miller';
import type { Values } from '../../src/topologies/types';

const TWO_PI = 2 * Math.PI;

describe('two-stage-miller hand estimates', () => {
  // Common practice (Allen & Holberg, "CMOS Analog Circuit Design", §6.2, from
  // memory): with the second pole at 2.2×GBW and the RHP zero at 10×GBW, a
  // unity-gain two-stage amplifier has about 60° of phase margin:
  // 90° − atan(1/2.2) − atan(1/10) = 59.85°.
  const gm1 = 100e-6;
  const gbw = 1e6;
  const cc = gm1 / (TWO_PI * gbw);
  const gm2 = TWO_PI * 10 * gbw * cc; // z = gm2/(2π·cc) = 10·GBW
  const c1 = 10e-15;
  // p2 = gm2·cc/(2π(c1·c2 + cc(c1 + c2))) = 2.2·GBW, solved for c2
  const k = (gm2 * cc) / (TWO_PI * 2.2 * gbw);
  const c2 = (k - cc * c1) / (c1 + cc);
  const v: Values = { gm1, r1: 20e6, c1, gm2, r2: 2e6, c2, cc, cl: 0, beta: 1, i1: 10e-6, i2: 100e-6 };
  const m = evaluate(twoStageMiller, v);

  it('reproduces GBW = gm1/(2π·cc), z = gm2/(2π·cc) and p2 by construction', () => {
    expect(m.hand.gbw.value).toBeCloseTo(gbw, 3);
    expect(m.hand.rhp_zero.value! / gbw).toBeCloseTo(10, 9);
    expect(m.hand.p2.value! / gbw).toBeCloseTo(2.2, 9);
  });

  it('gives the hand phase margin 90° − atan(1/2.2) − atan(1/10)', () => {
    const expected = 90 - (Math.atan(1 / 2.2) + Math.atan(1 / 10)) * (180 / Math.PI);
    expect(m.hand.phase_margin.value!).toBeCloseTo(expected, 9);
    expect(expected).toBeCloseTo(59.85, 2);
  });

  it('agrees with the exact model to within the ±3° tolerance for this well-split design', () => {
    expect(Math.abs(m.exact.phase_margin.value! - 60)).toBeLessThan(3);
    // The zero is exact for this network (no approximation in gm2/cc).
    expect(m.exact.rhp_zero.value! / m.hand.rhp_zero.value!).toBeCloseTo(1, 9);
  });

  it('computes the slew rate as min(i1/cc, (i2 − i1)/(c2 + cl)) (Allen & Holberg)', () => {
    const a = evaluate(twoStageMiller, { ...v, cl: 5e-12 });
    expect(a.exact.slew_rate.value).toBeCloseTo(Math.min(10e-6 / cc, 90e-6 / 5e-12), 0);
    expect(a.exact.slew_rate.how).toMatch(/i1\/cc/);
    const b = evaluate(twoStageMiller, { ...v, cl: 500e-12 });
    expect(b.exact.slew_rate.value).toBeCloseTo(90e-6 / (v.c2 + 500e-12), 0);
    expect(b.exact.slew_rate.how).toMatch(/cl/);
    const none = evaluate(twoStageMiller, { ...v, i2: 5e-6 });
    expect(none.exact.slew_rate.value).toBeNull();
  });

  it('warns where pole splitting does not hold', () => {
    const close = evaluate(twoStageMiller, { ...v, cc: cc / 20 });
    expect(close.caveats.join(' ')).toMatch(/GBW ≪ p2/);
    expect(m.caveats).toEqual([]);
  });
});
