// The worst-case search over ranged params: against a brute-force grid on
// seeded random two-stage designs (the grid is the outside reference: it
// assumes nothing about monotonicity), against the closed form of a mirror
// doublet, its labels, the figures that do not exist, the sample it starts
// from, and how many points it asks for. test/worst-case-dense.test.ts holds
// the dense references; test/worst-case.live.test.ts the ngspice checks.
import { describe, expect, it } from 'vitest';
import { checkText } from '../src/check';
import { evaluate } from '../src/model/model';
import { formatQuantity } from '../src/quantity';
import type { RuleContext } from '../src/verdicts/rule';
import { twoStageMiller } from '../src/topologies/two-stage-miller';
import { scrambledHalton, worstCase } from '../src/model/worst-case';
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
      // The search must be at least as pessimistic as the grid (to 0.01° and 0.01 %).
      expect(pm).toBeLessThanOrEqual(gridPm + 0.01);
      expect(gbw).toBeGreaterThanOrEqual(gridGbw * (1 - 1e-4));
    });
  }
});

/** A spec of a one-stage OTA from its params, conditions and claims lines. */
function mirrorSpec(params: string[], conditions: string[], claims: string[]): string {
  return `---
polecheck: 1
block: mirror
topology: single-stage
params:
${params.map((l) => `  ${l}`).join('\n')}
conditions:
${conditions.map((l) => `  ${l}`).join('\n')}
claims:
${claims.map((l) => `  ${l}`).join('\n')}
---
`;
}

const contextOf = (text: string): RuleContext => {
  const r = checkText('mirror.md', text);
  expect(r.points?.length, JSON.stringify(r.findings)).toBe(1);
  return r.points![0].context;
};

describe('worst inside a range: the mirror doublet against its closed form', () => {
  // A = gm·rout'·(1 + s·τ/2)/((1 + s·τ)(1 + s·rout'·C)), τ = c_mirror/gm_mirror, C = cout + cl
  // (the mirror's pole-zero doublet: B. Razavi, "Design of Analog CMOS Integrated
  // Circuits", ch. 10). With rout' far above 1/(ω·C) the output pole lags 90°
  // and the doublet lags atan(ωτ) − atan(ωτ/2), largest at ωτ = √2 (d/dω = 0,
  // worked by hand): atan(√2) − atan(1/√2) = 19.4712°. There |doublet| = √(1.5/3)
  // = 1/√2, so the crossover gm/(√2·ω·C) = 1 puts it at C = gm·τ/2. Worst phase
  // margin 90° − 19.4712° = 70.5288°, at cl = gm·τ/2 − cout, whatever the range
  // around it.
  const gm = 180e-6;
  const tau = 2.2e-12 / 400e-6;
  const cout = 20e-15;
  const worstDeg = 90 - (Math.atan(Math.SQRT2) - Math.atan(Math.SQRT1_2)) * (180 / Math.PI);
  const worstCl = (gm * tau) / 2 - cout;
  for (const [lo, hi] of [['0.3 pF', '5 pF'], ['0.1 pF', '5 pF'], ['0.2 pF', '20 pF']]) {
    it(`cl from ${lo} to ${hi}: ${worstDeg.toFixed(4)}° at cl = ${formatQuantity(worstCl, 'capacitance')}`, () => {
      const ctx = contextOf(mirrorSpec(['gm: 180 µS', 'rout: 100 GΩ', 'cout: 20 fF', 'gm_mirror: 400 µS', 'c_mirror: 2.2 pF'], [`cl: {min: ${lo}, max: ${hi}}`], ['phase_margin: {min: 1 deg}']));
      const w = worstCase(ctx, 'phase_margin', 'min');
      expect(Math.abs(w.value! - worstDeg)).toBeLessThan(0.01);
      expect(Math.abs(w.values.cl / worstCl - 1)).toBeLessThan(0.005);
      expect(w.label).toBe(`cl = ${formatQuantity(w.values.cl, 'capacitance')}`);
      // The ends alone miss it by half a degree or more.
      const ends = ctx.evaluated.map((e) => e.model!.exact.phase_margin.value!);
      expect(Math.min(...ends) - worstDeg).toBeGreaterThan(0.5);
    });
  }
  it('reports the claim as failing there, with the inner point in the message', () => {
    const r = checkText('mirror.md', mirrorSpec(['gm: 180 µS', 'rout: 100 GΩ', 'cout: 20 fF', 'gm_mirror: 400 µS', 'c_mirror: 2.2 pF'], ['cl: {min: 0.3 pF, max: 5 pF}'], ['phase_margin: {min: 71 deg}']));
    const f = r.findings.filter((x) => x.claim === 'phase_margin');
    expect(f).toHaveLength(1);
    expect(f[0].severity).toBe('error');
    expect(f[0].computed).toBeCloseTo(worstDeg, 2);
    expect(f[0].message).toContain(`cl = ${formatQuantity(worstCl, 'capacitance')}`);
  });
});

