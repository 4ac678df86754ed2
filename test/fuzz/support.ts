// Shared by the fuzz suites (test/fuzz/*.test.ts) and the long fuzz run
// (bench/fuzz.mjs): the demo specs, mutations of a document, random specs of
// every topology, and the checks that a run's output is well formed.
//
// Everything random is driven by an explicit generator so that a seed
// reproduces a document exactly.

import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { FileResult } from '../../src/check';
import { jsonReport } from '../../src/report/json';
import { reviewReport } from '../../src/report/review';
import { paint } from '../../src/report/style';
import { textReport } from '../../src/report/text';
import { TOPOLOGIES } from '../../src/topologies';
import type { KeySpec, Topology } from '../../src/topologies/types';

export const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const SPEC_DIR = join(ROOT, 'specs', 'strand');

/** The demo specs, by file name. */
export const DEMO_SPECS: ReadonlyArray<{ name: string; text: string }> = readdirSync(SPEC_DIR)
  .filter((f) => f.endsWith('.md'))
  .sort()
  .map((name) => ({ name, text: readFileSync(join(SPEC_DIR, name), 'utf8') }));

// ---------------------------------------------------------------------------
// A small seeded generator (mulberry32): the same seed, the same document.

export interface Rng {
  /** Uniform in [0, 1). */
  next(): number;
  int(lo: number, hi: number): number;
  pick<T>(xs: readonly T[]): T;
  chance(p: number): boolean;
}

export function rng(seed: number): Rng {
  let a = seed >>> 0;
  const next = (): number => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  return {
    next,
    int: (lo, hi) => lo + Math.floor(next() * (hi - lo + 1)),
    pick: (xs) => xs[Math.floor(next() * xs.length)],
    chance: (p) => next() < p,
  };
}

// ---------------------------------------------------------------------------
// Mutations. Each is plain data, so that fast-check can generate and shrink
// them and a failing case prints as a list a person can read.

export type Mutation =
  | { op: 'flip'; at: number; bit: number }
  | { op: 'delete-line'; line: number }
  | { op: 'duplicate-line'; line: number }
  | { op: 'swap-lines'; a: number; b: number }
  | { op: 'insert'; at: number; text: string }
  | { op: 'delete-span'; at: number; length: number }
  | { op: 'unit-swap'; nth: number; unit: string }
  | { op: 'number'; nth: number; text: string }
  | { op: 'line-ends'; style: 'crlf' | 'cr' | 'mixed' }
  | { op: 'bom' }
  | { op: 'truncate'; at: number };

/** YAML and Markdown punctuation, and fragments that steer into the interesting paths of the readers. */
export const PUNCTUATION: readonly string[] = [
  ':', ': ', '-', '- ', '---', '---\n', '...', '|', '| ', '|---|', '>', '>-', '#', '# ', '&a ', '*a', '!', '!!str ', '!foo ', '%', '@', '`',
  '"', "'", '{', '}', '[', ']', ',', '?', '? ', '\t', '  ', '\n', '\r\n', '\r', '\\', '\u00a0', '\uFEFF', '\0', '\u2028', '\u200b',
  '<<: ', '~', 'null', 'true', '.inf', '.nan', '0x1F', '1e400', '-0', '__proto__: ', 'constructor', 'µ', 'Ω', '±15%', '+/-', '°', '%',
  '\n| Parameter | Min | Typ | Max | Unit | Conditions |\n|---|---|---|---|---|---|\n| GBW | | 23 | | MHz | CL = 10 pF |\n',
  '\n| Parameter | Typ |\n|---|---|\n| Phase margin | 60° |\n',
  '\n  - {rule: phase-margin, reason: x}\n',
];

