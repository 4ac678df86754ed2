// What the editor shows over a claim (its figures, verdict and derivation,
// from the check that made the diagnostics) and over a param or condition
// (the claims that depend on it and how much each moves for +10 % of it,
// the model evaluated again at each operating point).

import type { FileResult, OperatingPoint } from '../check';
import type { Figure } from '../engine/figure';
import { type Kind, formatQuantity } from '../quantity';
import { handError } from '../report/review';
import { CAUTION } from '../report/summary';
import type { ClaimEntry, Spec, ValueEntry } from '../spec/types';

/** What stands at a place of the document: a claim (front matter key or table row), a param or a condition. */
export type Target = { kind: 'claim'; entry: ClaimEntry } | { kind: 'param' | 'condition'; entry: ValueEntry };

/** The claim, param or condition whose key (or, in a table, whose row) holds the 1-based line and column. */
export function targetAt(spec: Spec, line: number, column: number): Target | undefined {
  // In a table, the whole row is the claim.
  const row = spec.claims.find((c) => c.source === 'table' && [c.typ, c.min, c.max].some((q) => q?.pos.line === line));
  if (row) return { kind: 'claim', entry: row };
  // In the front matter: the last key at or before the column on this line (a flow mapping holds several).
  let best: { t: Target; col: number } | undefined;
  const consider = (t: Target, keyLine: number, keyCol: number) => {
    if (keyLine === line && keyCol <= column && (!best || keyCol > best.col)) best = { t, col: keyCol };
  };
  for (const c of spec.claims) if (c.source !== 'table') consider({ kind: 'claim', entry: c }, c.keyPos.line, c.keyPos.column);
  for (const e of spec.params.values()) consider({ kind: 'param', entry: e }, e.keyPos.line, e.keyPos.column);
  for (const e of spec.conditions.values()) consider({ kind: 'condition', entry: e }, e.keyPos.line, e.keyPos.column);
  return best?.t;
}

const none = (f: Figure | undefined): string => (f?.unbounded ? 'unbounded' : 'none');
const shown = (f: Figure | undefined, kind: Kind): string => (!f ? '—' : f.value === null ? none(f) : formatQuantity(f.value, kind));

/** The place of a claim's statements: its key in the front matter, its cell in a table. */
const placeOf = (e: ClaimEntry, bound: 'typ' | 'min' | 'max') => (e.source === 'table' ? e[bound]!.pos : e.keyPos);

const pointOf = (r: FileResult, e: ClaimEntry): OperatingPoint | undefined => r.points?.find((p) => p.claims.includes(e));

const claimTitle = (e: ClaimEntry): string => `**${e.key}**${e.source === 'table' ? ` (table: ${e.label ?? e.key}${e.conditions ? `, ${e.conditions.text}` : ''})` : ''} — ${e.spec.description}`;

/** One short Markdown block: stated, model, verdict per statement; exact at the typical point; hand estimate and its error; derivation. */
export function claimHover(r: FileResult, e: ClaimEntry): string {
  const point = pointOf(r, e);
  const out = [claimTitle(e), ''];
  if (!point) return [...out, 'not evaluated: the model cannot be solved at its operating point'].join('\n');
  const model = point.context.model;
  const kind = e.spec.kind;
  for (const bound of ['typ', 'min', 'max'] as const) {
    if (!e[bound]) continue;
    const pos = placeOf(e, bound);
    const row = r.sheet?.rows.find((s) => s.key === e.key && s.line === pos.line && s.column === pos.column && s.stated.replace(/^[≥≤] /, '') === e[bound]!.quantity.written.text && (bound === 'typ' ? !/^[≥≤]/.test(s.stated) : s.stated.startsWith(bound === 'min' ? '≥' : '≤')));
    if (!row) continue;
    const waived = row.waived ? ` (waived: ${row.waived})` : '';
    out.push(`- stated ${row.stated} · model ${row.model}${row.at ? ` at the worst corner ${row.at}` : ''} — **${row.outcome}**${row.outcome === 'holds' ? '' : `, ${row.deviation}`}${waived}`);
  }
  const exact = model.exact[e.key];
  const hand = model.hand[e.key];
  out.push(`- exact at the typical point (${conditionsOf(r, point)}): ${shown(exact, kind)}`);
  if (hand) out.push(`- hand estimate: ${shown(hand, kind)} (error ${handError(hand, exact, exact?.unit ?? 'Hz')})${hand.how ? ` — ${hand.how}` : ''}`);
  if (exact?.how) out.push(`- derivation: ${exact.how}`);
  out.push('', `_${CAUTION}_`);
  return out.join('\n');
}

