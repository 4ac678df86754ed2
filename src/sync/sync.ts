// `polecheck sync SPEC --raw FILE`: the values of design quantities, params
// and conditions that say where they come from (`gm1: {from: "@m1[gm]"}`,
// `c1: {from: "@m6[cgs] + @m2[cgd]"}`) taken from an ngspice operating point.
// The `from` text is an expression over the raw file's vectors, read by the
// same whitelist evaluator as the spec's own expressions, its dimension
// checked against the key's. The edits replace the `typ:` value's text (or
// insert `typ:` before `from:`), nothing else; they are written atomically
// (src/cli/write.ts), or shown as a diff with `--preview`. Any error leaves
// the file as it was.

import { readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { writeAtomically } from '../cli/write';
import { type Kind, detectKind, formatQuantity } from '../quantity';
import { formatDims } from '../spec/design';
import { type Dims, KIND_DIMS, compile, describeDims, kindOfDims } from '../spec/expressions';
import { LineIndex, type Pos } from '../spec/position';
import { type YEntry, type YMap, type YNode, parseYaml } from '../spec/yaml';
import { TOPOLOGIES } from '../topologies';
import { type RawPlot, RawFileError, readRaw } from './raw';

export interface SyncProblem {
  line: number;
  column: number;
  message: string;
}

export interface SyncChange {
  key: string;
  section: 'design' | 'params' | 'conditions';
  from: string;
  before: string | null;
  after: string;
  value: number;
  line: number;
}

export interface SyncPlan {
  text: string;
  fixed: string;
  changes: SyncChange[];
  problems: SyncProblem[];
}

/** ngspice's vector types → dimensions (exponents of A, V, s). */
const TYPE_DIMS: Record<string, { dims: Dims; hz?: boolean }> = {
  voltage: { dims: KIND_DIMS.voltage! },
  current: { dims: KIND_DIMS.current! },
  admittance: { dims: KIND_DIMS.conductance! },
  impedance: { dims: KIND_DIMS.resistance! },
  capacitance: { dims: KIND_DIMS.capacitance! },
  time: { dims: KIND_DIMS.time! },
  frequency: { dims: KIND_DIMS.frequency!, hz: true },
  power: { dims: KIND_DIMS.power! },
  notype: { dims: [0, 0, 0] },
};

const TOP = ['design', 'params', 'conditions'] as const;

/**
 * The vector references of a `from` text, replaced by plain names the
 * expression reader accepts: `@m1[gm]`, `v(out)`, `i(vdd)`, `@m5[id]`. One
 * linear scan.
 */
export function vectorRefs(text: string): { expr: string; refs: string[] } | { error: string; offset: number } {
  let expr = '';
  const refs: string[] = [];
  const name = (ref: string) => {
    let k = refs.indexOf(ref);
    if (k < 0) k = refs.push(ref) - 1;
    return `vec_${k}`;
  };
  for (let i = 0; i < text.length; ) {
    const ch = text[i];
    if (ch === '@') {
      const close = text.indexOf(']', i);
      const open = text.indexOf('[', i);
      if (open < 0 || close < open || !/^@[A-Za-z0-9_.:#]+\[[A-Za-z0-9_]+\]$/.test(text.slice(i, close + 1))) return { error: 'a device parameter is written `@device[param]`, e.g. `@m1[gm]`', offset: i };
      expr += name(text.slice(i, close + 1).toLowerCase());
      i = close + 1;
      continue;
    }
    if ((ch === 'v' || ch === 'i' || ch === 'V' || ch === 'I') && text[i + 1] === '(' && !/[A-Za-z0-9_]/.test(text[i - 1] ?? ' ')) {
      const close = text.indexOf(')', i);
      if (close < 0) return { error: 'an unclosed `(`', offset: i + 1 };
      expr += name(text.slice(i, close + 1).toLowerCase().replace(/\s+/g, ''));
      i = close + 1;
      continue;
    }
    expr += ch;
    i++;
  }
  return { expr, refs };
}

/** The operating-point plot of a raw file, or why there is none. */
export function operatingPoint(plots: RawPlot[]): RawPlot | string {
  const op = plots.find((p) => /operating point/i.test(p.plotname));
  if (!op) return `the raw file holds no operating point (its plots: ${plots.map((p) => p.plotname || 'unnamed').join(', ')}); run an \`.op\` analysis`;
  if (op.points !== 1) return `the operating-point plot has ${op.points} points; expected one`;
  return op;
}

function frontMatter(text: string): { root: YMap; index: LineIndex } | string {
  if (!text.startsWith('---')) return 'the file has no front matter';
  const nl = text.indexOf('\n');
  const fence = /\n---[ \t]*(?:\r?\n|$)/.exec(text.slice(nl));
  if (nl < 0 || !fence) return 'the front matter has no closing `---` fence';
  const index = new LineIndex(text);
  const start = nl + 1;
  const source = text.slice(start, nl + fence.index + 1);
  const parsed = parseYaml(source, (o) => index.pos(start + o));
  if (!parsed.ok) return `the front matter is not valid YAML (line ${parsed.error.pos.line}): ${parsed.error.message}`;
  if (!parsed.root || parsed.root.kind !== 'map') return 'the front matter is not a mapping';
  return { root: parsed.root, index };
}

/** Plans the updates of one spec's text from the operating point in `plots`. */
export function planSync(text: string, plots: RawPlot[]): SyncPlan {
  const problems: SyncProblem[] = [];
  const changes: SyncChange[] = [];
  const problem = (pos: Pos, message: string) => problems.push({ line: pos.line, column: pos.column, message });
  const fm = frontMatter(text);
  if (typeof fm === 'string') return { text, fixed: text, changes, problems: [{ line: 1, column: 1, message: fm }] };
  const op = operatingPoint(plots);
  if (typeof op === 'string') return { text, fixed: text, changes, problems: [{ line: 1, column: 1, message: op }] };
  const vectors = new Map<string, { value: number; type: string }>();
  for (const v of op.vectors) {
    const key = v.name.toLowerCase();
    vectors.set(key, { value: v.values[0], type: v.type });
    // `.save @m5[id]` is written as `i(@m5[id])`.
    const inner = /^i\((@.*)\)$/.exec(key);
    if (inner) vectors.set(inner[1], { value: v.values[0], type: v.type });
  }
  const devices = new Set([...vectors.keys()].map((k) => /^@([^[]+)\[/.exec(k)?.[1]).filter((d): d is string => d !== undefined));
  const get = (k: string): YEntry | undefined => fm.root.entries.find((e) => e.key === k);
  const topoName = get('topology')?.value.kind === 'scalar' ? (get('topology')!.value as { text: string }).text.trim() : '';
  const topology = TOPOLOGIES.find((t) => t.id === topoName);
  const edits: Array<{ start: number; end: number; text: string }> = [];

  for (const section of TOP) {
    const node = get(section)?.value;
    if (!node || node.kind !== 'map') continue;
    for (const e of node.entries) {
      if (e.value.kind !== 'map') continue;
      const fromEntry = e.value.entries.find((b) => b.key === 'from');
      if (!fromEntry) continue;
      const fromNode = fromEntry.value;
      const fromText = fromNode.kind === 'scalar' ? fromNode.text.trim() : '';
      const shown = `\`${e.key}\` (from \`${fromText}\`)`;
      const refs = vectorRefs(fromText);
      if ('error' in refs) {
        problem(fromNode.pos, `${shown}: ${refs.error}`);
        continue;
      }
      const missing = refs.refs.filter((r) => !vectors.has(r));
      if (missing.length) {
        for (const m of missing) {
          const dev = /^@([^[]+)\[/.exec(m)?.[1];
          if (dev && !devices.has(dev)) {
            problem(fromNode.pos, `${shown}: no vector of the device \`${dev}\` is in the operating point: the mapping is stale (devices in the file: ${[...devices].sort().join(', ') || 'none'})`);
          } else {
            problem(fromNode.pos, `${shown}: \`${m}\` is not in the operating point; ngspice writes a device parameter only when asked: add \`.save ${m}\` to the netlist${dev ? ` (saved for \`${dev}\`: ${[...vectors.keys()].filter((k) => k.startsWith(`@${dev}[`)).join(', ')})` : ''}`);
          }
        }
        continue;
      }
      const c = compile(refs.expr, {
        dims: (n) => {
          const k = /^vec_(\d+)$/.exec(n);
          if (!k) return undefined;
          const v = vectors.get(refs.refs[Number(k[1])])!;
          const t = TYPE_DIMS[v.type.toLowerCase()];
          return t ? { dims: t.dims, hz: t.hz ?? false } : undefined;
        },
        names: () => refs.refs.map((_, i) => `vec_${i}`),
      });
      if (!c.ok) {
        const msg = c.error.message.replace(/vec_(\d+)/g, (_, i: string) => refs.refs[Number(i)]);
        problem(fromNode.pos, `${shown}: ${msg.includes('unknown name') ? `${msg} (a vector of an unknown type?)` : msg}`);
        continue;
      }
      const values: Record<string, number> = {};
      refs.refs.forEach((r, i) => (values[`vec_${i}`] = vectors.get(r)!.value));
      const value = c.compiled.compute(values);
      // The key's dimension: its topology's for a param or condition; a design quantity's own unit if it has one.
      const typEntry = e.value.entries.find((b) => b.key === 'typ');
      const typText = typEntry?.value.kind === 'scalar' ? typEntry.value.text.trim() : undefined;
      let kind: Kind | undefined;
      let want: Dims | undefined;
      if (section === 'design') {
        const k = typText ? detectKind(typText) : undefined;
        if (k && KIND_DIMS[k]) {
          kind = k;
          want = KIND_DIMS[k];
        }
      } else {
        const spec = (section === 'params' ? topology?.params : topology?.conditions)?.find((s) => s.key === e.key);
        if (spec) {
          kind = spec.kind;
          want = KIND_DIMS[spec.kind];
        }
      }
      if (want && describeDims(want) !== describeDims(c.compiled.dims)) {
        problem(fromNode.pos, `${shown} gives ${describeDims(c.compiled.dims)}, but \`${e.key}\` is ${describeDims(want)}: the units do not match`);
        continue;
      }
      if (!Number.isFinite(value)) {
        problem(fromNode.pos, `${shown} gives no finite number (${String(value)})`);
        continue;
      }
      const precise = kind && kind !== 'ratio' ? formatQuantity(value, kind, 4) : formatPrecise(value, c.compiled.dims);
      if (typEntry && typEntry.value.kind === 'scalar' && typEntry.value.span) {
        if (typText === precise) continue;
        edits.push({ start: typEntry.value.span[0], end: typEntry.value.span[1], text: precise });
        changes.push({ key: e.key, section, from: fromText, before: typText ?? null, after: precise, value, line: typEntry.value.pos.line });
      } else if (typEntry) {
        problem(typEntry.value.pos, `\`${e.key}.typ\` is not a plain value; sync replaces only a plain \`typ:\``);
      } else {
        edits.push({ start: fromEntry.keyPos.offset, end: fromEntry.keyPos.offset, text: insertion(text, fromEntry.keyPos, precise) });
        changes.push({ key: e.key, section, from: fromText, before: null, after: precise, value, line: fromEntry.keyPos.line });
      }
    }
  }
  if (problems.length) return { text, fixed: text, changes: [], problems };
  let fixed = text;
  for (const ed of edits.sort((a, b) => b.start - a.start)) fixed = fixed.slice(0, ed.start) + ed.text + fixed.slice(ed.end);
  return { text, fixed, changes, problems };
}

/** A value to four digits: `144.4 µS`, `16.02 /V`. */
function formatPrecise(value: number, dims: Dims): string {
  const kind = kindOfDims(dims);
  if (kind && kind !== 'ratio') return formatQuantity(value, kind, 4);
  return formatDims(value, dims).replace(/^\S+/, () => String(+value.toPrecision(4)));
}

/** `typ: X, ` before `from:` in a flow mapping; `typ: X` on its own line, indented alike, in a block mapping. */
function insertion(text: string, fromKey: Pos, value: string): string {
  let i = fromKey.offset - 1;
  while (i >= 0 && (text[i] === ' ' || text[i] === '\t')) i--;
  if (text[i] === '{' || text[i] === ',') return `typ: ${value}, `;
  return `typ: ${value}\n${' '.repeat(fromKey.column - 1)}`;
}

/**
 * The changed lines as a unified diff without context. Sync only replaces
 * text within lines and inserts whole lines, so one linear walk finds them.
 */
export function lineDiff(path: string, before: string, after: string): string {
  if (before === after) return '';
  const a = before.split('\n');
  const b = after.split('\n');
  const hunks: string[] = [];
  let i = 0;
  let j = 0;
  while (i < a.length || j < b.length) {
    if (i < a.length && j < b.length && a[i] === b[j]) {
      i++;
      j++;
      continue;
    }
    const from = i;
    const to = j;
    const removed: string[] = [];
    const added: string[] = [];
    // An inserted line: the next one of the new text is the old line.
    while (j < b.length && i < a.length && a[i] !== b[j] && a[i] === b[j + 1]) added.push(b[j++]);
    if (!added.length) {
      if (i < a.length) removed.push(a[i++]);
      if (j < b.length) added.push(b[j++]);
    }
    // An empty side is numbered by the line before it (unified diff).
    hunks.push(`@@ -${removed.length ? from + 1 : from},${removed.length} +${added.length ? to + 1 : to},${added.length} @@\n${[...removed.map((l) => `-${l}`), ...added.map((l) => `+${l}`)].join('\n')}\n`);
  }
  return `--- ${path}\n+++ ${path}\n${hunks.join('')}`;
}

export interface SyncIO {
  stdout: (s: string) => void;
  stderr: (s: string) => void;
  cwd?: string;
}

export const SYNC_USAGE = 'usage: polecheck sync SPEC --raw FILE [--preview]';

/** The `sync` subcommand; returns the exit status (0 done, 1 problems in the spec or the raw file, 2 could not run). */
export function runSync(argv: string[], io: SyncIO): number {
  let spec: string | undefined;
  let raw: string | undefined;
  let preview = false;
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    if (a === '--preview') preview = true;
    else if (a === '--raw' || a.startsWith('--raw=')) {
      raw = a === '--raw' ? argv[++i] : a.slice(6);
      if (!raw) return usage(io, '`--raw` needs the raw file of an `.op` analysis');
    } else if (a.startsWith('-')) return usage(io, `unknown option \`${a}\` for sync`);
    else if (spec === undefined) spec = a;
    else return usage(io, 'sync takes one spec at a time');
  }
  if (!spec || !raw) return usage(io, !spec ? 'name the spec to update' : 'give the operating point with `--raw FILE`');
  const cwd = io.cwd ?? process.cwd();
  let text: string;
  let plots: RawPlot[];
  try {
    text = readFileSync(resolve(cwd, spec), 'utf8');
  } catch (err) {
    io.stderr(`polecheck: cannot read ${spec}: ${(err as Error).message}\n`);
    return 2;
  }
  try {
    plots = readRaw(readFileSync(resolve(cwd, raw)));
  } catch (err) {
    io.stderr(`polecheck: ${raw}: ${err instanceof RawFileError ? err.message : `cannot read: ${(err as Error).message}`}\n`);
    return err instanceof RawFileError ? 1 : 2;
  }
  const plan = planSync(text, plots);
  if (plan.problems.length) {
    for (const p of plan.problems) io.stdout(`${spec}:${p.line}:${p.column}: error: ${p.message}\n`);
    io.stderr(`polecheck: ${spec} not updated (${plan.problems.length} problem${plan.problems.length === 1 ? '' : 's'})\n`);
    return 1;
  }
  if (!plan.changes.length) {
    io.stderr(`polecheck: ${spec} is up to date with ${raw}\n`);
    return 0;
  }
  if (preview) {
    io.stdout(lineDiff(spec, plan.text, plan.fixed));
    return 0;
  }
  try {
    if (writeAtomically(resolve(cwd, spec), plan.text, plan.fixed) === 'changed') {
      io.stderr(`polecheck: ${spec} changed while it was being updated; not written\n`);
      return 2;
    }
  } catch (err) {
    io.stderr(`polecheck: cannot write ${spec}: ${(err as Error).message}\n`);
    return 2;
  }
  io.stderr(`polecheck: updated ${plan.changes.length} value${plan.changes.length === 1 ? '' : 's'} in ${spec} from ${raw} (${plan.changes.map((c) => `${c.key} = ${c.after}`).join(', ')})\n`);
  return 0;
}

function usage(io: SyncIO, why: string): number {
  io.stderr(`polecheck: ${why}\n${SYNC_USAGE}\n`);
  return 2;
}

export type { YNode };
