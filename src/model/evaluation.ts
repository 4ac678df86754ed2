// A Spec → the SI values the topology needs, at typical values and at the
// corners of any ranges, and the models evaluated there.

import { type Model, ModelError, evaluate } from './model';
import { formatQuantity } from '../quantity';
import type { Spec, ValueEntry } from '../spec/types';
import type { Values } from '../topologies/types';

export interface Corner {
  /** e.g. "gm1 min, cl max"; "typical" for the typical point. */
  label: string;
  values: Values;
}

/** Every value the model's inputs rest on: design quantities, params, conditions. A value written as an expression has no range of its own: it follows what it uses. */
function entries(spec: Spec): ValueEntry[] {
  return [...(spec.design?.values() ?? []), ...spec.params.values(), ...spec.conditions.values()];
}

/** The values the model reads: derived ones (expressions) recomputed from the rest. */
export const resolved = (spec: Spec, values: Values): Values => (spec.derived ? spec.derived.resolve(values) : values);

export function typicalValues(spec: Spec): Values {
  // No prototype: an element named `__proto__` or `constructor` is an ordinary key.
  const v: Values = Object.create(null);
  for (const s of [...spec.topology.params, ...spec.topology.conditions]) if (s.default !== undefined) v[s.key] = s.default;
  for (const e of entries(spec)) {
    if (e.open) delete v[e.key];
    else v[e.key] = e.typ.quantity.value;
  }
  return resolved(spec, v);
}

/** Most ranged keys whose every vertex is enumerated (2^n corners). */
export const MAX_VERTEX_KEYS = 6;

/** The ranged params and conditions of a spec, with their ends. */
export function rangedKeys(spec: Spec): Array<{ key: string; lo: number; hi: number }> {
  return entries(spec)
    .filter((e) => e.min || e.max)
    .map((e) => ({ key: e.key, lo: (e.min ?? e.typ).quantity.value, hi: (e.max ?? e.typ).quantity.value }));
}

/**
 * The typical point followed by the vertices of the box spanned by the
 * ranged params and conditions. Beyond MAX_VERTEX_KEYS ranged keys, each key
 * is taken to its ends one at a time instead (and `limited` says so); the
 * worst-case search (worst-case.ts) then builds the worst vertex from them.
 */
export function corners(spec: Spec): { corners: Corner[]; limited: boolean } {
  const typ = typicalValues(spec);
  const ranged = entries(spec).filter((e) => e.min || e.max);
  const out: Corner[] = [{ label: 'typical', values: typ }];
  if (ranged.length === 0) return { corners: out, limited: false };
  const ends = (e: ValueEntry): Array<[string, number]> => {
    const r: Array<[string, number]> = [];
    if (e.min) r.push(['min', e.min.quantity.value]);
    if (e.max) r.push(['max', e.max.quantity.value]);
    return r;
  };
  if (ranged.length > MAX_VERTEX_KEYS) {
    for (const e of ranged) for (const [end, value] of ends(e)) out.push({ label: `${e.key} ${end}`, values: { ...typ, [e.key]: value } });
    return { corners: out, limited: true };
  }
  let partial: Corner[] = [{ label: '', values: { ...typ } }];
  for (const e of ranged) {
    const next: Corner[] = [];
    for (const c of partial) {
      for (const [end, value] of ends(e)) next.push({ label: c.label ? `${c.label}, ${e.key} ${end}` : `${e.key} ${end}`, values: { ...c.values, [e.key]: value } });
    }
    partial = next;
  }
  return { corners: out.concat(partial), limited: false };
}

export interface Evaluated {
  corner: Corner;
  model: Model | null;
  error?: string;
}

export function evaluateCorner(spec: Spec, corner: Corner): Evaluated {
  try {
    return { corner, model: evaluate(spec.topology, resolved(spec, corner.values)) };
  } catch (err) {
    if (err instanceof ModelError) return { corner, model: null, error: err.message };
    throw err;
  }
}

/** "cl = 2.00 pF, β = 1" — the operating point a figure is computed at. */
export function conditionsText(spec: Spec, values: Values): string {
  const parts: string[] = [];
  for (const c of spec.topology.conditions) {
    const v = values[c.key];
    if (v === undefined || !Number.isFinite(v)) continue;
    const name = c.key === 'beta' ? 'β' : c.key;
    parts.push(`${name} = ${c.kind === 'ratio' || v === 0 ? +v.toPrecision(3) : formatQuantity(v, c.kind)}`);
  }
  return parts.join(', ');
}
