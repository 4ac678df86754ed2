// The engine against the closed-form transfer function of the two-stage
// Miller amplifier. Without rz, nodal analysis of the two-node network gives
// exactly (Gray, Hurst, Lewis, Meyer, "Analysis and Design of Analog
// Integrated Circuits", 5th ed., §9.4.1 — the form recalled from memory and
// re-derived by hand for this test):
//   A(s) = A0·(1 − s·cc/gm2) / (1 + a1·s + a2·s²)
//   a1 = r1(c1 + cc) + r2(c2 + cc) + gm2·r1·r2·cc,   a2 = r1·r2·(c1·c2 + cc·(c1 + c2))
// With rz in series with cc, the zero is exactly s = gm2/(cc·(1 − gm2·rz)).
import { describe, expect, it } from 'vitest';
import { analyzeLoop, analyzeNetwork } from '../../src/engine/analyze';
import { twoStageMiller } from '../../src/topologies/two-stage-miller';
import type { Values } from '../../src/topologies/types';

const base: Values = { gm1: 180e-6, r1: 2.2e6, c1: 45e-15, gm2: 1.6e-3, r2: 150e3, c2: 120e-15, cc: 1.2e-12, cl: 2e-12, beta: 1 };

/** Both roots of 1 + a1·s + a2·s², in rad/s, computed without cancellation. */
function quadraticRoots(a1: number, a2: number): [number, number] | null {
  const disc = a1 * a1 - 4 * a2;
  if (disc < 0) return null;
  const q = -0.5 * (a1 + Math.sqrt(disc));
  // roots of a2·s² + a1·s + 1: s = q/a2 and s = 1/q
  const r = [1 / q, q / a2].sort((x, y) => Math.abs(x) - Math.abs(y));
  return [r[0], r[1]];
}

