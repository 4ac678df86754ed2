// The `design:` section and the values written as expressions. Design
// quantities are named values with units (`i1: 20 µA ±10%`, `vov1: 150 mV`,
// `gm_id1: 16 /V`); params, conditions and design quantities may be
// expressions over them and over each other (`gm1: 2 * i1 / vov1`,
// `r1: ro2 ∥ ro4`). Here: reading the section, compiling every expression
// (expressions.ts), ordering them (cycles are errors), checking each result's
// dimension against its key, and the derivation that recomputes the derived
// values at any point of the box of the underlying quantities — which is what
// makes their ranges correlated: two params derived from one current move
// together in the worst-case search, because only the current is an axis.

import { type Kind, type Quantity, detectKind, formatQuantity, parseQuantity, parseTolerance } from '../quantity';
import type { Finding } from '../verdicts/findings';
import type { KeySpec, Topology, Values } from '../topologies/types';
import { type Compiled, type Dims, KIND_DIMS, compile, describeDims, kindOfDims, shadows, spiceHint, unitsOf } from './expressions';
import type { Pos } from './position';
import type { Spec, ValueEntry } from './types';
import type { YEntry, YNode, YScalar } from './yaml';

export interface Reporter {
  error(rule: string, pos: Pos, message: string, suggestions?: string[]): void;
  note(rule: string, pos: Pos, message: string): void;
}

/** A value written as an expression, read but not yet computed. */
export interface Pending {
  entry: ValueEntry;
  node: YScalar;
  where: 'design' | 'params' | 'conditions';
  dims?: Dims;
}

/** One derived value: recomputed, in order, wherever the underlying ones change. */
export interface Step {
  key: string;
  compute: (values: Values) => number;
  /** 1/(2π) for a 1/s result read as rad/s for a frequency, else 1. */
  scale: number;
}

export interface Derivation {
  steps: Step[];
  /** Every derived value recomputed from the others in `values` (a copy). */
  resolve(values: Values): Values;
  /** The non-derived names each derived key rests on, transitively. */
  basis: Map<string, string[]>;
}

/** The place of the i-th character of a scalar's text in the file. */
export function placeIn(node: YScalar, offset: number): Pos {
  if (node.aliased) return node.pos;
  if (node.at) return node.at(offset);
  const shift = node.plain ? offset : offset + 1;
  return { line: node.pos.line, column: node.pos.column + shift, offset: node.pos.offset + shift };
}

const designSpec = (key: string, kind: Kind): KeySpec => ({ key, kind, description: 'design quantity', allowNegative: true, allowZero: true });

const written = (text: string, unit = ''): Quantity['written'] => ({ text, number: '', unit, style: 'si', scale: 1, sigDigits: 3, decimals: 0 });

/** "16 /V": a value in base units for a dimension polecheck does not name. */
export function formatDims(value: number, dims: Dims): string {
  const kind = kindOfDims(dims);
  if (kind && kind !== 'ratio') return formatQuantity(value, kind);
  const units = unitsOf(dims);
  const num = String(+value.toPrecision(3));
  return units === '1' ? num : units.startsWith('1/') ? `${num} /${units.slice(2)}` : `${num} ${units}`;
}

const DESIGN_BOUNDS = ['min', 'typ', 'max', 'from'];

/**
 * Reads `design:`. A plain quantity or a range becomes an entry; an
 * expression is left pending for `derive`. Names that shadow a unit are
 * errors; a name that is a param or condition of the topology stands for it.
 */
