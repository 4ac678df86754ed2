// --restate: rewrite stale typical claims (and, with --restate-bounds, failing bounds)
// to the model's figures. The edits are the restatements the claim rules
// decided (findings' `fixes`), never judged again here: a waived finding or a
// rule that is off yields none, and a restatement the rule withheld (a prefix
// slip under it, a row it would contradict) is not written. Every byte
// outside the edited spans is kept. Params are never touched.

import type { FileResult } from './check';

export interface Edit {
  /** Offsets in the text as read (BOM excluded). */
  start: number;
  end: number;
  text: string;
  claim: string;
  bound: 'typ' | 'min' | 'max';
  line: number;
}

/** The edits that bring a checked file's claims in line with the model. */
export function planFixes(result: FileResult, text: string, opts: { bounds?: boolean } = {}): Edit[] {
  const edits: Edit[] = [];
  for (const f of result.findings) {
    if (f.waived || !f.claim || f.verdict?.outcome !== 'fails') continue;
    for (const fix of f.fixes ?? []) {
      if (fix.kind !== 'restate' || !fix.edit) continue;
      if (fix.bound !== 'typ' && !opts.bounds) continue;
      if (fix.edit.text === text.slice(fix.edit.start, fix.edit.end)) continue;
      edits.push({ start: fix.edit.start, end: fix.edit.end, text: fix.edit.text, claim: f.claim, bound: fix.bound, line: fix.edit.line });
    }
  }
  // Distinct, non-overlapping, in order.
  edits.sort((a, b) => a.start - b.start);
  return edits.filter((e, i) => i === 0 || e.start >= edits[i - 1].end);
}

/** Applies edits to the raw file text; `shift` is 1 when the file starts with a BOM. */
export function applyEdits(raw: string, edits: Edit[], shift: number): string {
  let out = '';
  let at = 0;
  for (const e of edits) {
    out += raw.slice(at, e.start + shift) + e.text;
    at = e.end + shift;
  }
  return out + raw.slice(at);
}
