// The positioned YAML tree → a typed Spec, with an error at the exact place
// of every key or value that does not fit the format (SPEC-FORMAT §2).

import type { Finding } from '../verdicts/findings';
import { DISPLAY_UNIT, type Kind, KIND_EXAMPLE, KIND_NOUN, formatQuantity, parseQuantity, parseTolerance } from '../quantity';
import { TOPOLOGIES } from '../topologies';
import { STEP_INPUT, betaFromGain } from '../topologies/common';
import { ELEMENT_KINDS, ELEMENT_NOISE, type ElementKind, type ElementNoise, type NetworkDef, type NetworkElementDef, checkStructure, networkTopology } from '../topologies/network';
import type { ClaimArg, ClaimSpec, KeySpec, Topology, Values } from '../topologies/types';
import { parseGain } from './closed-loop-conditions';
import { type Pending, derive, formatKeyValue, pendingEntry, readDesign, readFrom, relateFindings } from './design';
import { KIND_DIMS, describeDims, looksLikeExpression, spiceHint } from './expressions';
import { nearest } from './nearest';
import type { Pos } from './position';
import type { ClaimEntry, QuantityAt, Spec, ValueEntry, Waiver } from './types';
import type { YEntry, YMap, YNode } from './yaml';

export const TOP_KEYS = ['polecheck', 'block', 'title', 'topology', 'network', 'design', 'params', 'conditions', 'claims', 'waivers'] as const;
const BOUND_KEYS = ['min', 'typ', 'max'] as const;
export const FORMAT_VERSION = 1;

class Collector {
  findings: Finding[] = [];
  error(rule: string, pos: Pos, message: string, suggestions: string[] = [], claim: string | null = null): void {
    this.findings.push({ rule, severity: 'error', line: pos.line, column: pos.column, claim, message, suggestions });
  }
  note(rule: string, pos: Pos, message: string): void {
    this.findings.push({ rule, severity: 'note', line: pos.line, column: pos.column, claim: null, message, suggestions: [] });
  }
  private unknown = 0;
  private unlisted?: Pos;
  unknownKey(pos: Pos, key: string, where: string, valid: readonly string[]): void {
    // A document of thousands of unknown keys is named by its first ones and a count.
    if (++this.unknown > MAX_UNKNOWN_KEYS) {
      this.unlisted ??= pos;
      return;
    }
    const near = nearest(key, valid);
    const shown = clip(key);
    const msg = near ? `unknown key \`${shown}\` in ${where}; did you mean \`${near}\`?` : `unknown key \`${shown}\` in ${where}; expected one of ${valid.map((k) => `\`${k}\``).join(', ')}`;
    this.error('unknown-key', pos, msg, near ? [`rename \`${shown}\` to \`${near}\``] : []);
  }
  /** The findings, with the count of unknown keys past the first MAX_UNKNOWN_KEYS. */
  done(): Finding[] {
    if (this.unlisted) this.error('unknown-key', this.unlisted, `${this.unknown - MAX_UNKNOWN_KEYS} more unknown keys from here on (only the first ${MAX_UNKNOWN_KEYS} are listed)`);
    this.unlisted = undefined;
    return this.findings;
  }
}

/** The largest user-defined network solved (nodes besides ground): its analysis is O(n³) per frequency. */
export const MAX_NETWORK_NODES = 64;

/** Unknown keys reported one by one; the rest are counted. */
export const MAX_UNKNOWN_KEYS = 100;

/** Long values are quoted by their start only: a message stays readable. */
const clip = (text: string): string => (text.length > 80 ? `${text.slice(0, 77)}…` : text);

function scalarText(node: YNode): string | undefined {
  return node.kind === 'scalar' ? node.text : undefined;
}

/** Reads one quantity at a node; reports and returns undefined when it does not fit. */
function quantityAt(c: Collector, node: YNode, kind: Kind, key: string, claim: string | null): QuantityAt | undefined {
  if (node.kind !== 'scalar') {
    c.error('wrong-unit', node.pos, `\`${key}\` expects ${KIND_NOUN[kind]} such as \`${KIND_EXAMPLE[kind]}\`, not a ${node.kind === 'map' ? 'mapping' : 'list'}`, [], claim);
    return undefined;
  }
  if (node.plain && node.text.trim() === '') {
    c.error('missing-value', node.pos, `\`${key}\` has no value; expected ${KIND_NOUN[kind]} such as \`${KIND_EXAMPLE[kind]}\``, [], claim);
    return undefined;
  }
  const r = parseQuantity(node.text, kind);
  if (!r.ok) {
    // The place of the problem in the file: inside the written text, or at the
    // alias that stands for text written elsewhere.
    const at = node.aliased ? node.pos : node.at ? node.at(r.offset) : { ...node.pos, column: node.pos.column + (node.plain ? r.offset : r.offset + 1) };
    // `2meg`, `10k`, `1.5p`: a SPICE habit, said as such.
    const spice = kind === 'ratio' || kind === 'gain' || kind === 'angle' ? undefined : spiceHint(node.text, DISPLAY_UNIT[kind]);
    if (spice) {
      c.error('wrong-unit', node.pos, `\`${key}: ${clip(node.text)}\` ${spice.message.replace(/^`[^`]*` /, '')}`, [`write \`${spice.write}\``], claim);
      return undefined;
    }
    c.error('wrong-unit', at, `\`${key}: ${clip(node.text)}\`: ${r.message}`, r.hint ? [`write \`${r.hint}\``] : [], claim);
    return undefined;
  }
  return { quantity: r.quantity, pos: node.pos, ...(node.span ? { span: { start: node.span[0], end: node.span[1] } } : {}) };
}

