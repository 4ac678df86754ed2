// One document, end to end: read → evaluate at each operating point (the
// front matter's and each table row's own conditions), at the typical values
// and the corners of the ranges → run the rules → findings, plus the models
// for the reviewer report.

import { RULES } from '../rules';
import { type Evaluated, corners, typicalValues } from './evaluation';
import { type Finding, sortFindings } from './findings';
import { type Model, ModelError, evaluate } from './model';
import { readDocument } from './pipeline';
import { type RuleContext, type RuleSettings, runRules } from './rule';
import type { ClaimEntry, Spec } from './spec/types';
import type { Values } from './topologies/types';
import { DEFAULT_TOLERANCES, type Tolerances } from './verdict';
import { applyWaivers, todayIso } from './waivers';

/** The claims made at one operating point, and the models evaluated there. */
export interface OperatingPoint {
  /** Condition values that differ from the front matter's (empty for the front matter's own point). */
  overrides: Values;
  /** "cl = 10 pF, β = 0.5", or '' for the front matter's point. */
  label: string;
  claims: ClaimEntry[];
  context: RuleContext;
}

export interface FileResult {
  path: string;
  skipped: boolean;
  findings: Finding[];
  spec?: Spec;
  /** The model at the front matter's typical point. */
  model?: Model;
  context?: RuleContext;
  points?: OperatingPoint[];
}

export interface CheckOptions {
  rules?: Record<string, RuleSettings>;
  tolerances?: Tolerances;
  /** YYYY-MM-DD, for waiver expiry; today when absent. */
  today?: string;
}

const pointKey = (v: Values): string => JSON.stringify(Object.entries(v).sort(([a], [b]) => a.localeCompare(b)));

function networkError(spec: Spec, message: string): Finding {
  const why = spec.topology.diagnose?.();
  const pos = why?.pos ?? spec.paramsPos;
  return { rule: 'network', severity: 'error', line: pos.line, column: pos.column, claim: null, message: `the small-signal model cannot be solved${message}: ${why?.message ?? 'the network matrices are singular'}`, suggestions: [] };
}

function contextFor(spec: Spec, overrides: Values, claims: ClaimEntry[], options: CheckOptions, findings: Finding[], label: string): RuleContext | null {
  const base = { ...typicalValues(spec), ...overrides };
  // The corners, the worst-case searches for different claims and the fix
  // solver visit the same points again and again: evaluate each once.
  const memo = new Map<string, { model: Model | null; error?: string }>();
  const at = (values: Values): { model: Model | null; error?: string } => {
    const key = JSON.stringify(Object.keys(values).sort().map((k) => [k, values[k]]));
    const hit = memo.get(key);
    if (hit) return hit;
    let out: { model: Model | null; error?: string };
    try {
      out = { model: evaluate(spec.topology, values) };
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
    tolerances: options.tolerances ?? DEFAULT_TOLERANCES,
    withChanges: (changes) => at({ ...base, ...changes }).model,
  };
}

export function checkText(path: string, text: string, options: CheckOptions = {}): FileResult {
  const read = readDocument(path, text);
  if (read.kind === 'skipped') return { path, skipped: true, findings: [] };
  const findings = [...read.findings];
  const spec = read.spec;
  if (!spec) return { path, skipped: false, findings: sortFindings(findings) };

  // Group the claims by operating point; a row whose conditions equal the front matter's joins it.
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

  const points: OperatingPoint[] = [];
  for (const g of groups.values()) {
    const ctx = contextFor(spec, g.overrides, g.claims, options, findings, g.label);
    if (!ctx) {
      if (points.length === 0) return { path, skipped: false, findings: sortFindings(findings), spec };
      continue;
    }
    points.push({ ...g, context: ctx });
  }
  const [front, ...rows] = points;
  const claimRules = RULES.filter((r) => r.scope === 'claims');
  const designRules = RULES.filter((r) => r.scope !== 'claims');
  findings.push(...runRules(claimRules, front.context, options.rules));
  findings.push(...runRules(designRules, { ...front.context, spec }, options.rules));
  for (const p of rows) findings.push(...runRules(claimRules, p.context, options.rules));
  findings.push(...applyWaivers(findings, spec.waivers, options.today ?? todayIso()));
  return { path, skipped: false, findings: sortFindings(findings), spec, model: front.context.model, context: front.context, points };
}
