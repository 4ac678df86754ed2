// Rule 'closed-loop-stability': the verdict from the closed-loop poles, against
// Routh–Hurwitz on the closed-loop denominator written out by hand for the
// two-stage network (nodal analysis; the Routh criterion as in K. Ogata,
// "Modern Control Engineering", ch. on stability).
import { describe, expect, it } from 'vitest';
import { checkText } from '../../src/check';
import { evaluate } from '../../src/model/model';
import { twoStageMiller } from '../../src/topologies/two-stage-miller';

const spec = (params: string, conditions = '  cl: 20 pF\n  beta: 1', claims = '  dc_gain: 100 dB') => `---
polecheck: 1
block: strand-stability-test
topology: two-stage-miller
params:
${params}
conditions:
${conditions}
claims:
${claims}
---
`;
const weak = '  gm1: 1 mS\n  r1: 2 MΩ\n  c1: 100 fF\n  gm2: 500 µS\n  r2: 200 kΩ\n  c2: 200 fF\n  cc: 200 fF';
const strong = '  gm1: 1 mS\n  r1: 2 MΩ\n  c1: 100 fF\n  gm2: 5 mS\n  r2: 200 kΩ\n  c2: 200 fF\n  cc: 8 pF';
const of = (text: string) => checkText('t.md', text).findings.filter((f) => f.rule === 'closed-loop-stability');

/**
 * Closed loop of the two-stage network without rz, β = 1: with g1 = 1/r1,
 * g2 = 1/r2, C1 = c1 + cc, C2 = c2 + cl + cc, the nodal determinant is
 * (g1 + sC1)(g2 + sC2) − (−s·cc)(gm2 − s·cc) and the numerator of A is
 * gm1·(gm2 − s·cc); the closed loop's denominator D + β·N is the quadratic
 * a2·s² + a1·s + a0, stable iff all three coefficients share a sign.
 */
function routhStable(v: Record<string, number>): boolean {
  const g1 = 1 / v.r1;
  const g2 = 1 / v.r2;
  const C1 = v.c1 + v.cc;
  const C2 = v.c2 + v.cl + v.cc;
  const a2 = C1 * C2 - v.cc * v.cc;
  const a1 = g1 * C2 + g2 * C1 + v.gm2 * v.cc - v.gm1 * v.cc;
  const a0 = g1 * g2 + v.gm1 * v.gm2;
  return (a2 > 0 && a1 > 0 && a0 > 0) || (a2 < 0 && a1 < 0 && a0 < 0);
}

describe("'closed-loop-stability'", () => {
  it('reports an unstable loop at the beta condition, although no margin is claimed', () => {
    const f = of(spec(weak));
    expect(f).toHaveLength(1);
    expect(f[0]).toMatchObject({ severity: 'error', line: 15, column: 3, claim: null });
    expect(f[0].message).toMatch(/closed loop is unstable at β = 1, cl = 20\.0 pF: closed-loop poles in the right half-plane/);
  });

  it('says nothing for a stable loop', () => {
    expect(of(spec(strong))).toEqual([]);
  });

  it('agrees with Routh–Hurwitz on the closed-loop quadratic over a sweep of cc and gm2', () => {
    let unstable = 0;
    for (const cc of [50e-15, 100e-15, 200e-15, 500e-15, 1e-12, 3e-12, 10e-12]) {
      for (const gm2 of [100e-6, 300e-6, 1e-3, 3e-3, 10e-3]) {
        const v = { gm1: 1e-3, r1: 2e6, c1: 100e-15, gm2, r2: 200e3, c2: 200e-15, cc, cl: 20e-12, beta: 1 };
        const m = evaluate(twoStageMiller, v);
        const expected = routhStable(v);
        if (!expected) unstable++;
        expect(m.loop.stability, `cc ${cc}, gm2 ${gm2}`).toBe(expected ? 'stable' : 'unstable');
        // A margin is given only to a stable loop.
        expect(m.exact.phase_margin.value === null, `cc ${cc}, gm2 ${gm2}`).toBe(!expected || m.loop.crossoversHz.length === 0);
      }
    }
    expect(unstable).toBeGreaterThan(3);
  });

  it('checks each table row at its own conditions', () => {
    const text = spec(strong, '  cl: 20 pF\n  beta: 1', '  dc_gain: 126 dB') + `
| Parameter | Conditions | Min | Typ | Max | Unit |
| --- | --- | --- | --- | --- | --- |
| DC gain | CL = 2 nF | | 126 | | dB |
`;
    const v = { gm1: 1e-3, r1: 2e6, c1: 100e-15, gm2: 5e-3, r2: 200e3, c2: 200e-15, cc: 8e-12, beta: 1 };
    const expectUnstable = !routhStable({ ...v, cl: 2e-9 });
    expect(of(text).length).toBe(expectUnstable ? 1 : 0);
  });
});
