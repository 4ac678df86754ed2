// Code actions on a finding, all read from the data the rules decided
// (findings' `fixes`, SPEC-FORMAT §4), never judged again here:
// restate the claim to the model's figure (the same edit `--restate` writes),
// apply a design change (the params edited; preferred only when every claim
// then holds), or record a waiver to fill in (reason and expiry).

import { type CodeAction, CodeActionKind, type Diagnostic, type Range, type TextEdit } from 'vscode-languageserver';
import { RULES } from '../../rules';
import type { FileResult } from '../check';
import { INPUT_RULE_IDS } from '../diagnostics';
import type { Finding, Fix } from '../verdicts/findings';
import { formatQuantity } from '../quantity';
import type { QuantityAt, Spec } from '../spec/types';
import { type Analysis, withDesignChanges } from './analysis';
import { overlaps, toPosition } from './positions';

const WAIVABLE = new Set([...RULES.map((r) => r.id), ...INPUT_RULE_IDS]);

/** An LSP range from offsets of the text as read without its byte-order mark. */
function offsetRange(spec: Spec, text: string, start: number, end: number): Range | undefined {
  if (!spec.lines) return undefined;
  const a = spec.lines.pos(start);
  const b = spec.lines.pos(end);
  return { start: toPosition(text, a.line, a.column), end: toPosition(text, b.line, b.column) };
}

/** The restatement's edit (1-based, endColumn exclusive) as an LSP edit. */
function restateEdit(text: string, fix: Extract<Fix, { kind: 'restate' }>): TextEdit | undefined {
  const e = fix.edit;
  if (!e || fix.refused) return undefined;
  return { range: { start: toPosition(text, e.line, e.column), end: toPosition(text, e.endLine, e.endColumn) }, newText: e.text };
}

/** The written value's own text: its span, or as many characters as it was written with (`240 µS` of `240 µS ±15%`). */
function valueRange(spec: Spec, text: string, q: QuantityAt): Range | undefined {
  const plain = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  if (q.span) return offsetRange(spec, text, q.span.start, q.span.end);
  const w = q.quantity.written.text;
  if (w && plain.startsWith(w, q.pos.offset)) return offsetRange(spec, text, q.pos.offset, q.pos.offset + w.length);
  return undefined;
}