/** The span of SI values the engine computes with; beyond it products and inverses overflow. */
export const VALUE_LIMITS: [number, number] = [1e-30, 1e30];

function checkPhysical(c: Collector, spec: KeySpec, q: QuantityAt): boolean {
  const v = q.quantity.value;
  // An expression is quoted with its value.
  const got = q.quantity.written.number === '' && q.quantity.written.style === 'si' && q.quantity.written.text !== '' ? `${q.quantity.written.text}\` = ${formatQuantity(v, spec.kind)}` : `${q.quantity.written.text}\``;
  if (v !== 0 && Number.isFinite(v) && (Math.abs(v) < VALUE_LIMITS[0] || Math.abs(v) > VALUE_LIMITS[1])) {
    c.error('invalid-value', q.pos, `\`${spec.key}: ${got} is outside the range polecheck computes with (${VALUE_LIMITS[0]} to ${VALUE_LIMITS[1]} in SI units)`);
    return false;
  }
  if ((v < 0 && !spec.allowNegative) || (v === 0 && !spec.allowZero)) {
    c.error('invalid-value', q.pos, `\`${spec.key}\` (${spec.description}) must be ${spec.allowZero ? 'zero or positive' : 'positive'}; got \`${got}`);
    return false;
  }
  if (spec.max !== undefined && v > spec.max) {
    c.error('invalid-value', q.pos, `\`${spec.key}\` (${spec.description}) cannot exceed ${spec.max}; got \`${got}`);
    return false;
  }
  return true;
}

/** What the reader needs to recognise an expression: the spec's names, and where pending ones go. */
interface ExprContext {
  names: ReadonlySet<string>;
  pending: Pending[];
}

function readValues(c: Collector, node: YNode | undefined, specs: KeySpec[], where: string, ex?: ExprContext): Map<string, ValueEntry> {
  const out = new Map<string, ValueEntry>();
  if (!node) return out;
  if (node.kind !== 'map') {
    c.error('front-matter', node.pos, `\`${where}\` must be a mapping of keys to values`);
    return out;
  }
  const valid = specs.map((s) => s.key);
  for (const e of node.entries) {
    const spec = specs.find((s) => s.key === e.key);
    if (!spec) {
      c.unknownKey(e.keyPos, e.key, `\`${where}\``, valid);
      continue;
    }
    if (out.has(e.key)) continue; // YAML itself rejects duplicates
    const v = e.value;
    if (ex && (where === 'params' || where === 'conditions') && v.kind === 'scalar' && !parseQuantity(v.text, spec.kind).ok && !parseTolerance(v.text, spec.kind) && !(spec.open && v.text.trim().toLowerCase() === 'open') && looksLikeExpression(v.text, ex.names)) {
      // Computed once every value is read (design.ts).
      ex.pending.push({ entry: pendingEntry(e, spec, v), node: v, where });
      continue;
    }
    const entry = readValue(c, e, spec);
    if (entry) out.set(e.key, entry);
  }
  return out;
}

