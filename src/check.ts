// One document, end to end: read → evaluate at the typical point and the
// corners → run the rules → findings, plus the model for the reviewer report.

import { RULES } from '../rules';
import { type Evaluated, corners, evaluateCorner, typicalValues } from './evaluation';
import { type Finding, sortFindings } from './findings';
import { type Model, ModelError, evaluate } from './model';
import { readDocument } from './pipeline';
import { type RuleContext, type RuleSettings, runRules } from './rule';
import type { Spec } from './spec/types';
import { DEFAULT_TOLERANCES, type Tolerances } from './verdict';

export interface FileResult {
  path: string;
  skipped: boolean;
  findings: Finding[];
  spec?: Spec;
  model?: Model;
  context?: RuleContext;
}

export interface CheckOptions {
  rules?: Record<string, RuleSettings>;
  tolerances?: Tolerances;
}

export function checkText(path: string, text: string, options: CheckOptions = {}): FileResult {
  const read = readDocument(path, text);
  if (read.kind === 'skipped') return { path, skipped: true, findings: [] };
  const findings = [...read.findings];
  const spec = read.spec;
  if (!spec) return { path, skipped: false, findings: sortFindings(findings) };

  const { corners: points, limited } = corners(spec);
  const evaluated: Evaluated[] = points.map((c) => evaluateCorner(spec, c));
  const typical = evaluated[0];
  if (!typical.model) {
    const why = spec.topology.diagnose?.();
    const pos = why?.pos ?? spec.paramsPos;
    findings.push({ rule: 'network', severity: 'error', line: pos.line, column: pos.column, claim: null, message: `the small-signal model cannot be solved: ${why?.message ?? typical.error}`, suggestions: [] });
    return { path, skipped: false, findings: sortFindings(findings), spec };
  }
  for (const e of evaluated.slice(1)) {
    if (!e.model) findings.push({ rule: 'network', severity: 'error', line: spec.paramsPos.line, column: spec.paramsPos.column, claim: null, message: `the small-signal model cannot be solved at the corner ${e.corner.label}: ${e.error}`, suggestions: [] });
  }
  const base = typicalValues(spec);
  const model = typical.model;
  const context: RuleContext = {
    spec,
    model,
    evaluated,
    cornersLimited: limited,
    tolerances: options.tolerances ?? DEFAULT_TOLERANCES,
    withChanges(changes) {
      try {
        return evaluate(spec.topology, { ...base, ...changes });
      } catch (err) {
        if (err instanceof ModelError) return null;
        throw err;
      }
    },
  };
  findings.push(...runRules(RULES, context, options.rules));
  return { path, skipped: false, findings: sortFindings(findings), spec, model, context };
}