/** Units, right and wrong, for unit swaps. */
export const UNITS_POOL: readonly string[] = [
  'S', 'mS', 'µS', 'uS', 'μS', 'nS', 'A/V', 'Ω', 'Ω', 'kΩ', 'MΩ', 'ohm', 'megohm', 'F', 'pF', 'fF', 'nF', 'µF', 'Hz', 'kHz', 'MHz', 'GHz', 'mHz',
  'rad/s', 'Mrad/s', 'dB', 'V/V', 'deg', '°', 'V/µs', 'V/us', 'V/s', 'A', 'µA', 'mA', 'V', 's', 'ns', '%', '', 'kg', 'm/s', 'Mhz', 'MOhm',
  'µ', 'k', 'S S', '/', 'V / µs',
];

/** Replacement numbers, ordinary and not. */
export const NUMBER_POOL: readonly string[] = [
  '0', '-0', '1', '-1', '0.5', '1e-18', '1e18', '1e400', '1e-400', '1e308', '5e-324', '123456789012345678901234567890', '0.000000000001',
  '.5', '5.', '1.2.3', '1e', '1e+', '−3', '+7', '0x1F', '0o17', 'NaN', '.inf', '1,5', '1_000', '١٢٣', '２３', '9'.repeat(400),
];

const NUMBER_RE = /[+\-\u2212]?(?:\d+\.?\d*|\.\d+)(?:[eE][+\-\u2212]?\d+)?/g;
/** A unit right after a number (what a unit swap replaces). */
const UNIT_RE = /(?<=\d ?)(?:[a-zA-Zµμ°ΩΩ%]+(?:\/[a-zA-Zµμ]+)?)/g;

function nthMatch(text: string, re: RegExp, nth: number): { index: number; length: number } | undefined {
  const all = [...text.matchAll(re)];
  if (all.length === 0) return undefined;
  const m = all[nth % all.length];
  return { index: m.index!, length: m[0].length };
}

function lineSpans(text: string): Array<[number, number]> {
  const spans: Array<[number, number]> = [];
  let start = 0;
  for (let i = 0; i < text.length; i++) {
    if (text[i] === '\n') {
      spans.push([start, i + 1]);
      start = i + 1;
    }
  }
  if (start < text.length) spans.push([start, text.length]);
  return spans;
}

export function applyMutation(text: string, m: Mutation): string {
  const n = text.length;
  switch (m.op) {
    case 'flip': {
      if (n === 0) return text;
      // Flip a bit of one UTF-16 code unit: lone surrogates and control characters included.
      const at = m.at % n;
      return text.slice(0, at) + String.fromCharCode(text.charCodeAt(at) ^ (1 << (m.bit % 16))) + text.slice(at + 1);
    }
    case 'delete-line':
    case 'duplicate-line': {
      const spans = lineSpans(text);
      if (!spans.length) return text;
      const [s, e] = spans[m.line % spans.length];
      return m.op === 'delete-line' ? text.slice(0, s) + text.slice(e) : text.slice(0, e) + text.slice(s, e) + text.slice(e);
    }
    case 'swap-lines': {
      const lines = text.split('\n');
      const a = m.a % lines.length;
      const b = m.b % lines.length;
      [lines[a], lines[b]] = [lines[b], lines[a]];
      return lines.join('\n');
    }
    case 'insert': {
      const at = n === 0 ? 0 : m.at % (n + 1);
      return text.slice(0, at) + m.text + text.slice(at);
    }
    case 'delete-span': {
      if (n === 0) return text;
      const at = m.at % n;
      return text.slice(0, at) + text.slice(at + (m.length % 40) + 1);
    }
    case 'unit-swap': {
      const hit = nthMatch(text, UNIT_RE, m.nth);
      return hit ? text.slice(0, hit.index) + m.unit + text.slice(hit.index + hit.length) : text;
    }
    case 'number': {
      const hit = nthMatch(text, NUMBER_RE, m.nth);
      return hit ? text.slice(0, hit.index) + m.text + text.slice(hit.index + hit.length) : text;
    }
    case 'line-ends': {
      if (m.style === 'crlf') return text.replace(/\r?\n/g, '\r\n');
      if (m.style === 'cr') return text.replace(/\r?\n/g, '\r');
      let i = 0;
      return text.replace(/\n/g, () => ['\n', '\r\n', '\r'][i++ % 3]);
    }
    case 'bom':
      return text.startsWith('\uFEFF') ? text.slice(1) : `\uFEFF${text}`;
    case 'truncate':
      return n === 0 ? text : text.slice(0, m.at % n);
  }
}

