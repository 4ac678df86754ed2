// Worst case of one figure over the box of ranged params and conditions.
//
// Method: (1) the corners already evaluated — every vertex for up to six
// ranged keys, else each key at its ends one at a time; with more keys, the
// vertex that takes every key to its own worse end is evaluated as well;
// (2) a bounded local search from the worst point so far: each ranged key in
// turn is moved to two interior points and to its other end, the others held,
// keeping any move that makes the figure worse; two rounds. Figures that are
// not monotone in a param (phase margin against cc) can be worst between the
// corners; the search finds such interior optima along each axis.
// test/worst-case.test.ts compares the result with a brute-force grid.

import { type Evaluated, rangedKeys } from './evaluation';
import type { Figure } from './engine/figure';
import type { RuleContext } from './rule';
import type { Values } from './topologies/types';

export interface WorstPoint {
  label: string;
  values: Values;
  value: number | null;
  figure: Figure | undefined;
}

const describe = (ctx: RuleContext, values: Values): string => {
  const parts: string[] = [];
  for (const r of rangedKeys(ctx.spec)) {
    const v = values[r.key];
    if (v === r.lo && v === r.hi) continue;
    parts.push(`${r.key} ${v === r.lo ? 'min' : v === r.hi ? 'max' : `${(((v - r.lo) / (r.hi - r.lo)) * 100).toFixed(0)} % into its range`}`);
  }
  return parts.join(', ') || 'typical';
};

const memo = new WeakMap<RuleContext, Map<string, WorstPoint>>();

/** The worst point of a figure for a bound; computed once per context and claim. */
export function worstCase(ctx: RuleContext, claim: string, bound: 'min' | 'max'): WorstPoint {
  let m = memo.get(ctx);
  if (!m) memo.set(ctx, (m = new Map()));
  const key = `${claim}:${bound}`;
  const hit = m.get(key);
  if (hit) return hit;
  const w = search(ctx, claim, bound);
  m.set(key, w);
  return w;
}

function search(ctx: RuleContext, claim: string, bound: 'min' | 'max'): WorstPoint {
  const worse = (a: number, b: number) => (bound === 'min' ? a < b : a > b);
  const fromEvaluated = (e: Evaluated): WorstPoint => ({
    label: e.corner.label,
    values: e.corner.values,
    figure: e.model?.exact[claim],
    value: e.model?.exact[claim]?.value ?? null,
  });
  const points = ctx.evaluated.map(fromEvaluated);
  // A figure that does not exist at some corner fails the bound there; an
  // unbounded margin is worse than any value for a max bound, better for a min.
  const fails = (p: WorstPoint) => p.value === null && (bound === 'max' || !p.figure?.reason?.includes('unbounded'));
  const missingAt = points.find(fails);
  if (missingAt) return missingAt;
  let best = points[0];
  for (const p of points) if (p.value !== null && (best.value === null || worse(p.value, best.value))) best = p;
  const ranged = rangedKeys(ctx.spec);
  if (!ranged.length) return best;

  const at = (values: Values): WorstPoint | null => {
    const m = ctx.withChanges(values);
    if (!m) return null;
    return { label: '', values, figure: m.exact[claim], value: m.exact[claim]?.value ?? null };
  };
  if (ctx.cornersLimited) {
    // Each key to the end that, alone, made the figure worse.
    const typ = points[0].value;
    const vertex: Values = Object.assign(Object.create(null), points[0].values);
    for (const r of ranged) {
      const lo = points.find((p) => p.label === `${r.key} min`)?.value ?? typ;
      const hi = points.find((p) => p.label === `${r.key} max`)?.value ?? typ;
      if (lo !== null && hi !== null) vertex[r.key] = worse(lo, hi) ? r.lo : r.hi;
    }
    const p = at(vertex);
    if (p && p.value !== null && best.value !== null && worse(p.value, best.value)) best = p;
  }
  for (let round = 0; round < 2; round++) {
    let moved = false;
    for (const r of ranged) {
      if (!(r.hi > r.lo)) continue;
      // The other end, then two interior points (figures need not be monotone).
      for (const x of [r.lo, r.hi, r.lo + (r.hi - r.lo) / 3, r.lo + (2 * (r.hi - r.lo)) / 3]) {
        if (x === best.values[r.key]) continue;
        const p = at({ ...best.values, [r.key]: x });
        if (!p) continue;
        if (fails(p)) return { ...p, label: describe(ctx, p.values) };
        if (p.value !== null && best.value !== null && worse(p.value, best.value)) {
          best = p;
          moved = true;
        }
      }
    }
    if (!moved) break;
  }
  return { ...best, label: best.label || describe(ctx, best.values) };
}
