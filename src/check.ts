// One document, end to end: read → evaluate at each operating point (the
// front matter's and each table row's own conditions), at the typical values
// and the corners of the ranges → run the rules → findings, plus the models
// for the reviewer report.

import { RULES } from '../rules';
import { typicalValues } from './model/evaluation';
import { type Finding, sortFindings } from './verdicts/findings';
import { type Model, evaluationCount } from './model/model';
import { readDocument } from './pipeline';
import { type Sheet, sheetOf } from './report/sheet';
import { type Judged, type OperatingPoint, judgeAll, operatingPoints, recheck } from './verdicts/points';
import { type Recheck, type RuleContext, type RuleSettings, runRules } from './verdicts/rule';
import type { Values } from './topologies/types';
import type { Spec } from './spec/types';
import type { Tolerances } from './verdicts/verdict';
import { applyWaivers, todayIso } from './verdicts/waivers';
import { formatKeyValue, relateFindings } from './spec/design';

export type { OperatingPoint } from './verdicts/points';

export interface FileResult {
  path: string;
  skipped: boolean;
  findings: Finding[];
  spec?: Spec;
  /** The model at the front matter's typical point. */
  model?: Model;
  context?: RuleContext;
  points?: OperatingPoint[];
  /** Every statement of every claim with the figure it was judged against (holding ones included), for the reviewer report. */
  statements?: Judged[];
  /** The block's review sheet: plain data for the text report. */
  sheet?: Sheet;
}

export interface CheckOptions {
  rules?: Record<string, RuleSettings>;
  tolerances?: Tolerances;
  /** YYYY-MM-DD, for waiver expiry; today when absent. */
  today?: string;
  /** false: no design changes are searched for (the editor's as-you-type check; its code actions ask again). Default true. */
  designChanges?: boolean;
}

/**
 * Design-change searches per file: each re-judges the whole spec many times,
 * so a document of thousands of failing statements would take minutes. Repeated
 * statements share one search; past this many, failing statements are restated only.
 */
export const DESIGN_SEARCHES = 24;

/** Model evaluations the design-change searches of a file may start within (a search under way finishes). */
export const DESIGN_EVALUATIONS = 800;

export function checkText(path: string, text: string, options: CheckOptions = {}): FileResult {
  const read = readDocument(path, text);
  if (read.kind === 'skipped') return { path, skipped: true, findings: [] };
  const findings = [...read.findings];
  const spec = read.spec;
  if (!spec) return { path, skipped: false, findings: sortFindings(findings) };

  const points = operatingPoints(spec, options.tolerances, findings);
  if (!points) return { path, skipped: false, findings: sortFindings(findings), spec };
  // Design changes are re-judged against the whole spec; each change once per file.
  const rechecked = new Map<string, Recheck>();
  const recheckOnce = (changes: Values): Recheck => {
    const key = JSON.stringify(Object.entries(changes).sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0)));
    let hit = rechecked.get(key);
    if (!hit) rechecked.set(key, (hit = recheck(spec, changes, options.tolerances)));
    return hit;
  };
  // Each search re-judges every operating point: with many points, fewer searches.
  const designBudget = { left: Math.max(2, Math.min(DESIGN_SEARCHES, Math.floor((DESIGN_SEARCHES * 4) / points.length))), until: evaluationCount() + DESIGN_EVALUATIONS };
  if (options.designChanges !== false) {
    for (const p of points) {
      p.context.recheck = recheckOnce;
      p.context.designBudget = designBudget;
    }
  }
  const [front, ...rows] = points;
  const claimRules = RULES.filter((r) => r.scope === 'claims');
  const designRules = RULES.filter((r) => r.scope !== 'claims');
  findings.push(...runRules(claimRules, front.context, options.rules));
  findings.push(...runRules(designRules, { ...front.context, spec }, options.rules));
  for (const p of rows) findings.push(...runRules(claimRules, p.context, options.rules));
  if (spec.derived) {
    const values = typicalValues(spec);
    relateFindings(findings, [...(spec.design?.values() ?? []), ...spec.params.values(), ...spec.conditions.values()], (name) => formatKeyValue(spec, name, values[name]));
  }
  findings.push(...applyWaivers(findings, spec.waivers, options.today ?? todayIso()));
  // The figures of every statement, holding ones included: the worst-case searches are memoized, so this re-reads what the rules computed.
  const statements = judgeAll(points);
  const result: FileResult = { path, skipped: false, findings: sortFindings(findings), spec, model: front.context.model, context: front.context, points, statements };
  result.sheet = sheetOf(result);
  return result;
}