function readValue(c: Collector, e: YEntry, spec: KeySpec): ValueEntry | undefined {
  const v = e.value;
  if (spec.key === 'gain' || (spec.key === 'step' && v.kind === 'map' && v.entries.some((b) => b.key === 'input' || b.key === 'output'))) return readLoopCondition(c, e, spec);
  if (v.kind === 'scalar' && spec.open && v.text.trim().toLowerCase() === 'open') {
    return { key: e.key, keyPos: e.keyPos, spec, typ: { quantity: { value: Infinity, kind: spec.kind, written: { text: 'open', number: '', unit: '', style: 'bare', scale: 1, sigDigits: 0, decimals: 0 } }, pos: v.pos }, open: true };
  }
  if (v.kind === 'map') {
    const bounds: Partial<Record<(typeof BOUND_KEYS)[number], QuantityAt>> = {};
    let ok = true;
    let from: ValueEntry['from'];
    for (const b of v.entries) {
      if (b.key === 'from') {
        from = readFrom(c, b);
        if (!from) ok = false;
        continue;
      }
      if (!(BOUND_KEYS as readonly string[]).includes(b.key)) {
        c.unknownKey(b.keyPos, b.key, `the range of \`${e.key}\``, [...BOUND_KEYS, 'from']);
        ok = false;
        continue;
      }
      const q = quantityAt(c, b.value, spec.kind, `${e.key}.${b.key}`, null);
      if (!q || !checkPhysical(c, spec, q)) ok = false;
      else bounds[b.key as (typeof BOUND_KEYS)[number]] = q;
    }
    if (!ok) return undefined;
    const { min, typ, max } = bounds;
    if (!min && !max && !typ) {
      if (from) c.error('missing-value', e.keyPos, `\`${e.key}\` takes its value from \`${from.text}\`, not imported yet: run \`polecheck sync\` on this spec with \`--raw\` and the simulator's operating point`);
      else c.error('invalid-value', v.pos, `the range of \`${e.key}\` needs at least one of min, typ, max`);
      return undefined;
    }
    if (min && max && min.quantity.value > max.quantity.value) {
      c.error('invalid-value', min.pos, `the range of \`${e.key}\` has min ${min.quantity.written.text} above max ${max.quantity.written.text}`);
      return undefined;
    }
    if (typ && ((min && typ.quantity.value < min.quantity.value) || (max && typ.quantity.value > max.quantity.value))) {
      c.error('invalid-value', typ.pos, `the typical value of \`${e.key}\` lies outside its range`);
      return undefined;
    }
    if (typ) return { key: e.key, keyPos: e.keyPos, spec, typ, min, max, ...(from ? { from } : {}) };
    if (min && max) {
      const mid = { quantity: { ...min.quantity, value: (min.quantity.value + max.quantity.value) / 2 }, pos: min.pos };
      return { key: e.key, keyPos: e.keyPos, spec, typ: mid, min, max, typIsMidpoint: true };
    }
    c.error('invalid-value', v.pos, `the range of \`${e.key}\` gives only ${min ? 'min' : 'max'}: a param needs typ, or both min and max`);
    return undefined;
  }
  if (v.kind === 'scalar') {
    const tol = parseTolerance(v.text, spec.kind);
    if (tol) {
      if (!tol.ok) {
        c.error('wrong-unit', v.at ? v.at(tol.offset) : { ...v.pos, column: v.pos.column + tol.offset }, `\`${e.key}: ${v.text}\`: ${tol.message}`);
        return undefined;
      }
      const at = (quantity: typeof tol.typ): QuantityAt => ({ quantity, pos: v.pos });
      const entry = { key: e.key, keyPos: e.keyPos, spec, typ: at(tol.typ), min: at(tol.min), max: at(tol.max), tolerance: true };
      return checkPhysical(c, spec, entry.typ) && checkPhysical(c, spec, entry.min) && checkPhysical(c, spec, entry.max) ? entry : undefined;
    }
  }
  if (spec.allowZero && v.kind === 'scalar' && /^[+]?0+(\.0*)?$/.test(v.text.trim())) {
    // Zero needs no unit: `rz: 0`, `cl: 0`.
    const zero = { value: 0, kind: spec.kind, written: { text: v.text.trim(), number: v.text.trim(), unit: '', style: 'bare' as const, scale: 1, sigDigits: 1, decimals: 0 } };
    return { key: e.key, keyPos: e.keyPos, spec, typ: { quantity: zero, pos: v.pos } };
  }
  const q = quantityAt(c, v, spec.kind, e.key, null);
  if (!q || !checkPhysical(c, spec, q)) return undefined;
  return { key: e.key, keyPos: e.keyPos, spec, typ: q };
}

/** Frequencies, rates and capacitances are positive; gains in dB and angles may be negative. */
export const POSITIVE_CLAIM_KINDS: readonly Kind[] = ['frequency', 'slew', 'capacitance', 'noise', 'voltage', 'current', 'power', 'fom'];

function claimValueOk(c: Collector, spec: ClaimSpec, q: QuantityAt): boolean {
  if (POSITIVE_CLAIM_KINDS.includes(spec.kind) && !(q.quantity.value > 0)) {
    c.error('invalid-value', q.pos, `\`${spec.key}\` (${spec.description}) must be positive; got \`${q.quantity.written.text}\``, [], spec.key);
    return false;
  }
  return true;
}

function readClaims(c: Collector, node: YNode | undefined, topology: Topology): ClaimEntry[] {
  const out: ClaimEntry[] = [];
  if (!node) return out;
  if (node.kind !== 'map') {
    c.error('front-matter', node.pos, '`claims` must be a mapping of claim keys to values');
    return out;
  }
  const valid = topology.claims.map((s) => s.key);
  for (const e of node.entries) {
    const spec = topology.claims.find((s) => s.key === e.key);
    if (!spec) {
      c.unknownKey(e.keyPos, e.key, `the claims of \`${topology.id}\``, valid);
      continue;
    }
    if (e.value.kind === 'map') {
      const entry: ClaimEntry = { key: e.key, keyPos: e.keyPos, spec, plain: false };
      let ok = true;
      const args = spec.args ?? [];
      for (const b of e.value.entries) {
        const arg = args.find((a) => a.key === b.key);
        if (arg) {
          const read = readClaimArg(c, e.key, arg, b);
          if (!read) ok = false;
          else entry.conditions = { values: { ...entry.conditions?.values, ...read.values }, text: [entry.conditions?.text, read.text].filter(Boolean).join(', '), pos: b.keyPos };
          continue;
        }
        if (!(BOUND_KEYS as readonly string[]).includes(b.key)) {
          c.unknownKey(b.keyPos, b.key, `the claim \`${e.key}\``, [...BOUND_KEYS, ...args.map((a) => a.key)]);
          ok = false;
          continue;
        }
        const q = quantityAt(c, b.value, spec.kind, `${e.key}.${b.key}`, e.key);
        if (!q) ok = false;
        else entry[b.key as (typeof BOUND_KEYS)[number]] = q;
      }
      if (!ok) continue;
      if (!entry.min && !entry.max && !entry.typ) {
        c.error('invalid-value', e.value.pos, `the claim \`${e.key}\` needs at least one of min, typ, max`, [], e.key);
        continue;
      }
      if (entry.min && entry.max && entry.min.quantity.value > entry.max.quantity.value) {
        c.error('invalid-value', entry.min.pos, `the claim \`${e.key}\` has min above max`, [], e.key);
        continue;
      }
      const t = entry.typ?.quantity.value;
      if (t !== undefined && ((entry.min && t < entry.min.quantity.value) || (entry.max && t > entry.max.quantity.value))) {
        c.error('invalid-value', entry.typ!.pos, `the claim \`${e.key}\` has its typ outside its own min/max`, [], e.key);
        continue;
      }
      if (![entry.typ, entry.min, entry.max].every((q) => !q || claimValueOk(c, spec, q))) continue;
      out.push(entry);
    } else {
      const q = quantityAt(c, e.value, spec.kind, e.key, e.key);
      if (q && claimValueOk(c, spec, q)) out.push({ key: e.key, keyPos: e.keyPos, spec, typ: q, plain: true });
    }
  }
  return out;
}