export function randomMutation(r: Rng): Mutation {
  const big = () => r.int(0, 1 << 20);
  switch (r.int(0, 10)) {
    case 0:
      return { op: 'flip', at: big(), bit: r.int(0, 15) };
    case 1:
      return { op: 'delete-line', line: big() };
    case 2:
      return { op: 'duplicate-line', line: big() };
    case 3:
      return { op: 'swap-lines', a: big(), b: big() };
    case 4:
    case 5:
      return { op: 'insert', at: big(), text: r.pick(PUNCTUATION) };
    case 6:
      return { op: 'delete-span', at: big(), length: r.int(0, 39) };
    case 7:
      return { op: 'unit-swap', nth: big(), unit: r.pick(UNITS_POOL) };
    case 8:
      return { op: 'number', nth: big(), text: r.pick(NUMBER_POOL) };
    case 9:
      return r.chance(0.5) ? { op: 'line-ends', style: r.pick(['crlf', 'cr', 'mixed'] as const) } : { op: 'bom' };
    default:
      return { op: 'truncate', at: big() };
  }
}

// ---------------------------------------------------------------------------
// Random specs of every topology, values anywhere in 1e-18…1e18 (or near the
// plausible range), claims of every kind, tables with conditions.

const SI_UNIT: Record<string, string> = { conductance: 'S', resistance: 'Ω', capacitance: 'F', current: 'A', voltage: 'V', time: 's', frequency: 'Hz', slew: 'V/s', gain: 'dB', angle: 'deg', ratio: '', temperature: 'K', noise: 'V/√Hz', power: 'W', fom: 'MHz·pF/mA' };

/** Log-uniform magnitude in [10^lo, 10^hi], written with 4 significant digits. */
function logValue(r: Rng, lo: number, hi: number): string {
  return (10 ** (lo + (hi - lo) * r.next())).toPrecision(r.int(1, 4));
}

function valueFor(r: Rng, spec: KeySpec, wide: boolean): string {
  if (spec.kind === 'ratio') return r.chance(0.1) ? logValue(r, -18, 0) : (r.next() * 0.999 + 0.001).toPrecision(3);
  // Keys without a plausible range (the load) get an everyday one.
  const fallback: Record<string, [number, number]> = { resistance: [1e2, 1e8], capacitance: [1e-15, 1e-10], current: [1e-9, 1e-2], conductance: [1e-7, 1] };
  const [lo, hi] = spec.plausible ?? fallback[spec.kind] ?? [1e-15, 1e9];
  const v = wide ? logValue(r, -18, 18) : logValue(r, Math.log10(lo), Math.log10(hi));
  const unit = SI_UNIT[spec.kind];
  if (spec.allowZero && r.chance(0.1)) return '0';
  const text = `${v} ${unit}`;
  // Sometimes a range or a tolerance.
  if (r.chance(0.1)) return `${text} ±${r.int(1, 50)}%`;
  if (r.chance(0.05)) return `{min: ${v} ${unit}, max: ${(Number(v) * 2).toPrecision(3)} ${unit}}`;
  return text;
}

function claimFor(r: Rng, key: string, kind: string): string {
  const q = (): string => {
    switch (kind) {
      case 'gain':
        return `${(r.next() * 160 - 20).toFixed(1)} dB`;
      case 'angle':
        return `${(r.next() * 120).toFixed(0)} deg`;
      case 'slew':
        return `${logValue(r, -2, 4)} V/µs`;
      case 'capacitance':
        return `${logValue(r, -2, 3)} pF`;
      default:
        return `${logValue(r, 0, 11)} Hz`;
    }
  };
  const form = r.int(0, 3);
  if (form === 0) return `  ${key}: {min: ${q()}}`;
  if (form === 1) return `  ${key}: {max: ${q()}}`;
  return `  ${key}: ${q()}`;
}

