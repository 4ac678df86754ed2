// The fuzz families of the second robustness campaign (issue 17): block
// scalars, cell escapes and entities, encodings without marks and special
// files, long lines, deep lists, large networks and giant tables. Each is a
// document (or a file) built from a seeded generator, with the invariants it
// must keep beyond those of every document (support.ts: findingProblems):
// a restatement either reads back as planned — checked here with js-yaml and
// the table's own source, independently of the reader — or is refused; a
// file in an encoding the reader does not take is reported, never skipped.

import { mkdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { load } from 'js-yaml';
import type { FileResult } from '../../src/check';
import { readSpecFile } from '../../src/cli/discover';
import { applyEdits, planFixes, restatedProblem } from '../../src/fixes/restate';
import { HEAD, TABLE, ladder, twoStage } from './hostile-docs';
import type { Rng } from './support';

export const FAMILIES = ['block-scalar', 'cell-escape', 'encoding', 'long-line', 'deep-list', 'large-network', 'giant-table'] as const;
export type Family = (typeof FAMILIES)[number];
const WEIGHTS: Record<Family, number> = { 'block-scalar': 30, 'cell-escape': 25, encoding: 15, 'long-line': 10, 'deep-list': 8, 'large-network': 6, 'giant-table': 6 };

export function pickFamily(r: Rng): Family {
  let x = r.next() * 100;
  for (const f of FAMILIES) {
    x -= WEIGHTS[f];
    if (x < 0) return f;
  }
  return 'block-scalar';
}

const VALUES: Record<string, string[]> = {
  gbw: ['40 MHz', '23 MHz', '2.3e7 Hz', '0.023 GHz', '21 MHz'],
  p1: ['10 Hz', '100 Hz', '1 kHz'],
  phase_margin: ['60 deg', '45°', '70 deg'],
  dc_gain: ['100 dB', '80 dB', '10000 V/V'],
};

/** One value written in a random YAML source form (at `indent` under its key). */
function yamlForm(r: Rng, key: string, value: string, eol: string): string {
  const form = r.int(0, 9);
  const ind = '  '.repeat(r.int(1, 3));
  switch (form) {
    case 0:
      return `  ${key}: ${value}${eol}`;
    case 1:
      return `  ${key}: '${value}'${eol}`;
    case 2:
      return `  ${key}: "${value.replace(/M/g, '\\x4d')}"${eol}`;
    case 3:
      return `  ${key}: {typ: ${value}}${eol}`;
    case 4: {
      const [num, unit] = value.split(' ');
      return unit ? `  ${key}: ${num}${eol}${ind}${unit}${eol}` : `  ${key}: ${value}${eol}`;
    }
    default: {
      const header = r.pick(['|', '|-', '|+', '>', '>-', '>+', '|2', '>2-', '|1+']);
      const extra = /\d/.test(header) ? ' '.repeat(r.int(0, 2)) : '';
      const indentAt = /\d/.test(header) ? '  ' + ' '.repeat(Number(header.match(/\d/)![0])) : ind;
      const trail = r.chance(0.3) ? eol : '';
      if (form === 9 && value.includes(' ') && header.startsWith('>')) {
        const [num, unit] = value.split(' ');
        return `  ${key}: ${header}${eol}${indentAt}${extra}${num}${eol}${indentAt}${extra}${unit}${eol}${trail}`;
      }
      return `  ${key}: ${header}${eol}${indentAt}${extra}${value}${eol}${trail}`;
    }
  }
}

function cellForm(r: Rng, value: string): { cell: string; unit: string } {
  const [num, unit] = value.split(' ');
  switch (r.int(0, 7)) {
    case 0:
      return { cell: value, unit: '' };
    case 1:
      return { cell: num, unit: unit ?? '' };
    case 2:
      return { cell: `\\+${num}`, unit: unit ?? '' };
    case 3:
      return { cell: `${num}&nbsp;${unit ?? ''}`, unit: '' };
    case 4:
      return { cell: `&#${num.charCodeAt(0)};${num.slice(1)}`, unit: unit ?? '' };
    case 5:
      return { cell: `\`${value}\``, unit: '' };
    case 6:
      return { cell: `*${value}*`, unit: '' };
    default:
      return { cell: `${num}\\${unit ? ` ${unit}` : ''}`, unit: '' };
  }
}

/** Document text of a family (for 'encoding', the text that is then encoded). */
export function familyDocument(r: Rng, family: Family): string {
  const eol = r.chance(0.3) ? '\r\n' : '\n';
  if (family === 'block-scalar') {
    const keys = Object.keys(VALUES).filter(() => r.chance(0.6));
    const claims = (keys.length ? keys : ['gbw']).map((k) => yamlForm(r, k, r.pick(VALUES[k]), eol)).join('');
    const text = twoStage(claims.replace(/\r\n/g, '\n')).replace(/\n/g, eol);
    return r.chance(0.1) ? `\ufeff${text}` : text;
  }
  if (family === 'cell-escape') {
    const rows = Array.from({ length: r.int(1, 4) }, () => {
      const k = r.pick(Object.keys(VALUES));
      const { cell, unit } = cellForm(r, r.pick(VALUES[k]));
      const name = { gbw: 'GBW', p1: 'Dominant pole', phase_margin: 'Phase margin', dc_gain: 'DC gain' }[k];
      return `| ${name} | ${cell} | ${unit} |`;
    });
    return twoStage('  gbw: 23 MHz\n', `\n| Parameter | Typ | Unit |\n|---|---|---|\n${rows.join('\n')}\n`).replace(/\n/g, eol);
  }
  if (family === 'encoding') return twoStage('  gbw: 40 MHz\n');
  if (family === 'long-line') {
    const n = r.int(1000, 200000);
    return `${HEAD}${r.pick([' ', '*', '[', '`', '<', '|', '-', '\\', 'a '])
      .repeat(Math.ceil(n / 2))
      .slice(0, n)}\n${r.chance(0.5) ? '' : '\n'}${TABLE}`;
  }
  if (family === 'deep-list') {
    const n = r.int(100, 4000);
    const body = r.chance(0.5) ? `${r.pick(['- ', '> ', '* ', '1. ']).repeat(n)}x\n` : Array.from({ length: Math.min(n, 800) }, (_, i) => `${' '.repeat(2 * i)}- x`).join('\n');
    return `${HEAD}${body}\n\n${TABLE}`;
  }
  if (family === 'large-network') {
    const n = r.int(11, 70);
    return ladder(n, ['  p1: 10 Hz\n', '  p2: 1 MHz\n', '  gain_margin: {min: 10 dB}\n', '  rhp_zero: 1 GHz\n', '  gbw: 10 MHz\n'].filter(() => r.chance(0.6)).join('') || '  p1: 10 Hz\n', r.int(0, 1) ? r.int(3, 20) : 0);
  }
  const n = r.int(100, 3000);
  const distinct = r.chance(0.3);
  const rows = Array.from({ length: n }, (_, i) => `| GBW | ${r.chance(0.5) ? '40' : '23'} MHz |${distinct ? ` CL = ${(i % 50) + 1} pF |` : ''}`);
  return twoStage('  gbw: 23 MHz\n', `\n| Parameter | Typ |${distinct ? ' Conditions |' : ''}\n|---|---|${distinct ? '---|' : ''}\n${rows.join('\n')}\n`);
}

/** The bytes of an 'encoding' document: the text in UTF-16 or UTF-32, with or without a byte-order mark. */
export function encodedBytes(r: Rng, text: string): { bytes: Buffer; name: string } {
  const le = r.chance(0.5);
  const bom = r.chance(0.5);
  const body = bom ? `\ufeff${text}` : text;
  if (r.chance(0.5)) {
    const b = Buffer.from(body, 'utf16le');
    return { bytes: le ? b : b.swap16(), name: 'UTF-16' };
  }
  const cps = [...body].map((c) => c.codePointAt(0)!);
  const b = Buffer.alloc(cps.length * 4);
  cps.forEach((cp, i) => (le ? b.writeUInt32LE(cp, i * 4) : b.writeUInt32BE(cp, i * 4)));
  return { bytes: b, name: 'UTF-32' };
}

let scratch: string | undefined;

/** An 'encoding' document written to a file and read as the command reads it: it must be reported, never skipped. */
export function encodingProblems(r: Rng, text: string): string[] {
  scratch ??= join(tmpdir(), `polecheck-fuzz-${process.pid}-${Math.random().toString(36).slice(2)}`);
  mkdirSync(scratch, { recursive: true });
  const { bytes, name } = encodedBytes(r, text);
  const file = join(scratch, 'doc.md');
  writeFileSync(file, bytes);
  const read = readSpecFile(file, 5_000_000);
  if (read.kind !== 'done') return [`a spec in ${name} was read as UTF-8 text`];
  if (read.result.skipped) return [`a spec in ${name} was skipped in silence`];
  if (!read.result.findings.some((f) => f.rule === 'encoding' && f.message.includes(name))) return [`a spec in ${name} was not reported as such: ${read.result.findings[0]?.message}`];
  return [];
}

/**
 * The restatement of a checked document, against an oracle that does not use
 * the reader's spans: applied, the edits must either be refused by the
 * read-back guard, or give a front matter that js-yaml reads with the same
 * keys, each restated claim spelling its new text, and a table whose edited
 * cells hold exactly the new text between their pipes.
 */
export function restateProblems(result: FileResult, raw: string): string[] {
  if (!result.spec) return [];
  const bom = raw.charCodeAt(0) === 0xfeff;
  const text = bom ? raw.slice(1) : raw;
  const edits = planFixes(result, text, { bounds: true });
  if (!edits.length) return [];
  const fixed = applyEdits(text, edits, 0);
  if (restatedProblem(text, fixed, edits)) return []; // refused: nothing is written
  const problems: string[] = [];
  const fm = (t: string): unknown => {
    const lines = t.replace(/\r\n?/g, '\n').split('\n');
    const end = lines.indexOf('---', 1);
    try {
      return load(lines.slice(1, end).join('\n'));
    } catch (err) {
      return err;
    }
  };
  const a = fm(text);
  const b = fm(fixed);
  if (b instanceof Error && !(a instanceof Error)) return [`the restated front matter no longer parses: ${b.message.split('\n')[0]}`];
  const claimsA = (a as { claims?: Record<string, unknown> })?.claims ?? {};
  const claimsB = (b as { claims?: Record<string, unknown> })?.claims ?? {};
  if (Object.keys(claimsA).join() !== Object.keys(claimsB).join()) problems.push('the restated front matter has other claim keys');
  let shift = 0;
  for (const e of edits) {
    const at = e.start + shift;
    shift += e.text.length - (e.end - e.start);
    const inFront = fixed.lastIndexOf('\n---', at) < 0;
    if (inFront) {
      const v = claimsB[e.claim];
      const s = typeof v === 'object' && v ? JSON.stringify(v) : String(v);
      if (!s.includes(e.text)) problems.push(`restated \`${e.claim}\` reads ${s.slice(0, 80)}, not \`${e.text}\``);
    } else {
      const lineStart = fixed.lastIndexOf('\n', at) + 1;
      const lineEnd = fixed.indexOf('\n', at);
      const line = fixed.slice(lineStart, lineEnd < 0 ? fixed.length : lineEnd).replace(/\r$/, '');
      const cells = line.split('|').map((c) => c.trim());
      if (!cells.includes(e.text)) problems.push(`restated cell of \`${e.claim}\` is not a cell of its own: ${line.slice(0, 120)}`);
    }
  }
  return problems;
}
