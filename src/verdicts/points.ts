// Operating points of a spec: the claims made at the front matter's conditions
// and at each table row's own, each with its rule context (the model at the
// typical point, at the corners of the ranges, and a memoized evaluator that
// the worst-case search and the design-change solver share). `recheck` judges
// every statement of the spec again with params changed: what a design change
// does to all of them.

import { type Evaluated, conditionsText, corners, typicalValues } from '../model/evaluation';
import { keySpecOf } from '../spec/design';
import { type Finding, byCodeUnit } from './findings';
import { type Model, ModelError, evaluate } from '../model/model';
import { inLoop } from './places';
import type { RuleContext } from './rule';
import type { ClaimEntry, Spec, ValueEntry } from '../spec/types';
import type { Values } from '../topologies/types';
import { type BoundVerdict, DEFAULT_TOLERANCES, type Tolerances, judge, toleranceFor } from './verdict';
import { worstCase } from '../model/worst-case';

/** The claims made at one operating point, and the models evaluated there. */
export interface OperatingPoint {
  /** Condition values that differ from the front matter's (empty for the front matter's own point). */
  overrides: Values;
  /** "cl = 10 pF, β = 0.5", or '' for the front matter's point. */
  label: string;
  claims: ClaimEntry[];
  context: RuleContext;
}

// A key only (any fixed order will do): code-unit order spares the ICU collator's start-up.
const pointKey = (v: Values): string => JSON.stringify(Object.entries(v).sort(([a], [b]) => byCodeUnit(a, b)));

export function networkError(spec: Spec, message: string): Finding {
  const why = spec.topology.diagnose?.();
  const pos = why?.pos ?? spec.paramsPos;
  return { rule: 'network', severity: 'error', line: pos.line, column: pos.column, claim: null, message: `the small-signal model cannot be solved${message}: ${why?.message ?? 'the network matrices are singular'}`, suggestions: [] };
}

/** The claims of a spec grouped by operating point; a row whose conditions equal the front matter's joins it. */
export function groupClaims(spec: Spec): Array<{ overrides: Values; label: string; claims: ClaimEntry[] }> {
  const typical = typicalValues(spec);
  const groups = new Map<string, { overrides: Values; label: string; claims: ClaimEntry[] }>();
  groups.set(pointKey({}), { overrides: {}, label: '', claims: [] });
  for (const c of spec.claims) {
    const overrides: Values = {};
    for (const [k, v] of Object.entries(c.conditions?.values ?? {})) if (typical[k] !== v && !(v === Infinity && typical[k] === undefined)) overrides[k] = v;
    const key = pointKey(overrides);
    if (!groups.has(key)) groups.set(key, { overrides, label: c.conditions?.text ?? '', claims: [] });
    groups.get(key)!.claims.push(c);
  }
  return [...groups.values()];
}

export function contextFor(spec: Spec, overrides: Values, claims: ClaimEntry[], tolerances: Tolerances | undefined, findings: Finding[], label: string): RuleContext | null {
  const base = { ...typicalValues(spec), ...overrides };
  // The corners, the worst-case searches for different claims and the fix
  // solver visit the same points again and again: evaluate each once. The memo
  // lives as long as the context, that is, while its file is being checked.
  const memo = new Map<string, { model: Model | null; error?: string }>();
  const at = (values: Values): { model: Model | null; error?: string } => {
    // Values objects are built as {...base, ...changes}, so their key order is
    // stable; a key in another order only misses the memo.
    let key = '';
    for (const k in values) key += `${k}:${values[k]};`;
    const hit = memo.get(key);
    if (hit) return hit;
    let out: { model: Model | null; error?: string };
    try {
      // Values written as expressions follow the design quantities they use; a row's own conditions stay as the row gives them.
      out = { model: evaluate(spec.topology, spec.derived ? { ...spec.derived.resolve(values), ...overrides } : values) };
    } catch (err) {
      if (!(err instanceof ModelError)) throw err;
      out = { model: null, error: err.message };
    }
    if (memo.size < 5000) memo.set(key, out);
    return out;
  };
  // Overrides replace the front matter's conditions, at the typical point and at
  // every corner: an overridden condition is no longer ranged at this point.
  const conditions = new Map([...spec.conditions].filter(([k]) => !(k in overrides)));
  const view: Spec = { ...spec, claims, conditions };
  const { corners: points, limited } = corners(view);
  const evaluated: Evaluated[] = points.map((c) => {
    const corner = { ...c, values: { ...c.values, ...overrides } };
    return { corner, ...at(corner.values) };
  });
  const typical = evaluated[0];
  const where = label ? ` at ${label}` : '';
  if (!typical.model) {
    findings.push(networkError(spec, where));
    return null;
  }
  for (const e of evaluated.slice(1)) if (!e.model) findings.push(networkError(spec, `${where} at the corner ${e.corner.label}`));
  return {
    spec: view,
    model: typical.model,
    evaluated,
    cornersLimited: limited,
    tolerances: tolerances ?? DEFAULT_TOLERANCES,
    withChanges: (changes) => at({ ...base, ...changes }).model,
  };
}