/**
 * A claim's own argument (`at: 1 MHz`, `band: [10 Hz, 1 MHz]`): positive
 * values of its kind, a pair in increasing order. They become the claim's
 * operating point, as a table row's conditions do.
 */
function readClaimArg(c: Collector, claim: string, arg: ClaimArg, b: YEntry): { values: Values; text: string } | undefined {
  const name = `${claim}.${arg.key}`;
  const positive = (q: QuantityAt | undefined): q is QuantityAt => {
    if (!q) return false;
    if (q.quantity.value > 0) return true;
    c.error('invalid-value', q.pos, `\`${name}\` (${arg.description}) must be positive; got \`${q.quantity.written.text}\``, [], claim);
    return false;
  };
  if (arg.valueKeys.length === 1) {
    const q = quantityAt(c, b.value, arg.kind, name, claim);
    if (!positive(q)) return undefined;
    return { values: { [arg.valueKeys[0]]: q.quantity.value }, text: `${arg.key} ${q.quantity.written.text}` };
  }
  const items = b.value.kind === 'seq' ? b.value.items : [];
  if (items.length !== 2) {
    c.error('invalid-value', b.value.pos, `\`${name}\` takes two values, \`[from, to]\`, such as \`[10 Hz, 1 MHz]\``, [], claim);
    return undefined;
  }
  const [lo, hi] = items.map((item) => quantityAt(c, item, arg.kind, name, claim));
  if (!positive(lo) || !positive(hi)) return undefined;
  if (!(hi.quantity.value > lo.quantity.value)) {
    c.error('invalid-value', hi.pos, `\`${name}\` runs from ${lo.quantity.written.text} to ${hi.quantity.written.text}: the second value must be the higher`, [], claim);
    return undefined;
  }
  return { values: { [arg.valueKeys[0]]: lo.quantity.value, [arg.valueKeys[1]!]: hi.quantity.value }, text: `${arg.key} ${lo.quantity.written.text} to ${hi.quantity.written.text}` };
}

const ELEMENT_KEYS: Record<ElementKind, string[]> = {
  resistor: ['kind', 'between', 'value', 'noise'],
  capacitor: ['kind', 'between', 'value'],
  transconductance: ['kind', 'into', 'from', 'control', 'value', 'noise', 'gamma'],
};

const nodeList = (n: YNode | undefined): string[] | undefined =>
  n?.kind === 'seq' && n.items.every((i) => i.kind === 'scalar') ? n.items.map((i) => (i as { text: string }).text.trim()) : undefined;