/** The edits that set params to new values: a ranged param keeps its spread around the new value (as src/verdicts/points.ts withParams judges it); a param not written gets its own line. */
export function designEdits(spec: Spec, text: string, lines: string[], changes: Record<string, number>): TextEdit[] | undefined {
  const edits: TextEdit[] = [];
  const added: string[] = [];
  for (const [key, value] of Object.entries(changes)) {
    const e = spec.params.get(key);
    const kind = spec.topology.params.find((p) => p.key === key)?.kind;
    if (!kind) return undefined;
    if (!e) {
      added.push(`${key}: ${formatQuantity(value, kind)}`);
      continue;
    }
    const typ = e.typ.quantity.value;
    if (!(typ > 0)) return undefined;
    const f = value / typ;
    const parts: Array<[QuantityAt, number]> = [];
    if (!e.typIsMidpoint) parts.push([e.typ, value]);
    if (!e.tolerance) {
      if (e.min) parts.push([e.min, e.min.quantity.value * f]);
      if (e.max) parts.push([e.max, e.max.quantity.value * f]);
    }
    for (const [q, v] of parts) {
      const range = valueRange(spec, text, q);
      if (!range) return undefined;
      edits.push({ range, newText: formatQuantity(v, kind) });
    }
  }
  if (added.length) {
    // After the last line of the params block, at its keys' indentation; a flow mapping is left alone.
    const entries = [...spec.params.values()];
    if (!entries.length) return undefined;
    const last = Math.max(...entries.flatMap((e) => [e.keyPos.line, e.typ.pos.line, e.min?.pos.line ?? 0, e.max?.pos.line ?? 0]));
    const first = entries[0].keyPos;
    const keyLine = lines[first.line - 1] ?? '';
    if (/[{[]/.test(keyLine.slice(0, first.column - 1))) return undefined;
    const indent = ' '.repeat(first.column - 1);
    const at = { line: last, character: 0 };
    edits.push({ range: { start: at, end: at }, newText: added.map((a) => `${indent}${a}\n`).join('') });
  }
  return edits;
}

const addDays = (iso: string, days: number): string => new Date(Date.parse(`${iso}T00:00:00Z`) + days * 86_400_000).toISOString().slice(0, 10);

/** A waiver entry to fill in: the reason is left empty, so the check keeps asking for it until the review decision is written. */
export function waiverEdit(text: string, lines: string[], f: Finding, today: string): TextEdit | undefined {
  if (!/^---[ \t]*$/.test(lines[0]?.replace(/^\ufeff/, '') ?? '')) return undefined;
  let close = -1;
  for (let i = 1; i < lines.length; i++) if (/^---[ \t]*$/.test(lines[i])) {
    close = i;
    break;
  }
  if (close < 0) return undefined;
  const item = (indent: string) =>
    [`${indent}- rule: ${f.rule}`, ...(f.claim ? [`${indent}  claim: ${f.claim}`] : []), `${indent}  reason: ""   # the review decision behind accepting this deviation`, `${indent}  expires: ${addDays(today, 90)}`].map((l) => `${l}\n`).join('');
  const key = lines.findIndex((l, i) => i > 0 && i < close && /^waivers[ \t]*:/.test(l));
  if (key < 0) return { range: { start: { line: close, character: 0 }, end: { line: close, character: 0 } }, newText: `waivers:\n${item('  ')}` };
  const rest = lines[key].replace(/^waivers[ \t]*:/, '').replace(/#.*$/, '').trim();
  if (rest === '[]') return { range: { start: { line: key, character: 0 }, end: { line: key, character: lines[key].length } }, newText: `waivers:\n${item('  ').replace(/\n$/, '')}` };
  if (rest !== '') return undefined;
  // After the list's last line, at its items' indentation.
  let end = key + 1;
  while (end < close && (/^[ \t-]/.test(lines[end]) || lines[end].trim() === '')) end++;
  const firstItem = lines.slice(key + 1, end).find((l) => /^[ \t]*-/.test(l));
  const indent = firstItem ? /^[ \t]*/.exec(firstItem)![0] : '  ';
  while (end > key + 1 && lines[end - 1].trim() === '') end--;
  return { range: { start: { line: end, character: 0 }, end: { line: end, character: 0 } }, newText: item(indent) };
}

export function codeActions(a: Analysis, range: Range, today: string): CodeAction[] {
  const r: FileResult | undefined = withDesignChanges(a);
  if (!r?.spec) return [];
  const spec = r.spec;
  const out: CodeAction[] = [];
  const edit = (edits: TextEdit[]) => ({ changes: { [a.uri]: edits } });
  r.findings.forEach((f, i) => {
    const d: Diagnostic | undefined = a.diagnostics[i];
    if (!d || !overlaps(d.range, range)) return;
    for (const fix of f.fixes ?? []) {
      if (fix.kind === 'restate' && !f.waived) {
        const e = restateEdit(a.text, fix);
        if (!e) continue;
        const where = f.claim ?? 'the claim';
        out.push({ title: `Restate ${where}${fix.bound === 'typ' ? '' : ` (${fix.bound})`} as ${e.newText} (the model's figure)`, kind: CodeActionKind.QuickFix, diagnostics: [d], edit: edit([e]) });
      } else if (fix.kind === 'design') {
        const edits = designEdits(spec, a.text, a.lines, fix.changes);
        if (!edits) continue;
        const set = Object.entries(fix.changes).map(([k, v]) => `${k} = ${formatQuantity(v, spec.topology.params.find((p) => p.key === k)!.kind)}`).join(', ');
        const then = fix.meetsAll ? 'every claim then holds' : fix.breaks.length ? `not every claim holds then: ${[...new Set(fix.breaks.map((b) => b.claim))].join(', ')}` : `${f.claim ?? 'the claim'} then holds`;
        out.push({ title: `Design change: ${set} (${then}${fix.stable ? '' : '; the loop is not stable everywhere'})`, kind: CodeActionKind.QuickFix, diagnostics: [d], isPreferred: fix.meetsAll && fix.stable, edit: edit(edits) });
      }
    }
    if (!f.waived && WAIVABLE.has(f.rule)) {
      const w = waiverEdit(a.text, a.lines, f, today);
      if (w) out.push({ title: `Waive ${f.rule}${f.claim ? ` for ${f.claim}` : ''} (add a waiver; fill in its reason)`, kind: CodeActionKind.QuickFix, diagnostics: [d], edit: edit([w]) });
    }
  });
  return out;
}
