// The reviewer's report: for every block, every claim with the claimed value,
// the exact model's figure, the hand estimate and its error, and the verdict;
// then the poles, zeros and the caveats of the approximations.

import type { FileResult } from '../check';
import { conditionsText } from '../model/evaluation';
import type { Figure } from '../engine/figure';
import { rootHz } from '../engine/roots';
import { inLoop } from '../verdicts/places';
import { formatFigure, formatQuantity } from '../quantity';
import type { ClaimEntry } from '../spec/types';
import type { Paint } from './style';
import { CAUTION } from './summary';
import { claimResults } from '../verdicts/results';

export const claimedText = (c: ClaimEntry | undefined): string => {
  if (!c) return '—';
  const parts: string[] = [];
  if (c.typ) parts.push(c.plain ? c.typ.quantity.written.text : `typ ${c.typ.quantity.written.text}`);
  if (c.min) parts.push(`≥ ${c.min.quantity.written.text}`);
  if (c.max) parts.push(`≤ ${c.max.quantity.written.text}`);
  return parts.join(', ');
};

/** Figures whose hand error reads as a percentage. */
const RELATIVE_UNITS: ReadonlySet<string> = new Set(['Hz', 'V/s', 'F', 'V/√Hz', 'V', 'A', 'W', 'MHz·pF/mA', 's']);

export function handError(hand: Figure | undefined, exact: Figure | undefined, unit: string): string {
  if (!hand || hand.value === null || !exact || exact.value === null) return '—';
  if (RELATIVE_UNITS.has(unit) && exact.value !== 0) return `${((100 * (hand.value - exact.value)) / exact.value).toFixed(1)} %`;
  const d = hand.value - exact.value;
  // A fraction (overshoot): the difference in percentage points.
  if (unit === 'ratio') return `${d >= 0 ? '+' : ''}${(100 * d).toFixed(1)} pp`;
  return `${d >= 0 ? '+' : ''}${d.toFixed(1)}${unit === 'deg' ? '°' : ` ${unit}`}`;
}

function table(rows: string[][], p: Paint): string[] {
  const widths = rows[0].map((_, i) => Math.max(...rows.map((r) => [...r[i]].length)));
  return rows.map((r, ri) => {
    const line = r.map((cell, i) => cell + ' '.repeat(widths[i] - [...cell].length)).join('  ');
    return ri === 0 ? p.bold(line) : line;
  });
}

export function reviewReport(results: FileResult[], p: Paint): string {
  return results.map((r) => reviewSection(r, p)).join('') + reviewClosing(p);
}