describe('labels of the worst point', () => {
  const base = ['rout: 5 MΩ', 'cout: 20 fF', 'gm_mirror: 400 µS', 'c_mirror: 1.5 pF'];
  it('names a vertex by its ends', () => {
    // GBW ≈ gm/(2π·(cout + cl)) falls with cl and rises with gm (first order, common practice).
    const ctx = contextOf(mirrorSpec(['gm: {min: 150 µS, max: 210 µS}', ...base], ['cl: {min: 1 pF, max: 3 pF}'], ['gbw: {min: 1 MHz}']));
    const w = worstCase(ctx, 'gbw', 'min');
    expect(w.label).toBe('gm min, cl max');
    expect(w.values.gm).toBe(150e-6);
    expect(w.values.cl).toBe(3e-12);
  });
  it('says typical when no ranged key moves the figure', () => {
    // The DC gain gm·rout' does not depend on the load capacitance.
    const ctx = contextOf(mirrorSpec(['gm: 180 µS', ...base], ['cl: {min: 1 pF, max: 3 pF}'], ['dc_gain: {min: 10 dB}']));
    const w = worstCase(ctx, 'dc_gain', 'min');
    expect(w.label).toBe('typical');
    expect(w.value).toBeCloseTo(20 * Math.log10(180e-6 * 5e6), 9);
  });
  it('names an inner key by its value and an end by its end', () => {
    // Valley of the doublet along cl ∝ c_mirror; a cascode pole makes the smallest cl the worst along it.
    const ctx = contextOf(mirrorSpec(['gm: 180 µS', 'rout: 5 MΩ', 'cout: 20 fF', 'gm_cas: 2 mS', 'c_cas: 200 fF', 'gm_mirror: 400 µS', 'c_mirror: {min: 0.6 pF, max: 3 pF}'], ['cl: {min: 0.3 pF, max: 3 pF}'], ['phase_margin: {min: 60 deg}']));
    const w = worstCase(ctx, 'phase_margin', 'min');
    expect(w.label).toBe(`c_mirror = ${formatQuantity(w.values.c_mirror, 'capacitance')}, cl min`);
    expect(w.values.c_mirror).toBeGreaterThan(0.6e-12);
    expect(w.values.c_mirror).toBeLessThan(3e-12);
  });
  it('is computed once per context, claim and bound', () => {
    const ctx = contextOf(mirrorSpec(['gm: 180 µS', ...base], ['cl: {min: 0.2 pF, max: 3 pF}'], ['phase_margin: {min: 60 deg}']));
    expect(worstCase(ctx, 'phase_margin', 'min')).toBe(worstCase(ctx, 'phase_margin', 'min'));
  });
});

describe('a figure that does not exist somewhere in the box', () => {
  it('fails the bound there, at once', () => {
    // rout ∥ rl = 1 kΩ gives gm·rout' = 0.18 < 1: no unity-gain crossover, so no phase margin.
    const ctx = contextOf(mirrorSpec(['gm: 180 µS', 'rout: 5 MΩ', 'cout: 20 fF'], ['cl: {min: 0.5 pF, max: 2 pF}', 'rl: {min: 1 kΩ, max: 1 MΩ}'], ['phase_margin: {min: 60 deg}']));
    let asked = 0;
    const w = worstCase({ ...ctx, withChanges: (v) => (asked++, ctx.withChanges(v)) }, 'phase_margin', 'min');
    expect(w.value).toBeNull();
    expect(w.figure?.reason).toMatch(/crossover/);
    expect(w.label).toMatch(/rl min/);
    expect(asked).toBe(0);
  });
  it('takes an unbounded gain margin as the best case for a min bound and a failure for a max bound', () => {
    // One pole and a doublet: the phase never reaches −180°, so the gain margin is unbounded everywhere.
    const ctx = contextOf(mirrorSpec(['gm: 180 µS', 'rout: 5 MΩ', 'cout: 20 fF', 'gm_mirror: 400 µS', 'c_mirror: 1.5 pF'], ['cl: {min: 0.5 pF, max: 2 pF}'], ['gain_margin: {min: 10 dB, max: 100 dB}']));
    const low = worstCase(ctx, 'gain_margin', 'min');
    expect(low.value).toBeNull();
    expect(low.figure?.reason).toMatch(/unbounded/);
    expect(low.label).toBe('typical');
    const high = worstCase(ctx, 'gain_margin', 'max');
    expect(high.value).toBeNull();
    expect(high.label).toBe('typical');
  });
});