const TABLE_NAMES: Record<string, string> = { gbw: 'GBW', p1: 'Dominant pole', p2: 'Second pole', dc_gain: 'DC gain', phase_margin: 'Phase margin', slew_rate: 'Slew rate', bandwidth: 'Bandwidth', rhp_zero: 'RHP zero', gain_margin: 'Gain margin', input_capacitance: 'Input capacitance' };

/** A random network for `topology: network`: a chain of gm-R-C stages, with random extra elements. */
function randomNetwork(r: Rng, wide: boolean): string[] {
  const stages = r.int(1, 4);
  const nodes = ['in', ...Array.from({ length: stages - 1 }, (_, i) => `n${i + 1}`), 'out'];
  const val = (kind: 'conductance' | 'resistance' | 'capacitance') => {
    const ranges = { conductance: [-6, -2], resistance: [3, 7], capacitance: [-15, -11] } as const;
    const [lo, hi] = wide ? [-18, 18] : ranges[kind];
    return `${logValue(r, lo, hi)} ${SI_UNIT[kind]}`;
  };
  const els: string[] = [];
  for (let i = 1; i < nodes.length; i++) {
    const from = nodes[i - 1];
    const to = nodes[i];
    els.push(`    gm${i}: {kind: transconductance, into: 0, from: ${to}, control: [${from}, 0], value: ${val('conductance')}}`);
    els.push(`    r${i}: {kind: resistor, between: [${to}, 0], value: ${val('resistance')}}`);
    if (!r.chance(0.1)) els.push(`    c${i}: {kind: capacitor, between: [${to}, 0], value: ${val('capacitance')}}`);
  }
  const extra = r.int(0, 3);
  for (let k = 0; k < extra; k++) {
    const a = r.pick(nodes);
    const b = r.pick([...nodes, '0']);
    if (a === b) continue;
    const kind = r.pick(['resistor', 'capacitor', 'transconductance'] as const);
    if (kind === 'transconductance') els.push(`    x${k}: {kind: transconductance, into: ${b}, from: ${a}, control: [${r.pick(nodes)}, 0], value: ${val('conductance')}}`);
    else els.push(`    x${k}: {kind: ${kind}, between: [${a}, ${b}], value: ${val(kind === 'resistor' ? 'resistance' : 'capacitance')}}`);
  }
  return ['network:', '  input: in', '  output: out', `  nodes: [${nodes.join(', ')}]`, '  elements:', ...els];
}

/** A random spec of `topology` (or of a random topology), wide or plausible values. */
export function randomSpec(r: Rng, opts: { topology?: string; wide?: boolean } = {}): string {
  const ids = [...TOPOLOGIES.map((t) => t.id), 'network'];
  const id = opts.topology ?? r.pick(ids);
  const wide = opts.wide ?? r.chance(0.3);
  const topology: Topology | undefined = TOPOLOGIES.find((t) => t.id === id);
  const lines = ['---', 'polecheck: 1', `block: fuzz-${r.int(0, 1e6)}`, `topology: ${id}`];
  let claimSpecs: Array<{ key: string; kind: string }>;
  let conditions: KeySpec[];
  if (topology) {
    lines.push('params:');
    for (const p of topology.params) if (p.required || r.chance(0.5)) lines.push(`  ${p.key}: ${valueFor(r, p, wide)}`);
    claimSpecs = topology.claims;
    conditions = topology.conditions;
  } else {
    lines.push(...randomNetwork(r, wide));
    claimSpecs = TOPOLOGIES[0].claims.filter((c) => c.key !== 'slew_rate');
    conditions = TOPOLOGIES[0].conditions;
  }
  const cond = conditions.filter(() => r.chance(0.6));
  if (cond.length) {
    lines.push('conditions:');
    for (const c of cond) lines.push(`  ${c.key}: ${c.open && r.chance(0.3) ? 'open' : valueFor(r, c, wide)}`);
  }
  const claims = claimSpecs.filter(() => r.chance(0.6));
  if (claims.length) {
    lines.push('claims:');
    for (const c of claims) lines.push(claimFor(r, c.key, c.kind));
  }
  lines.push('---', '', `# Fuzz block ${id}`, '');
  if (r.chance(0.4)) {
    lines.push('| Parameter | Symbol | Min | Typ | Max | Unit | Conditions |', '|---|---|---|---|---|---|---|');
    for (const c of claimSpecs.filter(() => r.chance(0.4))) {
      const written = claimFor(r, c.key, c.kind).split(': ').slice(1).join(': ');
      const typ = written.startsWith('{') ? '' : written;
      const cl = r.chance(0.5) ? `CL = ${logValue(r, -1, 2)} pF` : r.chance(0.5) ? `β = ${(r.next() * 0.9 + 0.1).toFixed(2)}` : '';
      lines.push(`| ${TABLE_NAMES[c.key] ?? c.key} | | | ${typ} | | | ${cl} |`);
    }
    lines.push('');
  }
  return lines.join('\n');
}