const conditionsOf = (r: FileResult, p: OperatingPoint): string => r.sheet && p === r.points?.[0] ? r.sheet.point : p.label || (r.sheet?.point ?? '');

/** How much a figure moves, as a designer reads it: degrees, dB and percentage points as differences, the rest relative. */
export function movement(before: number, after: number, kind: Kind): string {
  const d = after - before;
  const sign = (x: number) => (x < 0 ? '\u2212' : '+');
  if (kind === 'angle') return `${sign(d)}${Math.abs(d).toFixed(1)}°`;
  if (kind === 'gain') return `${sign(d)}${Math.abs(d).toFixed(2)} dB`;
  if (kind === 'ratio') return `${sign(d)}${Math.abs(100 * d).toFixed(1)} pp`;
  const rel = before === 0 ? Infinity : d / Math.abs(before);
  return Number.isFinite(rel) ? `${sign(rel)}${Math.abs(100 * rel).toFixed(1)} %` : 'from zero';
}

/** Moves smaller than this (relative, or in the canonical unit for differences) are below what any tolerance resolves. */
const STILL = 1e-6;

export interface Sensitivity {
  claim: ClaimEntry;
  before: number;
  after: number;
  text: string;
}

/** Each claim's figure at its operating point before and after `key` is raised by `factor`; claims that do not move are left out. */
export function sensitivities(r: FileResult, key: string, kind: 'param' | 'condition', factor = 1.1): Sensitivity[] {
  const out: Sensitivity[] = [];
  for (const p of r.points ?? []) {
    // A table row that sets the condition itself does not see the front matter's value.
    if (kind === 'condition' && key in p.overrides) continue;
    const ctx = p.context;
    const base = ctx.model;
    const v = base.values[key];
    if (v === undefined || !Number.isFinite(v) || v === 0) continue;
    const changed = ctx.withChanges({ [key]: v * factor });
    if (!changed) continue;
    const seen = new Set<string>();
    for (const c of p.claims) {
      if (seen.has(c.key)) continue;
      seen.add(c.key);
      const a = base.exact[c.key]?.value;
      const b = changed.exact[c.key]?.value;
      if (a === null || a === undefined || b === null || b === undefined || !Number.isFinite(a) || !Number.isFinite(b)) continue;
      const relative = !(c.spec.kind === 'angle' || c.spec.kind === 'gain' || c.spec.kind === 'ratio');
      const size = relative ? Math.abs(b - a) / Math.max(Math.abs(a), Number.MIN_VALUE) : Math.abs(b - a);
      if (size < STILL) continue;
      out.push({ claim: c, before: a, after: b, text: movement(a, b, c.spec.kind) });
    }
  }
  return out;
}

const claimLabel = (c: ClaimEntry): string => (c.source === 'table' ? `${c.key} (${c.label ?? c.key}${c.conditions ? `, ${c.conditions.text}` : ''})` : c.key);

export function valueHover(r: FileResult, e: ValueEntry, kind: 'param' | 'condition'): string {
  const out = [`**${e.key}** — ${e.spec.description} (${kind})`, ''];
  const v = e.open ? undefined : e.typ.quantity.value;
  const range = e.min || e.max ? ` (range ${e.min ? formatQuantity(e.min.quantity.value, e.spec.kind) : '…'} to ${e.max ? formatQuantity(e.max.quantity.value, e.spec.kind) : '…'})` : '';
  if (v === undefined || !Number.isFinite(v)) {
    out.push(`${e.key} is open: no sensitivity`);
    return out.join('\n');
  }
  if (v === 0) {
    out.push(`${e.key} is 0: +10 % of it changes nothing`);
    return out.join('\n');
  }
  out.push(`${formatQuantity(v, e.spec.kind)}${range}. Raised by 10 % (to ${formatQuantity(v * 1.1, e.spec.kind)}), the model moves:`);
  const moves = sensitivities(r, e.key, kind);
  if (!moves.length) out.push('- no claim of this spec');
  else out.push(`- ${moves.map((m) => `${claimLabel(m.claim)} ${m.text}`).join(', ')}`);
  const moved = new Set(moves.map((m) => m.claim.key));
  const still = [...new Set((r.spec?.claims ?? []).map((c) => c.key))].filter((k) => !moved.has(k));
  if (still.length && moves.length) out.push(`- not: ${still.join(', ')}`);
  out.push('', `_${CAUTION}_`);
  return out.join('\n');
}