/** One file's part of the reviewer report ('' for a page that is not a spec): rendered as soon as the file is checked. */
export function reviewSection(r: FileResult, p: Paint): string {
  const out: string[] = [];
  if (r.skipped) return '';
  if (!r.spec || !r.model) {
    out.push(p.bold(r.path), `  cannot be evaluated: ${r.findings.filter((f) => f.severity === 'error').map((f) => `${f.line}:${f.column} ${f.message}`).join('; ') || 'no model'}`, '');
    return `${out.join('\n')}\n`;
  }
  const { spec, model } = r;
  out.push(p.bold(`${spec.block ?? '(no block id)'} — ${spec.title ?? spec.topology.title}`));
  out.push(`  ${r.path} · ${spec.topology.id} · at ${conditionsText(spec, model.values)}`);
  const ranged = [...spec.params.values(), ...spec.conditions.values()].filter((e) => e.min || e.max);
  if (ranged.length) {
    const span = (e: (typeof ranged)[number]) =>
      `${e.key} ${e.min ? formatQuantity(e.min.quantity.value, e.spec.kind) : '…'} to ${e.max ? formatQuantity(e.max.quantity.value, e.spec.kind) : '…'} (typ ${formatQuantity(e.typ.quantity.value, e.spec.kind)}${e.typIsMidpoint ? ', the midpoint: no typ given' : ''})`;
    out.push(`  ranges: ${ranged.map(span).join('; ')}; bounds are checked at the worst corner`);
  }
  const none = (f: Figure | undefined) => (f?.unbounded ? 'unbounded' : 'none');
  const show = (v: number | null, f: Figure | undefined, kind: Parameters<typeof formatQuantity>[1]) => (v === null ? none(f) : formatFigure(v, kind));
  const verdictText = { holds: p.green('holds'), thin: p.yellow('thin margin'), fails: p.red('fails') };
  const rows: string[][] = [['claim', 'stated in', 'conditions', 'claimed', 'exact model', 'worst corner', 'hand estimate', 'hand error', 'verdict']];
  const results = claimResults(r);
  for (const cs of spec.topology.claims) {
    const mine = results.filter((x) => x.entry.key === cs.key);
    const hand = model.hand[cs.key];
    const handText = hand ? (hand.value === null ? none(hand) : formatFigure(hand.value, cs.kind)) : '—';
    if (!mine.length) {
      const exact = model.exact[cs.key];
      rows.push([cs.key, '', '', '—', exact ? show(exact.value, exact, cs.kind) : '—', '', handText, handError(hand, exact, exact?.unit ?? 'Hz'), p.dim('not claimed')]);
      continue;
    }
    for (const x of mine) {
      const where = x.entry.source === 'table' ? `table: ${x.entry.label}` : 'front matter';
      const conditions = x.point.label || '—';
      const exactText = x.bounds.map((b) => `${b.bound === 'typ' ? '' : b.bound === 'min' ? 'min ' : 'max '}${show(b.value, b.figure, cs.kind)}`).join(', ');
      const corners = x.bounds.filter((b) => b.bound !== 'typ').map((b) => b.corner).join('; ') || '—';
      const typFig = x.point.context.model.exact[cs.key];
      const xh = x.hand;
      rows.push([cs.key, where, conditions, claimedText(x.entry), exactText, corners, xh ? (xh.value === null ? none(xh) : formatFigure(xh.value, cs.kind)) : '—', handError(xh, typFig, typFig?.unit ?? 'Hz'), verdictText[x.verdict]]);
    }
  }
  out.push(...table(rows, p).map((l) => `  ${l}`));
  // Real roots as signed frequencies; a conjugate pair once, as |p| with its Q.
  const roots = (rs: typeof model.analysis.poles) =>
    rs.filter((z) => z.im >= 0).map((z) => {
      const side = z.re > 0 ? '+' : '−';
      if (z.im === 0) return `${side}${formatQuantity(rootHz(z), 'frequency')}`;
      const q = Math.hypot(z.re, z.im) / (2 * Math.abs(z.re));
      return `${side}${formatQuantity(rootHz(z), 'frequency')} complex pair (Q = ${q.toPrecision(2)})`;
    }).join(', ') || 'none';
  out.push(`  poles: ${roots(model.analysis.poles)}`);
  out.push(`  zeros: ${roots(model.analysis.zeros)}   (sign: half-plane of the root)`);
  if (inLoop(spec)) out.push(`  closed loop (β = ${+model.beta.toPrecision(3)}): ${model.loop.stable ? 'stable' : p.red('UNSTABLE')}, poles ${roots(model.loop.closedLoopPoles)}`);
  for (const guide of spec.topology.sizing?.(model.values) ?? []) {
    const kind = (k: string) => spec.topology.params.find((x) => x.key === k)?.kind ?? 'capacitance';
    out.push(`  sizing guide: ${Object.entries(guide.changes).map(([k, v]) => `${k} = ${formatQuantity(v, kind(k))} (document: ${formatQuantity(model.values[k], kind(k))})`).join(', ')} — ${guide.why}`);
  }
  for (const c of model.caveats) out.push(`  ${p.yellow('caveat')} ${c}`);
  const other = r.findings.filter((f) => f.claim === null || !spec.topology.claims.some((c) => c.key === f.claim));
  for (const f of other) out.push(`  ${f.severity} ${f.line}:${f.column} ${f.message} (${f.rule})`);
  if (r.context?.cornersLimited) out.push(`  ${p.yellow('note')} more ranged keys than corners enumerated: each key was taken to its ends one at a time`);
  out.push('');
  return `${out.join('\n')}\n`;
}

/** The lines that close the reviewer report, after the files. */
export function reviewClosing(p: Paint): string {
  return `${[p.dim('Hand estimates: pole splitting and the one-pole GBW; "hand error" is the estimate against the exact model.'), p.dim(CAUTION)].join('\n')}\n`;
}