function closedForm(v: Values) {
  const c2 = v.c2 + v.cl;
  const a1 = v.r1 * (v.c1 + v.cc) + v.r2 * (c2 + v.cc) + v.gm2 * v.r1 * v.r2 * v.cc;
  const a2 = v.r1 * v.r2 * (v.c1 * c2 + v.cc * (v.c1 + c2));
  return { a0: v.gm1 * v.r1 * v.gm2 * v.r2, a1, a2, zero: v.gm2 / v.cc };
}

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe('two-stage Miller network against its closed-form transfer function', () => {
  const cases: Array<[string, Values]> = [
    ['the nominal design', base],
    ['poles ten decades apart', { ...base, r1: 5e9, r2: 5e7, gm2: 2e-2, cc: 5e-12, c1: 1e-15, c2: 1e-15, cl: 0 }],
    ['a heavy load', { ...base, cl: 20e-12 }],
    ['a small cc', { ...base, cc: 50e-15 }],
  ];
  for (const [name, v] of cases) {
    it(`poles, zero and DC gain of ${name}`, () => {
      const a = analyzeNetwork(twoStageMiller.network(v));
      const cf = closedForm(v);
      expect(rel(a.dcGain, cf.a0)).toBeLessThan(1e-12);
      const roots = quadraticRoots(cf.a1, cf.a2);
      if (roots) {
        expect(a.poles).toHaveLength(2);
        expect(a.poles.every((p) => p.im === 0)).toBe(true);
        expect(rel(a.poles[0].re, roots[0])).toBeLessThan(1e-9);
        expect(rel(a.poles[1].re, roots[1])).toBeLessThan(1e-9);
      } else {
        // complex pair: |p|² = 1/a2 and 2·Re(p) = −a1/a2
        expect(rel(a.poles[0].re ** 2 + a.poles[0].im ** 2, 1 / cf.a2)).toBeLessThan(1e-9);
        expect(rel(2 * a.poles[0].re, -cf.a1 / cf.a2)).toBeLessThan(1e-9);
      }
      expect(a.zeros).toHaveLength(1);
      expect(rel(a.zeros[0].re, cf.zero)).toBeLessThan(1e-9);
    });
  }

  it('keeps the nulling-resistor zero exact in either half-plane, and at infinity for rz = 1/gm2', () => {
    for (const rz of [200, 400, 900, 3000]) {
      const v: Values = { ...base, rz };
      const a = analyzeNetwork(twoStageMiller.network(v));
      const expected = v.gm2 / (v.cc * (1 - v.gm2 * rz));
      const real = a.zeros.filter((z) => z.im === 0);
      expect(real).toHaveLength(1);
      expect(rel(real[0].re, expected)).toBeLessThan(1e-9);
      expect(a.poles).toHaveLength(3); // rz adds a pole
    }
    const cancelled = analyzeNetwork(twoStageMiller.network({ ...base, rz: 1 / base.gm2 }));
    expect(cancelled.zeros).toHaveLength(0);
  });

  it('follows the phase continuously past −180° (no wrapping)', () => {
    const a = analyzeNetwork(twoStageMiller.network({ ...base, cc: 50e-15 }));
    // Two LHP poles and one RHP zero: the phase tends to −270° at high frequency.
    const far = a.at(1e13);
    expect(far.phaseDeg).toBeLessThan(-260);
    expect(far.phaseDeg).toBeGreaterThan(-271);
    expect(a.at(1e-3).phaseDeg).toBeCloseTo(0, 3);
  });

  it('withholds the margins of a closed loop that is unstable, showing what the open loop reads', () => {
    // A heavy load with a weak second stage: the RHP zero and p2 both fall below the crossover.
    const a = analyzeNetwork(twoStageMiller.network({ gm1: 1e-3, r1: 2e6, c1: 100e-15, gm2: 0.5e-3, r2: 200e3, c2: 200e-15, cc: 0.2e-12, cl: 20e-12, beta: 1 }));
    const loop = analyzeLoop(a, 1);
    expect(loop.stable).toBe(false);
    expect(loop.stability).toBe('unstable');
    expect(loop.phaseMargin.value).toBeNull();
    expect(loop.phaseMargin.reason).toMatch(/closed loop is unstable/);
    expect(loop.phaseMargin.openLoop!).toBeLessThan(0);
    expect(loop.gainMargin.value).toBeNull();
    expect(loop.gainMargin.unbounded).toBeFalsy();
    // Routh–Hurwitz on the closed-loop denominator D(s) + N(s) agrees (test/engine/stability.test.ts
    // checks the verdict across many designs); here one closed-loop pole pair sits in the right half-plane.
    expect(loop.closedLoopPoles.some((p) => p.re > 0)).toBe(true);
    // and the nominal design is stable with a positive margin
    const ok = analyzeLoop(analyzeNetwork(twoStageMiller.network(base)), 1);
    expect(ok.stable).toBe(true);
    expect(ok.phaseMargin.value!).toBeGreaterThan(45);
  });

  it('says there is no crossover when |βA| < 1 everywhere', () => {
    const a = analyzeNetwork(twoStageMiller.network({ ...base, gm1: 1e-9, r1: 1e3 }));
    const loop = analyzeLoop(a, 1);
    expect(loop.phaseMargin.value).toBeNull();
    expect(loop.phaseMargin.reason).toMatch(/no crossover/);
    expect(loop.unityGain.value).toBeNull();
  });

  it('places the unity-gain frequency where |A| = 1 to the last digit', () => {
    const a = analyzeNetwork(twoStageMiller.network(base));
    const loop = analyzeLoop(a, 1);
    const f = loop.unityGain.value!;
    // |A(jω)|² from the closed form at that frequency must be 1.
    const cf = closedForm(base);
    const w = 2 * Math.PI * f;
    const num = cf.a0 ** 2 * (1 + (w * base.cc / base.gm2) ** 2);
    const den = (1 - cf.a2 * w * w) ** 2 + (cf.a1 * w) ** 2;
    expect(Math.abs(num / den - 1)).toBeLessThan(1e-9);
  });
});
