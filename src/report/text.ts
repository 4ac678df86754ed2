// The text report: a review sheet per block, claims first. A header line names
// the block, its topology, the operating point and the loop's verdict; every
// claim that fails or holds only thinly is a row of aligned columns (mark,
// claim, stated, model, deviation against its tolerance, place as
// path:line:col), with its restatement and design changes beneath; the claims
// that hold share one line; rules of thumb and input problems follow. One
// tally and the caution close the run.

import type { FileResult } from '../check';
import type { Finding } from '../verdicts/findings';
import type { Sheet, SheetRow } from './sheet';
import type { Paint } from './style';
import { CAUTION, summarize } from './summary';

/** A file's result as the writer receives it: the sheet travels beside the findings. */
export type SheetResult = FileResult & { sheet?: Sheet };

/**
 * Text from a document, safe to print: control characters, bidirectional
 * overrides and zero-width characters become visible escapes, so a file name
 * or a value cannot move the cursor, reorder a line or hide in it.
 */
export function printable(s: string): string {
  return s.replace(/[\u0000-\u0008\u000b-\u001f\u007f-\u009f\u00ad\u061c\u180e\u200b-\u200f\u2028-\u202e\u2060-\u2069\ufeff\ufff9-\ufffb\n]/g, (c) => (c === '\n' ? '\\n' : `\\u{${c.codePointAt(0)!.toString(16)}}`));
}

const pad = (s: string, n: number): string => s + ' '.repeat(Math.max(0, n - [...s].length));

export interface TextOptions {
  errorsOnly?: boolean;
  /** --warnings-allowed: the tally says when the warnings are more than this. */
  warningsAllowed?: number;
}