/** Reads `network:` — its structure, and its element values as the spec's params. */
function readNetwork(c: Collector, entry: YEntry): { topology: Topology; values: YMap } | undefined {
  const v = entry.value;
  if (v.kind !== 'map') {
    c.error('front-matter', v.pos, '`network` must be a mapping with `input`, `output`, `nodes` and `elements`');
    return undefined;
  }
  const get = (k: string) => v.entries.find((e) => e.key === k);
  for (const e of v.entries) if (!['input', 'output', 'nodes', 'elements'].includes(e.key)) c.unknownKey(e.keyPos, e.key, '`network`', ['input', 'output', 'nodes', 'elements']);
  const input = scalarText(get('input')?.value ?? v)?.trim();
  const output = scalarText(get('output')?.value ?? v)?.trim();
  const nodes = nodeList(get('nodes')?.value);
  const elementsNode = get('elements')?.value;
  let ok = true;
  if (!input) (c.error('front-matter', v.pos, '`network` needs `input:`, the node driven by the input source'), (ok = false));
  if (!output) (c.error('front-matter', v.pos, '`network` needs `output:`, the node whose voltage is the output'), (ok = false));
  if (!nodes) (c.error('front-matter', (get('nodes') ?? entry).keyPos, '`network` needs `nodes:`, a list of every node but ground (0 or gnd), e.g. `[in, n1, out]`'), (ok = false));
  else if (nodes.length > MAX_NETWORK_NODES) (c.error('front-matter', get('nodes')!.keyPos, `\`network\` declares ${nodes.length} nodes; polecheck solves networks of at most ${MAX_NETWORK_NODES} nodes (each evaluation costs O(n³) per frequency): lump the network, or check it in a circuit simulator`), (ok = false));
  if (!elementsNode || elementsNode.kind !== 'map') {
    c.error('front-matter', (get('elements') ?? entry).keyPos, '`network` needs `elements:`, a mapping from element names to `{kind, between|into/control, value}`');
    return undefined;
  }
  const elements: NetworkElementDef[] = [];
  const values: YEntry[] = [];
  for (const el of elementsNode.entries) {
    if (el.value.kind !== 'map') {
      c.error('front-matter', el.value.pos, `element \`${el.key}\` must be a mapping such as \`{kind: resistor, between: [n1, 0], value: 2.2 MΩ}\``);
      ok = false;
      continue;
    }
    const f = (k: string) => (el.value as YMap).entries.find((e) => e.key === k);
    const kind = scalarText(f('kind')?.value ?? el.value)?.trim() as ElementKind | undefined;
    if (!kind || !ELEMENT_KINDS.includes(kind)) {
      const near = kind ? nearest(kind, ELEMENT_KINDS) : undefined;
      c.error('unknown-key', (f('kind')?.value ?? el.value).pos, `element \`${el.key}\` needs \`kind:\` one of ${ELEMENT_KINDS.join(', ')}${near ? `; did you mean \`${near}\`?` : ''}`);
      ok = false;
      continue;
    }
    for (const e of el.value.entries) if (!ELEMENT_KEYS[kind].includes(e.key)) c.unknownKey(e.keyPos, e.key, `the ${kind} \`${el.key}\``, ELEMENT_KEYS[kind]);
    const value = f('value');
    if (!value) {
      c.error('missing-value', el.keyPos, `element \`${el.key}\` needs \`value:\``);
      ok = false;
      continue;
    }
    values.push({ key: el.key, keyPos: el.keyPos, value: value.value });
    // Noise: resistors thermal unless `noise: none`, transconductances silent unless `noise: channel` (γ from `gamma:`).
    const noiseEntry = f('noise');
    let noise: ElementNoise | undefined;
    if (noiseEntry) {
      const text = scalarText(noiseEntry.value)?.trim() as ElementNoise | undefined;
      if (!text || !ELEMENT_NOISE[kind].includes(text)) {
        c.error('invalid-value', noiseEntry.value.pos, `\`noise\` of the ${kind} \`${el.key}\` is one of ${ELEMENT_NOISE[kind].map((x) => `\`${x}\``).join(', ')}`);
        ok = false;
        continue;
      }
      noise = text;
    }
    const gammaEntry = f('gamma');
    let gamma: number | undefined;
    if (gammaEntry) {
      const q = quantityAt(c, gammaEntry.value, 'ratio', `${el.key}.gamma`, null);
      if (!q || !(q.quantity.value > 0)) {
        if (q) c.error('invalid-value', q.pos, `\`gamma\` of \`${el.key}\` (its channel-noise factor) must be positive`);
        ok = false;
        continue;
      }
      if (noise !== 'channel') c.error('invalid-value', gammaEntry.keyPos, `\`gamma\` of \`${el.key}\` applies only with \`noise: channel\``);
      gamma = q.quantity.value;
    }
    const noiseOf = { ...(noise ? { noise } : {}), ...(gamma !== undefined ? { gamma } : {}) };
    if (kind === 'transconductance') {
      const into = scalarText(f('into')?.value ?? el.value)?.trim();
      const from = f('from') ? scalarText(f('from')!.value)?.trim() : '0';
      const control = nodeList(f('control')?.value);
      if (!into || !from || !control || control.length !== 2) {
        c.error('front-matter', el.keyPos, `transconductance \`${el.key}\` needs \`into: NODE\` (where its current goes; \`from:\` defaults to ground) and \`control: [P, N]\` (it carries value·(v(P) − v(N)))`);
        ok = false;
        continue;
      }
      elements.push({ name: el.key, kind, a: from, b: into, ctrlP: control[0], ctrlN: control[1], ...noiseOf, pos: el.keyPos });
    } else {
      const between = nodeList(f('between')?.value);
      if (!between || between.length !== 2) {
        c.error('front-matter', el.keyPos, `${kind} \`${el.key}\` needs \`between: [A, B]\`, the two nodes it joins`);
        ok = false;
        continue;
      }
      elements.push({ name: el.key, kind, a: between[0], b: between[1], ...noiseOf, pos: el.keyPos });
    }
  }
  if (!ok || !input || !output || !nodes) return undefined;
  const def: NetworkDef = { input, output, nodes, elements };
  const problems = checkStructure(def, entry.keyPos);
  for (const p of problems) c.error('network', p.pos, p.message);
  if (problems.length) return undefined;
  return { topology: networkTopology(def), values: { kind: 'map', entries: values, pos: elementsNode.pos } };
}

/**
 * A design quantity named like a param or condition of the topology stands
 * for it (`i1: 20 µA` under `design:` is the first stage's bias current):
 * it moves to `params`/`conditions`, unless those give the key as well.
 * Returns the design quantities that remain.
 */