export function readDesign(r: Reporter, node: YNode | undefined): { entries: Map<string, ValueEntry>; pending: Pending[] } {
  const entries = new Map<string, ValueEntry>();
  const pending: Pending[] = [];
  if (!node) return { entries, pending };
  if (node.kind !== 'map') {
    r.error('front-matter', node.pos, '`design` must be a mapping of names to quantities, e.g. `i1: 20 µA`');
    return { entries, pending };
  }
  for (const e of node.entries) {
    if (!/^[A-Za-z_][A-Za-z0-9_]*$/.test(e.key)) {
      r.error('design', e.keyPos, `\`${e.key}\` cannot name a design quantity: a name is letters, digits and \`_\`, starting with a letter`);
      continue;
    }
    const shadow = shadows(e.key);
    if (shadow) {
      r.error('design', e.keyPos, shadow);
      continue;
    }
    const read = readDesignValue(r, e);
    if (!read) continue;
    if ('pending' in read) pending.push(read.pending);
    else entries.set(e.key, read.entry);
  }
  return { entries, pending };
}

function plainDesign(r: Reporter, e: YEntry, node: YNode, name: string): { q: Quantity; dims: Dims } | undefined {
  if (node.kind !== 'scalar') {
    r.error('wrong-unit', node.pos, `\`${name}\` expects a quantity such as \`20 µA\`, not a ${node.kind === 'map' ? 'mapping' : 'list'}`);
    return undefined;
  }
  const kind = detectKind(node.text);
  if (!kind) return undefined;
  const p = parseQuantity(node.text, kind);
  if (!p.ok) return undefined;
  const dims = KIND_DIMS[kind];
  if (!dims || p.quantity.written.style !== 'si' && p.quantity.written.style !== 'rad/s' && kind !== 'ratio') {
    r.error('design', node.pos, `\`${e.key}\`: a design quantity is an SI quantity (a current, voltage, conductance, resistance, capacitance, time, frequency or ratio), not ${kind === 'gain' ? 'a gain in dB' : `\`${node.text}\``}`);
    return undefined;
  }
  return { q: p.quantity, dims };
}

function readDesignValue(r: Reporter, e: YEntry): { entry: ValueEntry } | { pending: Pending } | undefined {
  const v = e.value;
  const entryOf = (q: Quantity, pos: Pos, span?: [number, number]): ValueEntry['typ'] => ({ quantity: q, pos, ...(span ? { span: { start: span[0], end: span[1] } } : {}) });
  if (v.kind === 'map') {
    const bounds: Record<string, { q: Quantity; dims: Dims; pos: Pos; span?: [number, number] }> = {};
    let from: ValueEntry['from'];
    for (const b of v.entries) {
      if (!DESIGN_BOUNDS.includes(b.key)) {
        r.error('unknown-key', b.keyPos, `unknown key \`${b.key}\` in the design quantity \`${e.key}\`; expected one of ${DESIGN_BOUNDS.map((k) => `\`${k}\``).join(', ')}`);
        return undefined;
      }
      if (b.key === 'from') {
        from = readFrom(r, b);
        if (!from) return undefined;
        continue;
      }
      const p = plainDesign(r, e, b.value, `${e.key}.${b.key}`);
      if (!p) {
        if (b.value.kind === 'scalar') r.error('wrong-unit', b.value.pos, `\`${e.key}.${b.key}: ${b.value.text}\` is not a quantity with a unit, such as \`20 µA\``);
        return undefined;
      }
      bounds[b.key] = { ...p, pos: b.value.pos, ...(b.value.kind === 'scalar' && b.value.span ? { span: b.value.span } : {}) };
    }
    const all = Object.values(bounds);
    if (!bounds.typ && !(bounds.min && bounds.max)) {
      if (from && !all.length) {
        r.error('missing-value', e.keyPos, `\`${e.key}\` takes its value from \`${from.text}\`, not imported yet: run \`polecheck sync\` on this spec with \`--raw\` and the simulator's operating point`);
        return undefined;
      }
      r.error('invalid-value', v.pos, `the design quantity \`${e.key}\` needs typ, or both min and max`);
      return undefined;
    }
    const dims = all[0].dims;
    for (const b of all) {
      if (describeDims(b.dims) !== describeDims(dims)) {
        r.error('wrong-unit', b.pos, `the bounds of \`${e.key}\` must all be ${describeDims(dims)}; this one is ${describeDims(b.dims)}`);
        return undefined;
      }
    }
    const { min, typ, max } = bounds;
    if (min && max && min.q.value > max.q.value) {
      r.error('invalid-value', min.pos, `the range of \`${e.key}\` has min above max`);
      return undefined;
    }
    const kind = kindOfDims(dims) ?? 'ratio';
    const at = (b: (typeof bounds)[string]) => entryOf({ ...b.q, kind }, b.pos, b.span);
    const typQ = typ ? at(typ) : { quantity: { ...min!.q, kind, value: (min!.q.value + max!.q.value) / 2 }, pos: min!.pos };
    if (typ && ((min && typ.q.value < min.q.value) || (max && typ.q.value > max.q.value))) {
      r.error('invalid-value', typ.pos, `the typical value of \`${e.key}\` lies outside its range`);
      return undefined;
    }
    return { entry: { key: e.key, keyPos: e.keyPos, spec: designSpec(e.key, kind), typ: typQ, ...(min ? { min: at(min) } : {}), ...(max ? { max: at(max) } : {}), ...(typ ? {} : { typIsMidpoint: true }), dims, ...(from ? { from } : {}) } };
  }
  if (v.kind !== 'scalar') {
    r.error('wrong-unit', v.pos, `\`${e.key}\` expects a quantity such as \`20 µA\`, not a list`);
    return undefined;
  }
  const text = v.text.trim();
  if (text === '') {
    r.error('missing-value', v.pos, `\`${e.key}\` has no value; a design quantity is a quantity such as \`20 µA\``);
    return undefined;
  }
  // `20 µA ±10%`: a range on a plain value.
  const pm = text.search(/±|\+\/-|\+-/);
  if (pm > 0) {
    const kind = detectKind(text.slice(0, pm));
    const tol = kind ? parseTolerance(text, kind) : undefined;
    if (!kind || !tol || !tol.ok || !KIND_DIMS[kind]) {
      r.error('wrong-unit', v.pos, `\`${e.key}: ${text}\`: a range \`±N%\` goes on a plain quantity, such as \`20 µA ±10%\`${tol && !tol.ok ? ` (${tol.message})` : ''}`);
      return undefined;
    }
    const dims = KIND_DIMS[kind]!;
    const at = (q: Quantity): ValueEntry['typ'] => ({ quantity: q, pos: v.pos });
    return { entry: { key: e.key, keyPos: e.keyPos, spec: designSpec(e.key, kind), typ: { ...at(tol.typ), ...(v.span ? { span: { start: v.span[0], end: v.span[1] } } : {}) }, min: at(tol.min), max: at(tol.max), tolerance: true, dims } };
  }
  const plain = plainDesign(r, e, v, e.key);
  if (plain) {
    return { entry: { key: e.key, keyPos: e.keyPos, spec: designSpec(e.key, plain.q.kind), typ: { quantity: plain.q, pos: v.pos, ...(v.span ? { span: { start: v.span[0], end: v.span[1] } } : {}) }, dims: plain.dims } };
  }
  const spice = spiceHint(text, '');
  if (spice) {
    r.error('wrong-unit', v.pos, `\`${e.key}: ${text}\` ${spice.message.replace(/^`[^`]*` /, '')}, adding the unit (\`${spice.write}A\`, \`${spice.write}Ω\`, …)`);
    return undefined;
  }
  const placeholder: ValueEntry = { key: e.key, keyPos: e.keyPos, spec: designSpec(e.key, 'ratio'), typ: { quantity: { value: NaN, kind: 'ratio', written: written(text) }, pos: v.pos }, expression: { text, uses: [] } };
  return { pending: { entry: placeholder, node: v, where: 'design' } };
}

