// The GitLab code-quality report: a JSON array of issues, each
// {description, check_name, fingerprint, severity, location: {path, lines: {begin}}},
// which the merge request widget compares between the source and target
// branches by fingerprint (the same identity as in SARIF, unique per file).
//
// Severity: GitLab's scale is info < minor < major < critical < blocker.
// An input error (the spec cannot be read, parsed or solved, so none of its
// claims was checked) is `critical`; a claim that cannot hold is `major`; a
// rule of thumb broken or a thin margin is `minor`; info stays `info`.
// `blocker` is left to the project's own gates.
//
// Waived findings are omitted: an accepted deviation is not a code-quality
// issue to fix, and listing it would make the widget count it as one.

import type { FileResult } from '../check';
import type { Finding } from '../verdicts/findings';
import { INPUT_DIAGNOSTICS, findingFingerprints, portablePath } from './sarif';

export type GitlabSeverity = 'info' | 'minor' | 'major' | 'critical' | 'blocker';

export interface GitlabIssue {
  description: string;
  check_name: string;
  fingerprint: string;
  severity: GitlabSeverity;
  location: { path: string; lines: { begin: number } };
}

const INPUT_IDS = new Set(INPUT_DIAGNOSTICS.map((d) => d.id));

export function gitlabSeverity(f: Finding): GitlabSeverity {
  if (f.severity === 'note') return 'info';
  if (f.severity === 'warning') return 'minor';
  return INPUT_IDS.has(f.rule) ? 'critical' : 'major';
}

export function gitlabReport(results: FileResult[]): string {
  const issues: GitlabIssue[] = [];
  for (const r of results) {
    if (r.skipped) continue;
    const fingerprints = findingFingerprints(r);
    r.findings.forEach((f, i) => {
      if (f.waived) return;
      issues.push({
        description: f.suggestions.length ? `${f.message} (→ ${f.suggestions.join('; → ')})` : f.message,
        check_name: f.rule,
        fingerprint: fingerprints[i],
        severity: gitlabSeverity(f),
        location: { path: portablePath(r.path), lines: { begin: Math.max(1, f.line) } },
      });
    });
  }
  return `${JSON.stringify(issues, null, 2)}\n`;
}