function standFor(c: Collector, d: { entries: Map<string, ValueEntry>; pending: Pending[] }, params: Map<string, ValueEntry>, conditions: Map<string, ValueEntry>, topology: Topology, paramKeys: string[], conditionKeys: string[]): Map<string, ValueEntry> {
  const rest = new Map<string, ValueEntry>();
  const all = [...d.entries.values(), ...d.pending.map((p) => p.entry)];
  for (const e of all) {
    const spec = topology.params.find((k) => k.key === e.key) ?? topology.conditions.find((k) => k.key === e.key);
    if (!spec) {
      if (d.entries.has(e.key)) rest.set(e.key, e);
      continue;
    }
    const where = topology.params.includes(spec) ? 'params' : 'conditions';
    if ((where === 'params' ? paramKeys : conditionKeys).includes(e.key)) {
      c.error('design', e.keyPos, `\`${e.key}\` is given twice, under \`design:\` and under \`${where}:\`; keep one`);
      d.pending.splice(d.pending.findIndex((p) => p.entry === e), d.pending.some((p) => p.entry === e) ? 1 : 0);
      continue;
    }
    const pending = d.pending.find((p) => p.entry === e);
    e.spec = spec;
    e.design = true;
    if (pending) {
      pending.where = where;
      e.typ = { ...e.typ, quantity: { ...e.typ.quantity, kind: spec.kind } };
      continue;
    }
    if (e.dims && KIND_DIMS[spec.kind] && describeDims(e.dims) !== describeDims(KIND_DIMS[spec.kind]!)) {
      c.error('wrong-unit', e.typ.pos, `\`${e.key}\` stands for the ${where === 'params' ? 'param' : 'condition'} \`${e.key}\` (${spec.description}), which is ${describeDims(KIND_DIMS[spec.kind]!)}; this is ${describeDims(e.dims)}`);
      continue;
    }
    for (const q of [e.typ, e.min, e.max]) if (q) q.quantity = { ...q.quantity, kind: spec.kind };
    if (![e.typ, e.min, e.max].every((q) => !q || checkPhysical(c, spec, q))) continue;
    (where === 'params' ? params : conditions).set(e.key, e);
  }
  return rest;
}

/** One supply: `supply`, or the rails `vdd` (and `vss`), the positive rail above the negative. */
function checkSupply(c: Collector, conditions: Map<string, ValueEntry>): void {
  const supply = conditions.get('supply');
  const vdd = conditions.get('vdd');
  const vss = conditions.get('vss');
  if (supply && (vdd || vss)) {
    c.error('invalid-value', (vdd ?? vss)!.keyPos, 'give the supply once: `supply` (one voltage) or `vdd` and `vss` (the rails), not both');
    conditions.delete('vdd');
    conditions.delete('vss');
    return;
  }
  if (vss && !vdd) c.error('missing-value', vss.keyPos, '`vss` needs `vdd`, the positive rail');
  if (vdd && vss) {
    const low = (vdd.min ?? vdd.typ).quantity.value;
    const high = (vss.max ?? vss.typ).quantity.value;
    if (!(low > high)) {
      c.error('invalid-value', vdd.keyPos, `\`vdd\` (${vdd.typ.quantity.written.text}) must be above \`vss\` (${vss.typ.quantity.written.text}) at every corner`);
      conditions.delete('vdd');
      conditions.delete('vss');
    }
  }
}

/**
 * `gain` (one signed value, V/V or dB) and `step` given as `{input: 100 mV}`
 * or `{output: 1 V}`; an input step is kept under its own value key.
 */
function readLoopCondition(c: Collector, e: YEntry, spec: KeySpec): ValueEntry | undefined {
  const v = e.value;
  if (spec.key === 'gain') {
    if (v.kind !== 'scalar') {
      c.error('wrong-unit', v.pos, '`gain` takes one value, signed, in V/V or dB: `+10`, `-4 V/V`, `20 dB`');
      return undefined;
    }
    const r = parseGain(v.text);
    if (!r.ok) {
      c.error('invalid-value', v.pos, `\`gain: ${clip(v.text)}\`: ${r.message}`);
      return undefined;
    }
    return { key: e.key, keyPos: e.keyPos, spec, typ: { quantity: { value: r.value, kind: spec.kind, written: r.written }, pos: v.pos } };
  }
  if (v.kind !== 'map' || v.entries.length !== 1 || !['input', 'output'].includes(v.entries[0].key)) {
    c.error('invalid-value', v.pos, '`step` is a voltage at the output (`step: 1 V`), or one of `{input: 100 mV}`, `{output: 1 V}`');
    return undefined;
  }
  const b = v.entries[0];
  const q = quantityAt(c, b.value, 'voltage', `step.${b.key}`, null);
  if (!q || !checkPhysical(c, spec, q)) return undefined;
  return { key: b.key === 'input' ? STEP_INPUT : 'step', keyPos: e.keyPos, spec, typ: q };
}

/**
 * `gain` sets β (1/G non-inverting, 1/(1 + |G|) inverting): a `beta` given as
 * well must agree with it, else both keys are in error and the gain is
 * dropped; without one, β is derived from the gain.
 */
