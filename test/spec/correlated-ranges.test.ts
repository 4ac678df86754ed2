// Correlated ranges: a range on a design quantity moves every value derived
// from it together. The worst-case search (src/model/worst-case.ts) searches the box
// of the underlying quantities; the reference here is a brute-force grid over
// that box, with the derived params worked by hand from the same formulas
// (square law gm1 = 2·I1/Vov1, gm/Id method gm2 = (gm/Id)·I2, a mirrored
// second-stage current I2 = 7.5·I1). The same spec with the derived params
// ranged independently, over the ends they reach, gives a worse phase margin:
// the spread that varying them independently overstates.

import { describe, expect, it } from 'vitest';
import { checkText } from '../../src/check';
import { evaluate } from '../../src/model/model';
import { twoStageMiller } from '../../src/topologies/two-stage-miller';
import { worstCase } from '../../src/model/worst-case';

const FIXED = { r1: 2.2e6, c1: 45e-15, r2: 150e3, c2: 120e-15, cc: 1.2e-12, cl: 2e-12 };
const I1: [number, number, number] = [16e-6, 20e-6, 24e-6];
const VOV1: [number, number, number] = [130e-3, 150e-3, 170e-3];
const derivedAt = (i1: number, vov1: number) => ({ gm1: (2 * i1) / vov1, i1, i2: 7.5 * i1, gm2: 12 * 7.5 * i1 });

const correlated = `---
polecheck: 1
topology: two-stage-miller
design:
  i1: 20 µA ±20%
  vov1: {min: 130 mV, typ: 150 mV, max: 170 mV}
  gm_id2: 12 /V
params:
  gm1: 2 * i1 / vov1
  r1: 2.2 MΩ
  c1: 45 fF
  gm2: gm_id2 * i2
  r2: 150 kΩ
  c2: 120 fF
  cc: 1.2 pF
  i2: 7.5 * i1
conditions:
  cl: 2 pF
claims:
  phase_margin: {min: 1 deg}
  gbw: {max: 10 GHz}
  slew_rate: {min: 1 V/µs}
---
`;

function grid(n: number) {
  let pm = Infinity;
  let gbw = -Infinity;
  let slew = Infinity;
  for (let a = 0; a <= n; a++) {
    for (let b = 0; b <= n; b++) {
      const i1 = I1[0] + ((I1[2] - I1[0]) * a) / n;
      const vov1 = VOV1[0] + ((VOV1[2] - VOV1[0]) * b) / n;
      const m = evaluate(twoStageMiller, { ...FIXED, ...derivedAt(i1, vov1), beta: 1 });
      pm = Math.min(pm, m.exact.phase_margin!.value!);
      gbw = Math.max(gbw, m.exact.gbw!.value!);
      slew = Math.min(slew, m.exact.slew_rate!.value!);
    }
  }
  return { pm, gbw, slew };
}

describe('correlated ranges through expressions', () => {
  const r = checkText('corr.md', correlated);
  const ctx = r.points![0].context;

  it('reads without findings, the typical point as worked by hand', () => {
    expect(r.findings.filter((f) => f.severity === 'error')).toEqual([]);
    const typ = ctx.model.values;
    expect(typ.gm1).toBeCloseTo((2 * 20e-6) / 0.15, 15);
    expect(typ.i2).toBeCloseTo(150e-6, 15);
    expect(typ.gm2).toBeCloseTo(12 * 150e-6, 15);
  });

  it('the worst case agrees with a 41 × 41 grid over (i1, vov1)', () => {
    const g = grid(40);
    const pm = worstCase(ctx, 'phase_margin', 'min');
    const gbw = worstCase(ctx, 'gbw', 'max');
    const slew = worstCase(ctx, 'slew_rate', 'min');
    // The search may land between grid points: never above the grid's worst by more than round-off, nor far below it.
    expect(pm.value!).toBeLessThanOrEqual(g.pm + 1e-6);
    expect(pm.value!).toBeGreaterThan(g.pm - 0.05);
    expect(gbw.value!).toBeGreaterThanOrEqual(g.gbw * (1 - 1e-9));
    expect(gbw.value!).toBeLessThan(g.gbw * 1.001);
    expect(slew.value!).toBeCloseTo(g.slew, 0);
    // The point is named by the underlying quantities, never by the derived params.
    for (const w of [pm, gbw, slew]) {
      expect(w.label).not.toMatch(/gm1|gm2|i2/);
      expect(w.label).toMatch(/i1|vov1/);
    }
    // gbw ≈ gm1/(2π·cc) is highest at the highest current and the lowest overdrive.
    expect(gbw.label).toBe('vov1 min, i1 max');
  });

  it('ranging the derived params independently over the same ends overstates the spread', () => {
    const lo = derivedAt(I1[0], VOV1[2]);
    const hi = derivedAt(I1[2], VOV1[0]);
    const gm1 = `{min: ${lo.gm1 * 1e6} µS, typ: ${derivedAt(20e-6, 0.15).gm1 * 1e6} µS, max: ${hi.gm1 * 1e6} µS}`;
    const gm2 = `{min: ${lo.gm2 * 1e3} mS, typ: 1.8 mS, max: ${hi.gm2 * 1e3} mS}`;
    const independent = correlated.replace(/design:[\s\S]*?params:\n/, 'params:\n').replace('gm1: 2 * i1 / vov1', `gm1: ${gm1}`).replace('gm2: gm_id2 * i2', `gm2: ${gm2}`).replace('i2: 7.5 * i1', 'i2: 150 µA\n  i1: 20 µA');
    const ri = checkText('indep.md', independent);
    expect(ri.findings.filter((f) => f.severity === 'error')).toEqual([]);
    const pmIndependent = worstCase(ri.points![0].context, 'phase_margin', 'min').value!;
    const pmCorrelated = worstCase(ctx, 'phase_margin', 'min').value!;
    // gm2/gm1 = 45·vov1 does not depend on i1: the correlated spread is narrower.
    expect(pmIndependent).toBeLessThan(pmCorrelated - 1);
  });
});
