// The worst-case search over ranged params against a brute-force grid, on
// seeded random two-stage designs (the grid is the outside reference: it
// assumes nothing about monotonicity).
import { describe, expect, it } from 'vitest';
import { checkText } from '../src/check';
import { evaluate } from '../src/model';
import { formatQuantity } from '../src/quantity';
import { twoStageMiller } from '../src/topologies/two-stage-miller';
import { worstCase } from '../src/worst-case';
import { mulberry32 as rng } from './reference/designs';

const KINDS = { gm1: 'conductance', gm2: 'conductance', cc: 'capacitance', c2: 'capacitance', rz: 'resistance', cl: 'capacitance' } as const;

function design(seed: number) {
  const r = rng(seed);
  const lu = (lo: number, hi: number) => lo * (hi / lo) ** r();
  const v: Record<string, number> = {
    gm1: lu(50e-6, 500e-6), r1: lu(1e6, 5e6), c1: lu(20e-15, 100e-15), gm2: lu(0.5e-3, 5e-3), r2: lu(50e3, 300e3),
    c2: lu(50e-15, 300e-15), cc: lu(0.3e-12, 3e-12), cl: lu(1e-12, 10e-12),
  };
  v.rz = r() < 0.5 ? 0 : lu(0.5, 2) / v.gm2;
  const candidates = Object.keys(KINDS).filter((k) => v[k] > 0);
  const ranged = candidates.sort(() => r() - 0.5).slice(0, 3);
  const spread = Object.fromEntries(ranged.map((k) => [k, 0.15 + 0.3 * r()]));
  return { v, ranged, spread };
}

function specText(v: Record<string, number>, ranged: string[], spread: Record<string, number>): string {
  const val = (k: string) => {
    const kind = KINDS[k as keyof typeof KINDS] ?? (k.startsWith('r') ? 'resistance' : k.startsWith('c') ? 'capacitance' : 'conductance');
    const q = (x: number) => formatQuantity(x, kind, 6);
    return ranged.includes(k) ? `{min: ${q(v[k] * (1 - spread[k]))}, typ: ${q(v[k])}, max: ${q(v[k] * (1 + spread[k]))}}` : q(v[k]);
  };
  return `---
polecheck: 1
block: grid-test
topology: two-stage-miller
params:
${['gm1', 'r1', 'c1', 'gm2', 'r2', 'c2', 'cc', ...(v.rz > 0 ? ['rz'] : [])].map((k) => `  ${k}: ${val(k)}`).join('\n')}
conditions:
  cl: ${val('cl')}
claims:
  phase_margin: {min: 1 deg}
  gbw: {max: 10 GHz}
---
`;
}

describe('worst case over ranges against a brute-force grid', () => {
  for (let seed = 1; seed <= 8; seed++) {
    it(`finds the worst phase margin and the highest GBW of random design ${seed}`, () => {
      const { v, ranged, spread } = design(seed);
      const r = checkText('grid.md', specText(v, ranged, spread));
      expect(r.points?.length).toBe(1);
      const ctx = r.points![0].context;
      const pm = worstCase(ctx, 'phase_margin', 'min').value!;
      const gbw = worstCase(ctx, 'gbw', 'max').value!;
      // Brute force: 7 points per ranged axis, read back from the spec's own values.
      const ends = ranged.map((k) => {
        const e = r.spec!.params.get(k) ?? r.spec!.conditions.get(k)!;
        return [k, e.min!.quantity.value, e.max!.quantity.value] as const;
      });
      let gridPm = Infinity;
      let gridGbw = -Infinity;
      const base = { ...ctx.model.values };
      const steps = 7;
      const walk = (i: number, values: Record<string, number>) => {
        if (i === ends.length) {
          const m = evaluate(twoStageMiller, values);
          gridPm = Math.min(gridPm, m.exact.phase_margin.value ?? Infinity);
          gridGbw = Math.max(gridGbw, m.exact.gbw.value ?? -Infinity);
          return;
        }
        const [k, lo, hi] = ends[i];
        for (let s = 0; s < steps; s++) walk(i + 1, { ...values, [k]: lo + ((hi - lo) * s) / (steps - 1) });
      };
      walk(0, base);
      // The search must be at least as pessimistic as the grid (to 0.05° and 0.05 %).
      expect(pm).toBeLessThanOrEqual(gridPm + 0.05);
      expect(gbw).toBeGreaterThanOrEqual(gridGbw * (1 - 5e-4));
    });
  }
});
