// The machine-readable report of SPEC-FORMAT §4.

import type { FileResult } from '../check';
import type { Fix } from '../verdicts/findings';
import { summarize } from './summary';

/** A fix as SPEC-FORMAT §4 shows it: an edit by line and column (1-based, endColumn exclusive). */
function fixForReport(f: Fix): unknown {
  if (f.kind !== 'restate') return f;
  const { edit, ...rest } = f;
  return { ...rest, edit: edit ? { line: edit.line, column: edit.column, endLine: edit.endLine, endColumn: edit.endColumn, text: edit.text } : null };
}

export function jsonReport(results: FileResult[], opts: { errorsOnly?: boolean } = {}): string {
  const files = results.map((r) => ({
    path: r.path,
    skipped: r.skipped,
    findings: r.findings.filter((f) => !opts.errorsOnly || (f.severity === 'error' && !f.waived)).map((f) => ({
      rule: f.rule,
      severity: f.severity,
      line: f.line,
      column: f.column,
      claim: f.claim,
      // Present on every finding, null where they do not apply, so consumers need no key checks.
      claimed: f.claimed ?? null,
      computed: f.computed ?? null,
      unit: f.unit ?? null,
      message: f.message,
      suggestions: f.suggestions,
      ...(f.related ? { related: f.related } : {}),
      ...(f.derivation ? { derivation: f.derivation } : {}),
      ...(f.waived ? { waived: f.waived } : {}),
      ...(f.verdict ? { verdict: f.verdict } : {}),
      // SPEC-FORMAT §4: the structured form of the suggestions.
      ...(f.fixes?.length ? { fixes: f.fixes.map(fixForReport) } : {}),
    })),
  }));
  return `${JSON.stringify({ files, summary: summarize(results) }, null, 2)}\n`;
}