function checkGain(c: Collector, conditions: Map<string, ValueEntry>, topology: Topology): void {
  const gain = conditions.get('gain');
  const betaSpec = topology.conditions.find((k) => k.key === 'beta');
  if (!gain || !betaSpec) return;
  const g = gain.typ.quantity.value;
  const fromGain = betaFromGain(g);
  const how = g < 0 ? '1/(1 + |G|), inverting' : '1/G, non-inverting';
  const beta = conditions.get('beta');
  if (beta) {
    const b = beta.typ.quantity.value;
    // Agreement to the precision a β is written with (0.09 for G = 11 is fine).
    if (beta.min || beta.max || Math.abs(b - fromGain) > 0.02 * fromGain) {
      const ranged = beta.min || beta.max ? ' (a ranged β cannot follow one gain)' : '';
      c.error('invalid-value', gain.keyPos, `\`gain: ${gain.typ.quantity.written.text}\` means β = ${+fromGain.toPrecision(4)} (${how}), but \`beta: ${beta.typ.quantity.written.text}\` is stated${ranged}: give one of them, or values that agree`);
      c.error('invalid-value', beta.keyPos, `\`beta: ${beta.typ.quantity.written.text}\` disagrees with \`gain: ${gain.typ.quantity.written.text}\`, which means β = ${+fromGain.toPrecision(4)} (${how})${ranged}`);
      conditions.delete('gain');
    }
    return;
  }
  const text = String(+fromGain.toPrecision(6));
  conditions.set('beta', {
    key: 'beta',
    keyPos: gain.keyPos,
    spec: betaSpec,
    typ: { quantity: { value: fromGain, kind: 'ratio', written: { text, number: text, unit: '', style: 'bare', scale: 1, sigDigits: 6, decimals: 0 } }, pos: gain.typ.pos },
  });
}

const WAIVER_KEYS = ['rule', 'claim', 'reason', 'expires'];

function readWaivers(c: Collector, entry: YEntry | undefined): Waiver[] {
  if (!entry) return [];
  const v = entry.value;
  if (v.kind !== 'seq') {
    c.error('front-matter', v.pos, '`waivers` is a list of `{rule, claim, reason, expires}` entries');
    return [];
  }
  const out: Waiver[] = [];
  for (const item of v.items) {
    if (item.kind !== 'map') {
      c.error('front-matter', item.pos, 'a waiver is a mapping such as `{rule: phase-margin, reason: …, expires: 2027-06-30}`');
      continue;
    }
    const f = (k: string) => item.entries.find((e) => e.key === k);
    for (const e of item.entries) if (!WAIVER_KEYS.includes(e.key)) c.unknownKey(e.keyPos, e.key, 'a waiver', WAIVER_KEYS);
    const rule = scalarText(f('rule')?.value ?? item)?.trim();
    if (!rule) {
      c.error('waiver', item.pos, 'a waiver needs `rule:`, the id of the rule whose finding it accepts');
      continue;
    }
    const w: Waiver = { rule, pos: f('rule')!.keyPos };
    const claim = f('claim') && scalarText(f('claim')!.value)?.trim();
    if (claim) w.claim = claim;
    const reason = f('reason') && scalarText(f('reason')!.value)?.trim();
    if (reason) w.reason = reason;
    const expires = f('expires');
    if (expires) {
      const text = scalarText(expires.value)?.trim() ?? '';
      if (!/^\d{4}-\d{2}-\d{2}$/.test(text) || Number.isNaN(Date.parse(`${text}T00:00:00Z`))) {
        c.error('waiver', expires.value.pos, `\`expires\` takes a date as YYYY-MM-DD, got \`${text}\``);
        continue;
      }
      w.expires = text;
    }
    out.push(w);
  }
  return out;
}

