// The machine-readable report of SPEC-FORMAT §4.

import type { FileResult } from '../check';
import { summarize } from './summary';

export function jsonReport(results: FileResult[]): string {
  const files = results.map((r) => ({
    path: r.path,
    skipped: r.skipped,
    findings: r.findings.map((f) => ({
      rule: f.rule,
      severity: f.severity,
      line: f.line,
      column: f.column,
      claim: f.claim,
      ...(f.claimed ? { claimed: f.claimed } : {}),
      ...(f.computed !== undefined ? { computed: f.computed } : {}),
      ...(f.unit ? { unit: f.unit } : {}),
      message: f.message,
      suggestions: f.suggestions,
      ...(f.related ? { related: f.related } : {}),
      ...(f.derivation ? { derivation: f.derivation } : {}),
    })),
  }));
  return `${JSON.stringify({ files, summary: summarize(results) }, null, 2)}\n`;
}