/** `from: "@m1[gm] + @m3[cgd]"`: where `polecheck sync` takes the value from. */
export function readFrom(r: Reporter, b: YEntry): ValueEntry['from'] | undefined {
  const text = b.value.kind === 'scalar' ? b.value.text.trim() : '';
  if (!text) {
    r.error('invalid-value', b.value.pos, '`from` names the simulator vectors the value comes from, e.g. `from: "@m1[gm]"` or `from: "@m1[cgs] + @m3[cgd]"`');
    return undefined;
  }
  return { text, pos: b.value.pos, keyPos: b.keyPos };
}

export const pendingEntry = (e: YEntry, spec: KeySpec, node: YScalar): ValueEntry => ({
  key: e.key,
  keyPos: e.keyPos,
  spec,
  typ: { quantity: { value: NaN, kind: spec.kind, written: written(node.text.trim()) }, pos: node.pos },
  expression: { text: node.text.trim(), uses: [] },
});

interface Inputs {
  topology: Topology;
  design: Map<string, ValueEntry>;
  params: Map<string, ValueEntry>;
  conditions: Map<string, ValueEntry>;
  pending: Pending[];
  /** The schema's physical checks of a param or condition value (sign, limits); reports and says whether it passed. */
  checkValue: (spec: KeySpec, q: ValueEntry['typ']) => boolean;
}