export function readSpec(path: string, root: YMap, start: Pos): { spec: Spec | null; findings: Finding[] } {
  const c = new Collector();
  const get = (key: string): YEntry | undefined => root.entries.find((e) => e.key === key);
  for (const e of root.entries) {
    if (!(TOP_KEYS as readonly string[]).includes(e.key)) c.unknownKey(e.keyPos, e.key, 'the front matter', TOP_KEYS);
  }
  const version = get('polecheck')!;
  if (scalarText(version.value)?.trim() !== String(FORMAT_VERSION)) {
    c.error('front-matter', version.value.pos, `unsupported format version \`polecheck: ${scalarText(version.value) ?? '…'}\`; this polecheck reads version ${FORMAT_VERSION}`);
    return { spec: null, findings: c.done() };
  }
  const topo = get('topology');
  if (!topo) {
    c.error('front-matter', start, `the front matter needs \`topology:\`, one of ${TOPOLOGIES.map((t) => `\`${t.id}\``).join(', ')}`);
    return { spec: null, findings: c.done() };
  }
  const topoName = scalarText(topo.value)?.trim() ?? '';
  if (!topoName) {
    c.error('front-matter', topo.value.pos, `\`topology\` takes the name of a topology: ${[...TOPOLOGIES.map((t) => t.id), 'network'].join(', ')}`);
    return { spec: null, findings: c.done() };
  }
  let topology = TOPOLOGIES.find((t) => t.id === topoName);
  let paramsNode: YNode | undefined = get('params')?.value;
  if (topoName === 'network') {
    const net = get('network');
    if (!net) {
      c.error('front-matter', topo.keyPos, '`topology: network` needs a `network:` block describing the nodes and elements');
      return { spec: null, findings: c.done() };
    }
    if (get('params')) c.error('front-matter', get('params')!.keyPos, 'with `topology: network` the element values go in `network.elements` (`value:`), not in `params`');
    const read = readNetwork(c, net);
    if (!read) return { spec: null, findings: c.done() };
    topology = read.topology;
    paramsNode = read.values;
  } else if (get('network')) {
    c.error('front-matter', get('network')!.keyPos, `\`network:\` goes with \`topology: network\`; \`${topoName}\` builds its own network from \`params\``);
  }
  if (!topology) {
    const ids = [...TOPOLOGIES.map((t) => t.id), 'network'];
    const near = nearest(topoName, ids);
    c.error('unknown-key', topo.value.pos, `unknown topology \`${topoName}\`${near ? `; did you mean \`${near}\`?` : `; known: ${ids.join(', ')}`}`, near ? [`write \`topology: ${near}\``] : []);
    return { spec: null, findings: c.done() };
  }
  const paramsEntry = topoName === 'network' ? get('network') : get('params');
  // Design quantities, and values written as expressions over them and over each other.
  const designRead = readDesign(c, get('design')?.value);
  const conditionsNode = get('conditions')?.value;
  const keysOf = (n: YNode | undefined) => (n?.kind === 'map' ? n.entries.map((e) => e.key) : []);
  const names = new Set([...designRead.entries.keys(), ...designRead.pending.map((p) => p.entry.key), ...keysOf(paramsNode), ...keysOf(conditionsNode)]);
  const ex: ExprContext = { names, pending: [] };
  const params = readValues(c, paramsNode, topology.params, topoName === 'network' ? 'network.elements' : 'params', ex);
  const conditions = readValues(c, conditionsNode, topology.conditions, 'conditions', ex);
  const design = standFor(c, designRead, params, conditions, topology, keysOf(paramsNode), keysOf(conditionsNode));
  const pendingAll = [...designRead.pending, ...ex.pending];
  const derived = derive(c, { topology, design, params, conditions, pending: pendingAll, checkValue: (spec, q) => checkPhysical(c, spec, q) });
  if (pendingAll.length) {
    // A reader's error at an expression (a value out of range) names what the expression uses, too.
    const valueOf = (name: string): string => {
      const e = design.get(name) ?? params.get(name) ?? conditions.get(name) ?? pendingAll.find((p) => p.entry.key === name)?.entry;
      return e && Number.isFinite(e.typ.quantity.value) ? formatKeyValue({ topology, design, params } as Spec, name, e.typ.quantity.value) : 'no value';
    };
    relateFindings(c.findings, pendingAll.map((p) => p.entry), valueOf);
  }
  checkSupply(c, conditions);
  checkGain(c, conditions, topology);
  const claims = readClaims(c, get('claims')?.value, topology);
  const paramsPos = paramsEntry?.keyPos ?? topo.keyPos;

  const written = new Set([...(paramsNode?.kind === 'map' ? paramsNode.entries.map((e) => e.key) : []), ...[...params.values()].filter((e) => e.design).map((e) => e.key)]);
  const paramsUnreadable = paramsNode !== undefined && paramsNode.kind !== 'map';
  for (const p of topology.params) {
    // A param that is written but unreadable has its own error already, and so has a `params:` that is no mapping.
    if (p.required && !written.has(p.key) && !paramsUnreadable) {
      c.error('missing-param', paramsPos, `missing param \`${p.key}\` (${p.description}): every figure of \`${topology.id}\` depends on it`, [`add \`${p.key}: ${KIND_EXAMPLE[p.kind]}\` (your value) under \`params:\``]);
    }
  }
  for (const claim of [...claims]) {
    const missingNeeds = (claim.spec.needs ?? []).filter((need) => !written.has(need));
    if (!missingNeeds.length) continue;
    const described = missingNeeds.map((need) => `\`${need}\` (${topology.params.find((p) => p.key === need)!.description})`).join(' and ');
    c.error('missing-param', claim.keyPos, `the claim \`${claim.key}\` needs ${described}, not given`, [`add ${missingNeeds.map((n) => `\`${n}:\``).join(' and ')} under \`params:\``], claim.key);
    // Without them the claim cannot be judged; the input error says so once.
    claims.splice(claims.indexOf(claim), 1);
  }
  const block = scalarText(get('block')?.value ?? { kind: 'seq', items: [], pos: start });
  const title = scalarText(get('title')?.value ?? { kind: 'seq', items: [], pos: start });
  // A spec whose required params are missing or unreadable cannot be evaluated.
  const complete = topology.params.every((p) => !p.required || params.has(p.key));
  const spec: Spec | null = complete
    ? { path, block, title, topology, topologyPos: topo.value.pos, params, conditions, claims, start, paramsPos, waivers: readWaivers(c, get('waivers')), ...(design.size ? { design } : {}), ...(derived ? { derived } : {}) }
    : null;
  return { spec, findings: c.done() };
}
