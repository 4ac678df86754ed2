// The outline of a spec: the block, its params, conditions and claims (with
// their stated values), and the datasheet table rows that are claims.

import { type DocumentSymbol, type Range, SymbolKind } from 'vscode-languageserver';
import type { ClaimEntry, Spec, ValueEntry } from '../spec/types';
import { tokenRange } from './positions';

const span = (a: Range, b: Range): Range => ({ start: a.start, end: b.end });

export function documentSymbols(spec: Spec, text: string, lines: string[]): DocumentSymbol[] {
  const at = (pos: { line: number; column: number }) => tokenRange(text, lines, pos.line, pos.column);
  const valueSymbol = (e: ValueEntry): DocumentSymbol => {
    const key = at(e.keyPos);
    const last = [e.typ, e.min, e.max].filter(Boolean).map((q) => at(q!.pos)).reduce((x, y) => (y.end.line > x.end.line || (y.end.line === x.end.line && y.end.character > x.end.character) ? y : x), key);
    const shown = e.open ? 'open' : e.min || e.max ? `${e.min?.quantity.written.text ?? '…'} to ${e.max?.quantity.written.text ?? '…'} (typ ${e.typ.quantity.written.text})` : e.typ.quantity.written.text;
    return { name: e.key, detail: shown, kind: SymbolKind.Field, range: span(key, last), selectionRange: key };
  };
  const stated = (c: ClaimEntry) => [c.typ && (c.plain ? c.typ.quantity.written.text : `typ ${c.typ.quantity.written.text}`), c.min && `≥ ${c.min.quantity.written.text}`, c.max && `≤ ${c.max.quantity.written.text}`].filter(Boolean).join(', ');
  const claimSymbol = (c: ClaimEntry): DocumentSymbol => {
    const cells = [c.typ, c.min, c.max].filter(Boolean).map((q) => at(q!.pos));
    const sel = c.source === 'table' ? cells[0] ?? at(c.keyPos) : at(c.keyPos);
    const whole = c.source === 'table' ? { start: { line: sel.start.line, character: 0 }, end: { line: sel.start.line, character: (lines[sel.start.line] ?? '').length } } : span(sel, cells.length ? cells[cells.length - 1] : sel);
    const name = c.source === 'table' ? `${c.label ?? c.key}${c.conditions ? `, ${c.conditions.text}` : ''}` : c.key;
    return { name, detail: c.source === 'table' ? `${c.key}: ${stated(c)}` : stated(c), kind: c.source === 'table' ? SymbolKind.Event : SymbolKind.Property, range: whole, selectionRange: sel };
  };
  const group = (name: string, kind: SymbolKind, children: DocumentSymbol[], anchor?: Range): DocumentSymbol | undefined => {
    if (!children.length) return undefined;
    const first = anchor ?? children[0].range;
    const last = children[children.length - 1].range;
    return { name, kind, range: span(first, last), selectionRange: anchor ?? children[0].selectionRange, children };
  };
  const sectionKey = (name: string): Range | undefined => {
    const i = lines.findIndex((l) => new RegExp(`^${name}[ \\t]*:`).test(l));
    return i < 0 ? undefined : { start: { line: i, character: 0 }, end: { line: i, character: name.length } };
  };
  const front = spec.claims.filter((c) => c.source !== 'table');
  const rows = spec.claims.filter((c) => c.source === 'table');
  const children = [
    group('params', SymbolKind.Namespace, [...spec.params.values()].map(valueSymbol), sectionKey('params')),
    group('conditions', SymbolKind.Namespace, [...spec.conditions.values()].map(valueSymbol), sectionKey('conditions')),
    group('claims', SymbolKind.Namespace, front.map(claimSymbol), sectionKey('claims')),
    group('table rows', SymbolKind.Namespace, rows.map(claimSymbol)),
  ].filter((s): s is DocumentSymbol => Boolean(s));
  const whole: Range = { start: { line: 0, character: 0 }, end: { line: Math.max(0, lines.length - 1), character: (lines[lines.length - 1] ?? '').length } };
  const topo = at(spec.topologyPos);
  return [{ name: spec.block ?? spec.title ?? spec.path, detail: `${spec.topology.id}${spec.title ? ` — ${spec.title}` : ''}`, kind: SymbolKind.Module, range: whole, selectionRange: topo, children }];
}
