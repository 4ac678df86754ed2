// --restate: rewrite stale typical claims (and, with --restate-bounds, failing bounds)
// to the model's figures. The edits are the restatements the claim rules
// decided (findings' `fixes`), never judged again here: a waived finding or a
// rule that is off yields none, and a restatement the rule withheld (a prefix
// slip under it, a row it would contradict) is not written. Every byte
// outside the edited spans is kept. Params are never touched.

import type { FileResult } from '../check';
import { readDocument } from '../pipeline';
import type { QuantityAt, Spec } from '../spec/types';

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

const statements = (spec: Spec): { key: string; bound: string; q: QuantityAt }[] =>
  spec.claims.flatMap((c) => (['min', 'typ', 'max'] as const).filter((b) => c[b]).map((b) => ({ key: c.key, bound: b, q: c[b]! })));

/**
 * Reads the restated text back (both without a BOM) and says what is wrong
 * with it, or undefined when it holds the same statements, each edited one
 * spelling its new text where the old one stood, and no new reading error.
 * The last guard before a file is written: an edit the reader would not see
 * where it was meant (a source form the planning misjudged) is not written.
 */
export function restatedProblem(before: string, after: string, edits: Edit[]): string | undefined {
  const a = readDocument('a.md', before);
  const b = readDocument('b.md', after);
  if (a.kind !== 'spec' || !a.spec || b.kind !== 'spec' || !b.spec) return 'the restated text would not read as the same spec';
  const errors = (fs: { severity: string }[]) => fs.filter((f) => f.severity === 'error').length;
  if (errors(b.findings) > errors(a.findings)) return 'the restated text would read with a new error';
  const sa = statements(a.spec);
  const sb = statements(b.spec);
  if (sa.length !== sb.length) return 'the restated text would state a different number of claims';
  const byStart = new Map(edits.map((e) => [e.start, e]));
  let shift = 0;
  const sorted = [...edits].sort((x, y) => x.start - y.start);
  let k = 0;
  for (let i = 0; i < sa.length; i++) {
    const x = sa[i];
    const y = sb[i];
    if (x.key !== y.key || x.bound !== y.bound) return `the restated text would read \`${y.key}\` where \`${x.key}\` stood`;
    const start = x.q.span?.start;
    const edit = start === undefined ? undefined : byStart.get(start);
    if (!edit) {
      if (x.q.quantity.value !== y.q.quantity.value && !(Number.isNaN(x.q.quantity.value) && Number.isNaN(y.q.quantity.value))) return `the restated text would change \`${x.key}\`, which is not restated`;
      continue;
    }
    while (k < sorted.length && sorted[k].start < edit.start) shift += sorted[k].text.length - (sorted[k].end - sorted[k].start), k++;
    if (!y.q.span || y.q.span.start !== edit.start + shift || after.slice(y.q.span.start, y.q.span.start + edit.text.length) !== edit.text) return `\`${x.key}\` would not read back as \`${edit.text}\``;
  }
  return undefined;
}
