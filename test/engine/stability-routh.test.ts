// The closed loop's stability is decided by the Routh array of D(s) + β·N(s)
// where that is safe, and from the closed-loop poles otherwise: both must give
// the same verdict. Checked on seeded random designs of the built-in
// topologies over wide ranges (many of them unstable), and on hand-made
// polynomials whose roots are known.
import { describe, expect, it } from 'vitest';
import { evaluate } from '../../src/model/model';
import { hurwitzStable } from '../../src/engine/poly';
import { threeStageNestedMiller } from '../../src/topologies/three-stage-nested-miller';
import { twoStageMiller } from '../../src/topologies/two-stage-miller';
import { mulberry32 } from '../reference/designs';

const logUniform = (r: () => number, lo: number, hi: number) => lo * (hi / lo) ** r();

describe('Routh array', () => {
  it('signs polynomials with known roots', () => {
    // (s + 1)(s + 2)(s + 3) = s³ + 6s² + 11s + 6: stable.
    expect(hurwitzStable([6, 11, 6, 1])).toBe(true);
    // (s − 1)(s + 2)(s + 3) = s³ + 4s² + s − 6: one root in the right half-plane.
    expect(hurwitzStable([-6, 1, 4, 1])).toBe(false);
    // (s + 1)(s² − 0.2s + 4): a right-half-plane pair although every coefficient is positive.
    expect(hurwitzStable([4, 3.8, 0.8, 1])).toBe(false);
    // (s + 1)(s² + 4): a pair on the jω axis: undecided, the roots decide.
    expect(hurwitzStable([4, 4, 1, 1])).toBeNull();
  });
});

describe('stability from the Routh array agrees with the closed-loop poles', () => {
  const verdictFromPoles = (poles: Array<{ re: number; im: number }>) => (poles.every((p) => p.re < 1e-12 * Math.hypot(p.re, p.im)) ? 'stable' : 'unstable');
  it('on 400 two-stage designs', () => {
    const r = mulberry32(4242);
    let unstable = 0;
    for (let i = 0; i < 400; i++) {
      const v = { gm1: logUniform(r, 1e-5, 1e-2), r1: logUniform(r, 1e4, 1e8), c1: logUniform(r, 1e-15, 1e-12), gm2: logUniform(r, 1e-5, 1e-1), r2: logUniform(r, 1e3, 1e7), c2: logUniform(r, 1e-15, 1e-12), cc: logUniform(r, 1e-14, 1e-11), rz: r() < 0.5 ? 0 : logUniform(r, 10, 1e5), cl: logUniform(r, 1e-14, 1e-10), beta: r() < 0.5 ? 1 : logUniform(r, 0.01, 1) };
      const m = evaluate(twoStageMiller, v);
      const poles = m.loop.closedLoopPoles;
      expect(m.loop.stability, JSON.stringify(v)).toBe(verdictFromPoles(poles));
      if (m.loop.stability === 'unstable') unstable++;
    }
    expect(unstable).toBeGreaterThan(20);
  });
  it('on 200 three-stage nested-Miller designs', () => {
    const r = mulberry32(777);
    for (let i = 0; i < 200; i++) {
      const v = { gm1: logUniform(r, 1e-5, 1e-2), r1: logUniform(r, 1e4, 1e7), c1: logUniform(r, 1e-15, 1e-12), gm2: logUniform(r, 1e-5, 1e-2), r2: logUniform(r, 1e4, 1e7), c2: logUniform(r, 1e-15, 1e-12), gm3: logUniform(r, 1e-5, 1e-1), r3: logUniform(r, 1e3, 1e6), c3: logUniform(r, 1e-15, 1e-12), cc1: logUniform(r, 1e-13, 1e-10), cc2: logUniform(r, 1e-14, 1e-11), cl: logUniform(r, 1e-13, 1e-10), beta: 1 };
      const m = evaluate(threeStageNestedMiller, v);
      expect(m.loop.stability, JSON.stringify(v)).toBe(verdictFromPoles(m.loop.closedLoopPoles));
    }
  });
});