/** Random bytes-as-text: the garbage end of the mix. */
export function randomGarbage(r: Rng): string {
  const len = r.int(0, 400);
  const head = r.chance(0.7) ? '---\npolecheck: 1\n' : '';
  let s = head;
  for (let i = 0; i < len; i++) {
    const k = r.int(0, 9);
    if (k < 5) s += r.pick(PUNCTUATION);
    else if (k < 7) s += String.fromCharCode(r.int(0, 0xffff));
    else if (k < 8) s += r.pick(UNITS_POOL);
    else s += r.pick(NUMBER_POOL);
  }
  return r.chance(0.5) ? `${s}\n---\n` : s;
}

// ---------------------------------------------------------------------------
// Well-formed output.

export const SEVERITIES = ['error', 'warning', 'note'] as const;
const BAD_TEXT = /NaN|undefined|\[object Object\]/;
/** In reports: a non-finite number printed as text. */
const BAD_REPORT = /NaN|Infinity|undefined|\[object Object\]/;

/**
 * The first bad token in `s`, or undefined. Messages and reports quote the
 * input: a token the input itself contains is not counted when it stands
 * inside backticks or inside a word (the run of non-space characters around
 * it, quotes, punctuation and a clipping ellipsis trimmed) that the input
 * contains — it is the input's own text, not a figure gone wrong.
 */
