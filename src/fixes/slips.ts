// A value outside the plausible range of an integrated block by exactly a
// factor that one wrong prefix explains (m for M is 10⁹, n for µ is 10³) is
// most likely a typing slip rather than a design decision. Shared by the
// prefix-slip rule and by restatements, which never rewrite a claim that
// rests on such a value.

import type { QuantityAt, Spec, ValueEntry } from '../spec/types';

const FACTORS = [1e3, 1e-3, 1e6, 1e-6, 1e9, 1e-9];

/** The factor that brings a written value into its plausible range, if one prefix explains it. */
export function slipFactor(entry: ValueEntry, q: QuantityAt): number | undefined {
  const range = entry.spec.plausible;
  if (!range) return undefined;
  const v = q.quantity.value;
  if (v === 0 || (v >= range[0] && v <= range[1])) return undefined;
  const w = q.quantity.written;
  // Prefer the case slip the author's own prefix suggests (m ↔ M), then the smallest factor.
  const order = /^m/.test(w.unit) ? [1e9, ...FACTORS] : /^M/.test(w.unit) ? [1e-9, ...FACTORS] : FACTORS;
  return order.find((f) => v * f >= range[0] && v * f <= range[1]);
}

/** The values the author wrote for a param: not a midpoint, not the ends computed from `±N%`. */
export const writtenValues = (entry: ValueEntry): QuantityAt[] =>
  // An expression's value is computed, not typed: a slip would be in what it uses.
  entry.expression ? [] : (entry.tolerance ? [entry.typ] : [entry.typIsMidpoint ? undefined : entry.typ, entry.min, entry.max]).filter((q): q is QuantityAt => q !== undefined);

/** Params of the spec with a likely prefix slip. */
export function slippedParams(spec: Spec): string[] {
  const out: string[] = [];
  for (const entry of spec.params.values()) if (writtenValues(entry).some((q) => slipFactor(entry, q) !== undefined)) out.push(entry.key);
  return out;
}