export function textReport(results: SheetResult[], p: Paint, opts: TextOptions = {}): string {
  const lines: string[] = [];
  let blocks = 0;
  let claims = 0;
  let failing = 0;
  let thin = 0;
  for (const r of results) {
    if (r.skipped) continue;
    const path = printable(r.path);
    const place = (line: number, column: number) => `${path}:${line}:${column}`;
    const sheet = r.sheet;
    const inSheet = new Set<string>();
    const out: string[] = [];
    if (sheet) {
      blocks++;
      claims += sheet.rows.length;
      const loop = sheet.stability === undefined ? '' : sheet.stability === 'stable' ? ' · loop stable' : sheet.stability === 'unstable' ? ` · ${p.red('loop UNSTABLE')}` : ` · ${p.yellow('loop stability unknown')}`;
      out.push(`${p.bold(printable(sheet.block))}${sheet.title ? ` — ${printable(sheet.title)}` : ''} · ${sheet.topology}${sheet.point ? ` · ${printable(sheet.point)}` : ''}${loop}`);
      out.push(`  ${p.dim(path)}`);
      // The findings of each row, by its place: a sheet of many rows is written in linear time.
      const byRow = new Map<string, Finding[]>();
      for (const f of r.findings) {
        if (!f.verdict) continue;
        const k = `${f.claim}:${f.line}:${f.column}`;
        const list = byRow.get(k);
        if (list) list.push(f);
        else byRow.set(k, [f]);
      }
      const shown = sheet.rows.filter((row) => row.outcome !== 'holds' && (!opts.errorsOnly || (row.outcome === 'fails' && !row.waived)));
      const name = (row: SheetRow) => (row.where ? `${printable(row.key)} (${printable(row.where)})` : printable(row.key));
      // A long table-row name does not widen the whole block: it stands on its
      // own line and its figures follow beneath, in the block's columns.
      const KEY_WIDTH = 28;
      const w = {
        key: Math.max(0, ...shown.map((row) => [...name(row)].length).filter((n) => n <= KEY_WIDTH)),
        stated: Math.max(0, ...shown.map((row) => [...row.stated].length)),
        model: Math.max(0, ...shown.map((row) => [...row.model].length)),
        dev: Math.max(0, ...shown.map((row) => [...row.deviation].length)),
      };
      for (const row of sheet.rows) {
        if (row.outcome === 'fails') failing++;
        if (row.outcome === 'thin') thin++;
      }
      for (const row of shown) {
        const mark = row.waived ? p.dim('waived') : row.outcome === 'fails' ? p.red('fails ') : p.yellow('thin  ');
        const figures = `stated ${pad(printable(row.stated), w.stated)}  model ${pad(row.model, w.model)}  ${pad(row.deviation, w.dev)}  ${p.dim(place(row.line, row.column))}`;
        if ([...name(row)].length > KEY_WIDTH) out.push(`  ${mark} ${name(row)}`, `           ${pad('', w.key)}${figures}`);
        else out.push(`  ${mark} ${pad(name(row), w.key)}  ${figures}`);
        if (row.at) out.push(`         ${p.dim(`worst at ${printable(row.at)}`)}`);
        if (row.waived) out.push(`         ${p.dim(`accepted: ${printable(row.waived)}`)}`);
        for (const f of byRow.get(`${row.key}:${row.line}:${row.column}`) ?? []) {
          inSheet.add(key(f));
          for (const s of f.suggestions) out.push(`         ${p.dim('↳')} ${printable(s)}`);
        }
      }
      const rowPlaces = new Set(sheet.rows.map((row) => `${row.key}:${row.line}:${row.column}`));
      for (const f of r.findings) if (f.verdict && rowPlaces.has(`${f.claim}:${f.line}:${f.column}`)) inSheet.add(key(f));
      const holding = sheet.rows.filter((row) => row.outcome === 'holds');
      if (holding.length && !opts.errorsOnly) {
        // One line, wrapped at about 100 columns under its own indent.
        // A bound that holds shows the bound beside the figure (`overshoot 19% (≤ 25%)`), so a row's typical value and its bound are told apart.
        // A row stated as typical and bounded (Typ 19, Max 25) is one item.
        const byRow = new Map<string, string>();
        for (const row of holding) {
          const at = `${name(row)}\u0000${row.model}\u0000${row.line}`;
          const bound = /^[≥≤]/.test(row.stated) ? ` (${printable(row.stated)})` : '';
          byRow.set(at, (byRow.get(at) ?? `${name(row)} ${printable(row.model)}`) + bound);
        }
        const items = [...byRow.values()];
        let current = '';
        const wrapped: string[] = [];
        for (const item of items) {
          if (current && [...current].length + item.length > 90) {
            wrapped.push(`${current},`);
            current = item;
          } else current = current ? `${current}, ${item}` : item;
        }
        wrapped.push(current);
        wrapped.forEach((l, i) => out.push(i === 0 ? `  ${p.green('holds')}  ${l}` : `         ${l}`));
      }
    }
    // Rules of thumb and input problems: everything not a row of the sheet.
    for (const f of r.findings) {
      if (inSheet.has(key(f))) continue;
      if (opts.errorsOnly && (f.severity !== 'error' || f.waived)) continue;
      const tag = f.waived ? p.dim('waived ') : f.severity === 'error' ? p.red('error  ') : f.severity === 'warning' ? p.yellow('warning') : p.blue('note   ');
      out.push(`  ${tag} ${f.rule}: ${printable(f.message)}  ${p.dim(place(f.line, f.column))}`);
      if (f.waived) out.push(`          ${p.dim(`accepted at line ${f.waived.line}${f.waived.expires ? ` until ${f.waived.expires}` : ''}: ${printable(f.waived.reason)}`)}`);
      for (const s of f.suggestions) out.push(`          ${p.dim('↳')} ${printable(s)}`);
      for (const rel of f.related ?? []) out.push(`          ${p.dim(place(rel.line, rel.column))} ${printable(rel.message)}`);
    }
    if (!sheet && out.length) out.unshift(p.bold(path));
    // With errors only, a block with nothing to show is not listed at all.
    const body = sheet ? out.length - 2 : out.length;
    if (out.length && !(opts.errorsOnly && body === 0)) lines.push(...out, '');
  }
  const s = summarize(results);
  const n = (k: number, one: string, many = `${one}s`) => `${k} ${k === 1 ? one : many}`;
  const others = s.errors - failing;
  const overLimit = opts.warningsAllowed !== undefined && s.warnings > opts.warningsAllowed;
  // The limit counts every warning, thin claims included.
  const limit = overLimit ? ` (${s.warnings} in all, more than the ${opts.warningsAllowed} allowed)` : '';
  const tally = `${n(blocks, 'block')}, ${n(claims, 'claim')}: ${failing} fail, ${thin} thin; ${n(s.warnings - thin, 'warning')}${limit}${others > 0 ? `, ${n(others, 'other error')}` : ''}${s.waived ? `, ${s.waived} waived` : ''}`;
  lines.push(s.errors || overLimit ? p.red(tally) : s.warnings ? p.yellow(tally) : p.green(tally));
  if (s.files > 0) lines.push(p.dim(CAUTION));
  return `${lines.join('\n')}\n`;
}

const key = (f: Finding): string => `${f.rule}:${f.line}:${f.column}:${f.verdict?.bound ?? ''}`;