/** Every operating point of the spec with its context; the front matter's first. Null when the front matter's point cannot be evaluated. */
export function operatingPoints(spec: Spec, tolerances: Tolerances | undefined, findings: Finding[]): OperatingPoint[] | null {
  const points: OperatingPoint[] = [];
  for (const g of groupClaims(spec)) {
    const ctx = contextFor(spec, g.overrides, g.claims, tolerances, findings, g.label);
    if (!ctx) {
      if (points.length === 0) return null;
      continue;
    }
    points.push({ ...g, context: ctx });
  }
  return points;
}

/** The closed loop's verdict; 'open-loop' for a block that is not used in a loop (it has no feedback factor). */
export type LoopVerdict = 'stable' | 'unstable' | 'unknown' | 'open-loop';

export const loopVerdict = (spec: Spec, model: Model): LoopVerdict => (inLoop(spec) ? model.loop.stability : 'open-loop');

/** One statement of a claim (typ, min or max) judged at its point. */
export interface Judged {
  entry: ClaimEntry;
  point: OperatingPoint;
  verdict: BoundVerdict;
  value: number | null;
  /** "typical" or the worst point of the box. */
  label: string;
  values: Values;
  stability: LoopVerdict;
}

/** Every statement of every claim at its own operating point: typ at the typical point, bounds at the worst point of the box. */
export function judgeAll(points: OperatingPoint[]): Judged[] {
  const out: Judged[] = [];
  for (const point of points) {
    const ctx = point.context;
    for (const entry of point.claims) {
      const t = toleranceFor(entry.spec.kind, ctx.tolerances);
      if (entry.typ) {
        const fig = ctx.model.exact[entry.key];
        const v = judge({ ...entry, min: undefined, max: undefined }, fig?.value ?? null, fig, t)[0];
        out.push({ entry, point, verdict: v, value: fig?.value ?? null, label: 'typical', values: ctx.model.values, stability: loopVerdict(ctx.spec, ctx.model) });
      }
      for (const bound of ['min', 'max'] as const) {
        if (!entry[bound]) continue;
        const w = worstCase(ctx, entry.key, bound);
        const only = { ...entry, typ: undefined, min: bound === 'min' ? entry.min : undefined, max: bound === 'max' ? entry.max : undefined };
        const v = judge(only, w.value, w.figure, t)[0];
        const m = ctx.withChanges(w.values);
        out.push({ entry, point, verdict: v, value: w.value, label: w.label, values: w.values, stability: m ? loopVerdict(ctx.spec, m) : 'unknown' });
      }
    }
  }
  return out;
}

/** A spec whose params are changed: a ranged param keeps its spread around the new value. */
export function withParams(spec: Spec, changes: Values): Spec {
  const params = new Map(spec.params);
  const design = spec.design ? new Map(spec.design) : undefined;
  for (const [key, value] of Object.entries(changes)) {
    // A design quantity that is no param is changed in `design`, and what derives from it follows.
    const inDesign = design?.has(key) && !spec.topology.params.some((p) => p.key === key);
    const target = inDesign ? design! : params;
    const e = target.get(key);
    const keySpec = inDesign ? keySpecOf(spec, key) : spec.topology.params.find((p) => p.key === key);
    if (!keySpec) continue;
    const at = (v: number, like?: ValueEntry['typ']) => ({ quantity: { value: v, kind: keySpec.kind, written: like?.quantity.written ?? { text: '', number: '', unit: '', style: 'si' as const, scale: 1, sigDigits: 3, decimals: 0 } }, pos: like?.pos ?? spec.paramsPos }) as ValueEntry['typ'];
    const typ = e?.typ.quantity.value;
    if (e && typ && typ > 0) {
      const f = value / typ;
      target.set(key, { ...e, typ: at(value, e.typ), ...(e.min ? { min: at(e.min.quantity.value * f, e.min) } : {}), ...(e.max ? { max: at(e.max.quantity.value * f, e.max) } : {}) });
    } else {
      target.set(key, { key, keyPos: e?.keyPos ?? spec.paramsPos, spec: keySpec, typ: at(value, e?.typ) });
    }
  }
  return { ...spec, params, ...(design ? { design } : {}) };
}

/** The whole spec judged again with params changed (a design change): every statement, and the closed loop at every point. */
export function recheck(spec: Spec, changes: Values, tolerances: Tolerances | undefined): { judged: Judged[]; stable: boolean; front: Model | null } {
  const changed = withParams(spec, changes);
  const points = operatingPoints(changed, tolerances, []);
  if (!points) return { judged: [], stable: false, front: null };
  const judged = judgeAll(points);
  const ok = (v: LoopVerdict) => v === 'stable' || v === 'open-loop';
  const stable = points.every((p) => ok(loopVerdict(changed, p.context.model))) && judged.every((j) => ok(j.stability));
  return { judged, stable, front: points[0].context.model };
}

export { conditionsText };