/**
 * Compiles the pending expressions, orders them, computes them at the typical
 * point, checks their dimensions, and puts the computed entries into their
 * maps. Returns the derivation, or undefined when nothing is derived.
 */
export function derive(r: Reporter, inp: Inputs): Derivation | undefined {
  if (!inp.pending.length) return undefined;
  const all = (): Array<[string, ValueEntry]> => [...inp.design, ...inp.params, ...inp.conditions];
  const pendingBy = new Map(inp.pending.map((p) => [p.entry.key, p]));
  const plainDims = (e: ValueEntry): { dims: Dims; hz: boolean } | undefined => {
    const d = e.dims ?? KIND_DIMS[e.spec.kind];
    return d ? { dims: d, hz: e.spec.kind === 'frequency' } : undefined;
  };
  // Compile each expression; a name's dimension is its key's (params,
  // conditions) or, for a design quantity, its own or its expression's.
  const compiled = new Map<string, Compiled>();
  const failed = new Set<string>();
  const declared = (name: string): { dims: Dims; hz: boolean } | undefined => {
    const p = pendingBy.get(name);
    if (p) {
      if (p.where !== 'design') {
        const d = KIND_DIMS[p.entry.spec.kind];
        return d ? { dims: d, hz: p.entry.spec.kind === 'frequency' } : undefined;
      }
      return undefined; // resolved on demand below
    }
    for (const m of [inp.design, inp.params, inp.conditions]) {
      const e = m.get(name);
      if (e) return plainDims(e);
    }
    return undefined;
  };
  const names = () => [...all().map(([k]) => k), ...inp.pending.map((p) => p.entry.key)];
  const visiting = new Set<string>();
  const cycleReported = new Set<string>();
  const compileOne = (p: Pending, path: string[]): Compiled | undefined => {
    const key = p.entry.key;
    if (compiled.has(key)) return compiled.get(key);
    if (failed.has(key)) return undefined;
    if (visiting.has(key)) return undefined;
    visiting.add(key);
    const scope = {
      dims: (name: string) => {
        const q = pendingBy.get(name);
        if (q) {
          if (visiting.has(name)) {
            reportCycle([...path, key].slice([...path, key].indexOf(name)));
            return { dims: [0, 0, 0] as Dims, hz: false };
          }
          if (q.where === 'design') {
            const c = compileOne(q, [...path, key]);
            return c ? { dims: c.dims, hz: c.hz } : { dims: [0, 0, 0] as Dims, hz: false };
          }
          compileOne(q, [...path, key]);
        }
        return declared(name);
      },
      names,
    };
    const c = compile(p.node.text, scope);
    visiting.delete(key);
    if (failed.has(key)) return undefined;
    if (!c.ok) {
      failed.add(key);
      r.error(c.error.message.startsWith('unknown name') || c.error.message.includes('SPICE') ? 'wrong-unit' : 'expression', placeIn(p.node, leadingSpace(p.node.text) + c.error.offset), `\`${key}: ${p.node.text.trim()}\`: ${c.error.message}`, c.error.hint ? [`write \`${c.error.hint}\``] : []);
      return undefined;
    }
    if (c.compiled.uses.some((u) => failed.has(u.name))) {
      failed.add(key);
      return undefined;
    }
    compiled.set(key, c.compiled);
    p.entry.expression!.uses = c.compiled.uses.map((u) => {
      const target = [inp.design, inp.params, inp.conditions].map((m) => m.get(u.name)).find(Boolean) ?? pendingBy.get(u.name)?.entry;
      return { name: u.name, pos: target?.keyPos ?? p.entry.keyPos, at: placeIn(p.node, leadingSpace(p.node.text) + u.offset) };
    });
    return c.compiled;
  };
  function reportCycle(cycle: string[]): void {
    const ring = [...cycle, cycle[0]].map((k) => `\`${k}\``).join(' → ');
    for (const k of cycle) {
      if (cycleReported.has(k)) continue;
      cycleReported.add(k);
      failed.add(k);
      const e = pendingBy.get(k)!.entry;
      r.error('expression', e.keyPos, `\`${k}\` is part of a cycle of expressions (${ring}): each needs the others first; give one of them a value`);
    }
  }
  for (const p of inp.pending) compileOne(p, []);

  // Order: each expression after the expressions it reads (depth first).
  const order: Pending[] = [];
  const placed = new Set<string>();
  const place = (p: Pending) => {
    if (placed.has(p.entry.key) || !compiled.has(p.entry.key)) return;
    placed.add(p.entry.key);
    for (const u of compiled.get(p.entry.key)!.uses) {
      const q = pendingBy.get(u.name);
      if (q) place(q);
    }
    order.push(p);
  };
  for (const p of inp.pending) place(p);

  // Typical values of everything written plainly, then each derived one.
  const values: Values = Object.create(null);
  for (const s of [...inp.topology.params, ...inp.topology.conditions]) if (s.default !== undefined) values[s.key] = s.default;
  for (const [k, e] of all()) values[k] = e.typ.quantity.value;
  const steps: Step[] = [];
  for (const p of order) {
    const key = p.entry.key;
    const c = compiled.get(key)!;
    if (c.uses.some((u) => failed.has(u.name))) {
      failed.add(key);
      continue;
    }
    let scale = 1;
    const e = p.entry;
    const shown = `\`${key}: ${e.expression!.text}\``;
    if (p.where === 'design') {
      const kind = kindOfDims(c.dims) ?? 'ratio';
      e.spec = designSpec(key, kind);
      e.dims = c.dims;
    } else {
      const want = KIND_DIMS[e.spec.kind];
      if (!want) {
        r.error('expression', p.node.pos, `${shown}: \`${key}\` takes ${e.spec.kind === 'gain' ? 'a gain' : `a ${e.spec.kind}`}, which is written as a value, not an expression`);
        failed.add(key);
        continue;
      }
      if (describeDims(want) !== describeDims(c.dims)) {
        r.error('wrong-unit', p.node.pos, `${shown} gives ${describeDims(c.dims)}, but \`${key}\` (${e.spec.description}) is ${describeDims(want)}`);
        failed.add(key);
        continue;
      }
      if (e.spec.kind === 'frequency' && !c.hz) scale = 1 / (2 * Math.PI);
    }
    const value = c.compute(values) * scale;
    if (!Number.isFinite(value)) {
      r.error('invalid-value', p.node.pos, `${shown} gives no finite number at the typical values (${String(value)})`);
      failed.add(key);
      continue;
    }
    e.typ = { ...e.typ, quantity: { ...e.typ.quantity, value, kind: e.spec.kind } };
    if (scale !== 1) r.note('expression', p.node.pos, `${shown} gives 1/s, read as rad/s: ${formatQuantity(value * 2 * Math.PI, 'frequency').replace(/Hz$/, 'rad/s')} is ${formatQuantity(value, 'frequency')} (write the result in Hz, or a unit in hertz, to say otherwise)`);
    if (p.where !== 'design' && !inp.checkValue(e.spec, e.typ)) {
      failed.add(key);
      continue;
    }
    values[key] = value;
    steps.push({ key, compute: c.compute, scale });
    (p.where === 'design' ? inp.design : p.where === 'params' ? inp.params : inp.conditions).set(key, e);
  }
  const basis = new Map<string, string[]>();
  const baseOf = (key: string, seen = new Set<string>()): string[] => {
    const c = compiled.get(key);
    if (!c || !steps.some((s) => s.key === key)) return [key];
    const out: string[] = [];
    for (const u of c.uses) {
      if (seen.has(u.name)) continue;
      seen.add(u.name);
      for (const b of baseOf(u.name, seen)) if (!out.includes(b)) out.push(b);
    }
    return out;
  };
  for (const s of steps) basis.set(s.key, baseOf(s.key));
  return {
    steps,
    basis,
    resolve(input: Values): Values {
      const out: Values = Object.assign(Object.create(null), input);
      for (const s of steps) out[s.key] = s.compute(out) * s.scale;
      return out;
    },
  };
}

