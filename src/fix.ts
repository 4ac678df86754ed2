// --fix: rewrite stale typical claims (and, with --fix-bounds, failing bounds)
// to the model's figures, in the author's unit and precision. Edits are the
// smallest spans — the value's text, or a table cell's number — and every
// byte outside them is kept. Params are never touched.

import type { FileResult } from './check';
import { formatBound } from './fixes';
import { formatLike } from './quantity';
import type { ClaimEntry, QuantityAt } from './spec/types';
import { judge, toleranceFor } from './verdict';
import { worstCase } from './worst-case';

export interface Edit {
  /** Offsets in the text as read (BOM excluded). */
  start: number;
  end: number;
  text: string;
  claim: string;
  bound: 'typ' | 'min' | 'max';
  line: number;
}

const LEADING_NUMBER = /^[+\-\u2212]?(?:\d+\.?\d*|\.\d+)(?:[eE][+\-\u2212]?\d+)?/;

function edit(entry: ClaimEntry, bound: 'typ' | 'min' | 'max', q: QuantityAt, formatted: string, original: string): Edit | undefined {
  if (!q.span) return undefined;
  const text = q.span.numberOnly ? (formatted.match(LEADING_NUMBER)?.[0] ?? formatted) : formatted;
  if (text === original.slice(q.span.start, q.span.end)) return undefined;
  return { start: q.span.start, end: q.span.end, text, claim: entry.key, bound, line: q.pos.line };
}

/** The edits that bring a checked file's claims in line with the model. */
export function planFixes(result: FileResult, text: string, opts: { bounds?: boolean } = {}): Edit[] {
  const edits: Edit[] = [];
  for (const point of result.points ?? []) {
    const ctx = point.context;
    for (const entry of point.claims) {
      const t = toleranceFor(entry.spec.kind, ctx.tolerances);
      if (entry.typ) {
        const fig = ctx.model.exact[entry.key];
        const value = fig?.value ?? null;
        const only = { ...entry, min: undefined, max: undefined };
        if (value !== null && judge(only, value, fig, t)[0]?.outcome === 'fails') {
          const e = edit(entry, 'typ', entry.typ, formatLike(value, entry.typ.quantity.written, entry.spec.kind), text);
          if (e) edits.push(e);
        }
      }
      if (!opts.bounds) continue;
      for (const bound of ['min', 'max'] as const) {
        const q = entry[bound];
        if (!q) continue;
        const w = worstCase(ctx, entry.key, bound);
        if (w.value === null) continue;
        const only = { ...entry, typ: undefined, min: bound === 'min' ? q : undefined, max: bound === 'max' ? q : undefined };
        if (judge(only, w.value, w.figure, t)[0]?.outcome !== 'fails') continue;
        const e = edit(entry, bound, q, formatBound(w.value, q.quantity.written, entry.spec.kind, bound === 'min' ? 'at-most' : 'at-least'), text);
        if (e) edits.push(e);
      }
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