export function badToken(s: string, input: string, re: RegExp = BAD_TEXT): string | undefined {
  for (const m of s.matchAll(new RegExp(re.source, 'g'))) {
    const i = m.index!;
    if (input.includes(m[0])) {
      const quoted = (s.slice(0, i).match(/`/g)?.length ?? 0) % 2 === 1;
      let a = i;
      let b = i + m[0].length;
      while (a > 0 && !/\s/.test(s[a - 1])) a--;
      while (b < s.length && !/\s/.test(s[b])) b++;
      const word = s.slice(a, b).replace(/^[`'"(\[{]+|[`'"),.;:\]}…]+$/g, '');
      if (quoted || input.includes(word)) continue;
    }
    return m[0];
  }
  return undefined;
}

/** Every string in a JSON value. */
function strings(v: unknown, out: string[] = []): string[] {
  if (typeof v === 'string') out.push(v);
  else if (Array.isArray(v)) for (const x of v) strings(x, out);
  else if (v && typeof v === 'object') for (const x of Object.values(v)) strings(x, out);
  return out;
}

/** Lines as the readers count them: CR, LF and CRLF each end one. BOM excluded. */
export function lineLengths(text: string): number[] {
  const t = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  return t.split(/\r\n|\r|\n/).map((l) => l.length);
}

/** Every problem with a result's findings; empty when it is well formed. */
export function findingProblems(result: FileResult, text: string): string[] {
  const problems: string[] = [];
  const lines = lineLengths(text);
  if (typeof result.skipped !== 'boolean') problems.push('skipped is not a boolean');
  if (!Array.isArray(result.findings)) return [...problems, 'findings is not an array'];
  if (result.skipped && result.findings.length) problems.push('a skipped file has findings');
  result.findings.forEach((f, i) => {
    const at = `finding ${i} (${f.rule} ${f.line}:${f.column})`;
    if (typeof f.rule !== 'string' || f.rule === '') problems.push(`${at}: rule is not a non-empty string`);
    if (!(SEVERITIES as readonly string[]).includes(f.severity)) problems.push(`${at}: severity ${String(f.severity)}`);
    if (!Number.isInteger(f.line) || f.line < 1 || f.line > lines.length + 1) problems.push(`${at}: line ${f.line} outside 1…${lines.length + 1}`);
    if (!Number.isInteger(f.column) || f.column < 1) problems.push(`${at}: column ${f.column} < 1`);
    else if (Number.isInteger(f.line) && f.line >= 1 && f.line <= lines.length && f.column > lines[f.line - 1] + 1) problems.push(`${at}: column ${f.column} past the end of line ${f.line} (length ${lines[f.line - 1]})`);
    if (typeof f.message !== 'string' || f.message.trim() === '') problems.push(`${at}: empty message`);
    else if (badToken(f.message, text)) problems.push(`${at}: message shows ${badToken(f.message, text)}: ${f.message.slice(0, 200)}`);
    if (!Array.isArray(f.suggestions) || !f.suggestions.every((s) => typeof s === 'string' && s !== '')) problems.push(`${at}: suggestions are not strings`);
    else for (const s of f.suggestions) if (badToken(s, text)) problems.push(`${at}: suggestion shows ${badToken(s, text)}: ${s.slice(0, 200)}`);
    if (f.claim !== null && typeof f.claim !== 'string') problems.push(`${at}: claim is neither null nor a string`);
    const nums: Array<[string, unknown]> = [['computed', f.computed], ['claimed.typ', f.claimed?.typ], ['claimed.min', f.claimed?.min], ['claimed.max', f.claimed?.max]];
    for (const [k, v] of nums) if (v !== undefined && v !== null && !(typeof v === 'number' && Number.isFinite(v))) problems.push(`${at}: ${k} is ${String(v)}`);
    for (const rel of f.related ?? []) {
      if (!Number.isInteger(rel.line) || rel.line < 1 || rel.line > lines.length + 1 || !Number.isInteger(rel.column) || rel.column < 1) problems.push(`${at}: related place ${rel.line}:${rel.column}`);
      if (typeof rel.message !== 'string' || badToken(rel.message, text)) problems.push(`${at}: related message ${String(rel.message).slice(0, 200)}`);
    }
    for (const n of f.derivation?.notes ?? []) if (badToken(n, text)) problems.push(`${at}: derivation note shows ${badToken(n, text)}: ${n.slice(0, 200)}`);
    if (f.derivation && badToken(f.derivation.how, text)) problems.push(`${at}: derivation shows ${badToken(f.derivation.how, text)}: ${f.derivation.how.slice(0, 200)}`);
  });
  return problems;
}

/** Problems in the text, JSON and reviewer reports of a result (which must render). */
export function reportProblems(result: FileResult, input: string): string[] {
  const problems: string[] = [];
  const p = paint(false);
  const outputs: Array<[string, () => string]> = [
    ['text', () => textReport([result], p)],
    ['json', () => jsonReport([result])],
    ['review', () => reviewReport([result], p)],
  ];
  for (const [name, render] of outputs) {
    let out: string;
    try {
      out = render();
    } catch (err) {
      problems.push(`${name} report throws: ${(err as Error).stack ?? String(err)}`);
      continue;
    }
    // The JSON report's strings as they are (not escaped); the other reports line by line.
    const pieces = name === 'json' ? strings(JSON.parse(out)) : out.split('\n');
    for (const line of pieces) {
      const bad = badToken(line, input, BAD_REPORT);
      if (bad) {
        problems.push(`${name} report shows ${bad}: ${line.trim().slice(0, 200)}`);
        break;
      }
    }
  }
  return problems;
}