const leadingSpace = (text: string): number => text.length - text.trimStart().length;

/** A design-quantity or param key as a knob: its KeySpec (a design quantity's is made from its kind and a plausible span around its value). */
export function keySpecOf(spec: Spec, key: string): KeySpec | undefined {
  const own = spec.topology.params.find((p) => p.key === key) ?? spec.topology.conditions.find((p) => p.key === key);
  if (own) return own;
  const d = spec.design?.get(key);
  if (!d) return undefined;
  const v = Math.abs(d.typ.quantity.value);
  return { ...d.spec, plausible: v > 0 ? [v / 1e3, v * 1e3] : undefined };
}

/** Knobs for a claim: a param that is derived stands aside for the quantities it is derived from. */
export function knobKeys(spec: Spec, keys: string[]): string[] {
  const out: string[] = [];
  for (const k of keys) {
    const basis = spec.derived?.basis.get(k);
    for (const b of basis ?? [k]) {
      // Only what a designer writes as a value: a design quantity or a plain param.
      if (out.includes(b) || spec.derived?.basis.has(b)) continue;
      if (spec.design?.has(b) || (spec.params.has(b) && !spec.params.get(b)!.expression) || (!spec.params.has(b) && spec.topology.params.some((p) => p.key === b))) out.push(b);
    }
  }
  return out;
}