describe('the scrambled Halton sample', () => {
  // A radical inverse in base b puts the indices 0 … b^k − 1 one in each
  // interval [j/b^k, (j+1)/b^k) (J. H. Halton, Numer. Math. 2, 1960); a digit
  // permutation that keeps 0 preserves that. Index 0 is the origin, left out
  // of the sample (it is a vertex the corners already hold).
  const points = scrambledHalton(5, 3124);
  const bases = [2, 3, 5, 7, 11];
  for (const [d, b] of bases.entries()) {
    it(`fills every interval of base ${b} once per block`, () => {
      const k = Math.floor(Math.log(3125) / Math.log(b) + 1e-9);
      const m = b ** k;
      const cells = new Array<number>(m).fill(0);
      cells[0] = 1; // the origin
      for (const u of points.slice(0, m - 1)) {
        expect(u[d]).toBeGreaterThanOrEqual(0);
        expect(u[d]).toBeLessThan(1);
        // j/b^k up to round-off in the sums of powers of 1/b.
        cells[Math.floor(u[d] * m + 1e-6)]++;
      }
      expect(cells.every((c) => c === 1)).toBe(true);
    });
  }
  it('is the same sample every time, and not the plain sequence', () => {
    expect(scrambledHalton(5, 50)).toEqual(points.slice(0, 50));
    // The plain radical inverse of 1 in base 3 is 1/3; some permutation must move some digit.
    const plain = (i: number, b: number) => {
      let x = 0;
      for (let s = 1 / b, k = i; k > 0; k = Math.floor(k / b), s /= b) x += (k % b) * s;
      return x;
    };
    expect(points.slice(0, 50).some((u, i) => bases.some((b, d) => Math.abs(u[d] - plain(i + 1, b)) > 1e-12))).toBe(true);
  });
});

describe('points asked for with many ranged keys', () => {
  // Twelve ranged keys and four bounds (the spec of the former corner benchmark):
  // every vertex is out of reach (4096), so the worst points must come from the
  // search at a modest cost, and be no better than any vertex drawn at random.
  const SPEC = `---
polecheck: 1
block: strand-corner-bench
topology: two-stage-miller
params:
  gm1: 240 µS ±15%
  r1: 3.3 MΩ ±20%
  c1: 60 fF ±10%
  gm2: 2.4 mS ±15%
  r2: 120 kΩ ±20%
  c2: 150 fF ±10%
  cc: 1.5 pF ±10%
  rz: 300 Ω ±20%
  i1: 24 µA ±10%
  i2: 200 µA ±10%
conditions:
  cl: 3 pF ±30%
  rl: 20 kΩ ±20%
claims:
  gbw: {min: 15 MHz, max: 40 MHz}
  phase_margin: {min: 60 deg}
  slew_rate: {min: 10 V/µs}
---
`;
  it('needs at most 3000 points for the four bounds and is at least as bad as 64 random vertices', () => {
    const r = checkText('bench.md', SPEC);
    const ctx = r.points![0].context;
    expect(ctx.cornersLimited).toBe(true);
    const distinct = new Set<string>();
    const counted: RuleContext = { ...ctx, withChanges: (v) => (distinct.add(JSON.stringify(Object.entries(v).sort())), ctx.withChanges(v)) };
    const bounds = [['gbw', 'min'], ['gbw', 'max'], ['phase_margin', 'min'], ['slew_rate', 'min']] as const;
    const worst = bounds.map(([claim, bound]) => worstCase(counted, claim, bound).value!);
    console.log(`12 ranged keys, 4 bounds: ${ctx.evaluated.length} corners + ${distinct.size} points searched`);
    expect(ctx.evaluated.length + distinct.size).toBeLessThanOrEqual(3000);
    const ends = [...r.spec!.params.values(), ...r.spec!.conditions.values()].filter((e) => e.min && e.max);
    expect(ends).toHaveLength(12);
    const draw = rng(12);
    for (let i = 0; i < 64; i++) {
      const v = { ...ctx.model.values };
      for (const e of ends) v[e.key] = draw() < 0.5 ? e.min!.quantity.value : e.max!.quantity.value;
      const m = evaluate(twoStageMiller, v);
      bounds.forEach(([claim, bound], j) => {
        const x = m.exact[claim].value!;
        if (bound === 'min') expect(worst[j]).toBeLessThanOrEqual(claim === 'phase_margin' ? x + 0.01 : x * (1 + 1e-4));
        else expect(worst[j]).toBeGreaterThanOrEqual(x * (1 - 1e-4));
      });
    }
  });
});
