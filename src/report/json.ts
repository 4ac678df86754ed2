// The machine-readable report of SPEC-FORMAT §4.

import type { FileResult } from '../check';
import { summarize } from './summary';

export function jsonReport(results: FileResult[], opts: { quiet?: boolean } = {}): string {
  const files = results.map((r) => ({
    path: r.path,
    skipped: r.skipped,
    findings: r.findings.filter((f) => !opts.quiet || (f.severity === 'error' && !f.waived)).map((f) => ({
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
    })),
  }));
  return `${JSON.stringify({ files, summary: summarize(results) }, null, 2)}\n`;
}