/** Formats a value of a key, param or design quantity. */
export function formatKeyValue(spec: Spec, key: string, value: number): string {
  const d = spec.design?.get(key);
  if (d?.dims) return formatDims(value, d.dims);
  const ks = keySpecOf(spec, key);
  return ks && ks.kind !== 'ratio' ? formatQuantity(value, ks.kind) : String(+value.toPrecision(3));
}

/**
 * A finding about a value written as an expression points at the expression;
 * its related places are the quantities the expression uses, where they are
 * written, with their values.
 */
export function relateFindings(findings: Finding[], entries: ValueEntry[], valueText: (name: string) => string): void {
  const derived = entries.filter((e) => e.expression);
  for (const f of findings) {
    const e = derived.find((d) => (d.typ.pos.line === f.line && d.typ.pos.column === f.column) || (d.keyPos.line === f.line && d.keyPos.column === f.column));
    if (!e) continue;
    const more = e.expression!.uses
      .filter((u) => !(f.related ?? []).some((r) => r.line === u.pos.line && r.column === u.pos.column))
      .map((u) => ({ line: u.pos.line, column: u.pos.column, message: `\`${u.name}\` = ${valueText(u.name)}, used by \`${e.key}: ${e.expression!.text}\`` }));
    if (more.length) f.related = [...(f.related ?? []), ...more];
  }
}

export { describeDims };
