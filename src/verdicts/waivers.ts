// Waivers: accepted deviations recorded in the front matter. A waived finding
// is listed (as waived) but counts neither as an error nor as a warning.

import { RULES } from '../../rules';
import { INPUT_RULE_IDS } from '../diagnostics';
import type { Finding } from './findings';
import { nearest } from '../spec/nearest';
import type { Waiver } from '../spec/types';

export { INPUT_RULE_IDS };

const problem = (w: Waiver, severity: Finding['severity'], message: string, suggestions: string[] = []): Finding => ({
  rule: 'waiver',
  severity,
  line: w.pos.line,
  column: w.pos.column,
  claim: w.claim ?? null,
  message,
  suggestions,
});

/**
 * Applies the waivers to the findings (marking the ones they accept) and
 * returns findings about the waivers themselves. `today` is YYYY-MM-DD.
 */
export function applyWaivers(findings: Finding[], waivers: Waiver[], today: string): Finding[] {
  const out: Finding[] = [];
  const ids = [...RULES.map((r) => r.id), ...INPUT_RULE_IDS];
  for (const w of waivers) {
    if (!ids.includes(w.rule)) {
      const near = nearest(w.rule, ids);
      out.push(problem(w, 'error', `the waiver names an unknown rule \`${w.rule}\`${near ? `; did you mean \`${near}\`?` : ''}`));
      continue;
    }
    if (!w.reason) {
      out.push(problem(w, 'error', `the waiver of \`${w.rule}\` has no \`reason\`: an accepted deviation needs its justification on record`, ['add `reason:` with the review decision behind the waiver']));
      continue;
    }
    if (w.expires && w.expires < today) {
      out.push(problem(w, 'warning', `the waiver of \`${w.rule}\`${w.claim ? ` for \`${w.claim}\`` : ''} expired on ${w.expires} and no longer applies`, ['renew it after a new review, or fix what it waived']));
      continue;
    }
    const matched = findings.filter((f) => f.rule === w.rule && (!w.claim || f.claim === w.claim) && f.severity !== 'note');
    for (const f of matched) f.waived = { reason: w.reason, ...(w.expires ? { expires: w.expires } : {}), line: w.pos.line };
    if (!matched.length) out.push(problem(w, 'warning', `the waiver of \`${w.rule}\`${w.claim ? ` for \`${w.claim}\`` : ''} matches no finding; remove it if the deviation is gone`));
  }
  return out;
}

export const todayIso = (): string => new Date().toISOString().slice(0, 10);
