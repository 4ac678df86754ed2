// Seeded Markdown specs whose claims are deliberately off, for the tests that
// re-check polecheck's design changes (design-changes.live.test.ts,
// ../design-none.test.ts). The designs are the seeded random designs of the
// ngspice reference harness (./designs.ts, ./topologies/designs.ts) with bias
// currents added; each spec states one or two claims the design misses by a
// clear amount and two or three that it meets (so a change can break them),
// some of them in a datasheet table row at its own conditions. Every value is
// written as a designer would (4 digits, SI prefix) and read back, so the
// values a test rebuilds the netlist from are the ones the spec states.

import { evaluate } from '../../src/model/model';
import { type Kind, formatQuantity, parseQuantity } from '../../src/quantity';
import { TOPOLOGIES } from '../../src/topologies';
import type { Topology, Values } from '../../src/topologies/types';
import { mulberry32, randomTwoStageDesigns, type TwoStageDesign } from './designs';
import { twoStageElements } from './netlist';
import {
  randomCommonSourceDesigns,
  randomSingleStageDesigns,
  randomThreeStageDesigns,
  type CommonSourceDesign,
  type SingleStageDesign,
  type ThreeStageDesign,
} from './topologies/designs';
import { commonSourceElements, CS_PORTS, PORTS, singleStageElements, threeStageElements, type Ports } from './topologies/netlist';

export type BuiltIn = 'two-stage-miller' | 'single-stage' | 'three-stage-nested-miller' | 'common-source';

/** One statement of a claim as the spec writes it: SI value, the line it is on, the conditions it is made at. */
export interface Statement {
  key: string;
  bound: 'typ' | 'min' | 'max';
  /** Canonical unit (Hz, dB, deg, V/s, F), as read back from the text. */
  value: number;
  line: number;
  /** Condition values that replace the front matter's ({} for the front matter). */
  conditions: Values;
  /** From a datasheet table row. */
  row: boolean;
}

export interface GeneratedSpec {
  id: string;
  topology: BuiltIn;
  /** Variant in words: "rz", "mirror+cascode", … */
  variant: string;
  text: string;
  /** Params and conditions at the front matter's point, SI, as read back from the text (defaults included). */
  values: Values;
  statements: Statement[];
  /** Claim keys written to fail. */
  failing: string[];
  /** Ranged params and conditions: [min, max], SI, as read back (the typical value is in `values`). */
  ranges: Record<string, [number, number]>;
}

export const topologyOf = (id: string): Topology => TOPOLOGIES.find((t) => t.id === id)!;

const kindOf = (t: Topology, key: string): Kind => [...t.params, ...t.conditions, ...t.claims].find((s) => s.key === key)!.kind;

/** The value as written (4 digits, SI prefix) and read back. */
export function written(x: number, kind: Kind, digits = 4): { text: string; value: number } {
  const text = formatQuantity(x, kind, digits);
  const back = parseQuantity(text, kind);
  if (!back.ok) throw new Error(`cannot read back ${text}`);
  return { text, value: back.quantity.value };
}

const logUniform = (rand: () => number, lo: number, hi: number) => lo * Math.pow(hi / lo, rand());

/** Params and conditions of a seeded design of each topology (SI, unrounded). */
function designValues(topology: BuiltIn, seed: number, i: number, rand: () => number): { values: Values; variant: string } {
  switch (topology) {
    case 'two-stage-miller': {
      const d = randomTwoStageDesigns(seed, i + 1)[i];
      const i1 = logUniform(rand, 5e-6, 100e-6);
      const values: Values = { gm1: d.gm1, r1: d.r1, c1: d.c1, gm2: d.gm2, r2: d.r2, c2: d.c2, cc: d.cc, cl: d.cl, beta: d.beta, i1, i2: i1 * logUniform(rand, 3, 15) };
      if (d.rz !== undefined) values.rz = d.rz;
      if (d.rl !== undefined) values.rl = d.rl;
      return { values, variant: d.rz !== undefined ? 'with rz' : 'no rz' };
    }
    case 'single-stage': {
      const d = randomSingleStageDesigns(seed, i + 1)[i];
      const values: Values = { gm: d.gm, rout: d.rout, cout: d.cout, cl: d.cl, beta: d.beta, i_tail: d.i_tail ?? logUniform(rand, 1e-6, 1e-3) };
      if (d.gm_cas !== undefined) Object.assign(values, { gm_cas: d.gm_cas, c_cas: d.c_cas });
      if (d.gm_mirror !== undefined) Object.assign(values, { gm_mirror: d.gm_mirror, c_mirror: d.c_mirror });
      if (d.rl !== undefined) values.rl = d.rl;
      const variant = [d.gm_cas !== undefined ? 'cascode' : '', d.gm_mirror !== undefined ? 'mirror' : ''].filter(Boolean).join('+') || 'plain';
      return { values, variant };
    }
    case 'three-stage-nested-miller': {
      const d = randomThreeStageDesigns(seed, i + 1)[i];
      const i1 = logUniform(rand, 5e-6, 100e-6);
      const values: Values = { gm1: d.gm1, r1: d.r1, c1: d.c1, gm2: d.gm2, r2: d.r2, c2: d.c2, gm3: d.gm3, r3: d.r3, c3: d.c3, cc1: d.cc1, cc2: d.cc2, cl: d.cl, beta: d.beta, i1, i3: i1 * logUniform(rand, 5, 40) };
      if (d.rl !== undefined) values.rl = d.rl;
      // One in four with gm3 below gm2: the inner loop may leave right-half-plane poles in the open loop.
      const weak = logUniform(rand, 0.3, 0.9);
      if (i % 4 === 2) values.gm3 = d.gm2 * weak;
      return { values, variant: d.id.endsWith('-bw') && i % 4 !== 2 ? 'Butterworth' : values.gm3 > values.gm2 ? 'gm3 > gm2' : 'gm3 ≤ gm2' };
    }
    case 'common-source': {
      const d = randomCommonSourceDesigns(seed, i + 1)[i];
      const values: Values = { gm: d.gm, rout: d.rout, cgs: d.cgs, cgd: d.cgd, cdb: d.cdb, rs: d.rs, cl: d.cl };
      if (d.rl !== undefined) values.rl = d.rl;
      return { values, variant: d.rs > 0 ? 'rs' : 'rs = 0' };
    }
  }
}

/** Claims worth stating per topology (the ones a loop figure or a formula gives). */
const CLAIMS: Record<BuiltIn, string[]> = {
  'two-stage-miller': ['dc_gain', 'gbw', 'p2', 'rhp_zero', 'phase_margin', 'gain_margin', 'slew_rate'],
  'single-stage': ['dc_gain', 'gbw', 'p2', 'phase_margin', 'gain_margin', 'slew_rate'],
  'three-stage-nested-miller': ['dc_gain', 'gbw', 'p2', 'rhp_zero', 'phase_margin', 'gain_margin', 'slew_rate'],
  'common-source': ['dc_gain', 'bandwidth', 'p1', 'input_capacitance'],
};

/** Bounds rather than typical values for these (as datasheets state margins and slew rates). */
const AS_MIN = new Set(['phase_margin', 'gain_margin']);

/** Datasheet rows: name, symbol, unit, and how the canonical value is written in that unit. */
const ROW: Record<string, { name: string; symbol: string; unit: string; scale: number }> = {
  phase_margin: { name: 'Phase margin', symbol: 'PM', unit: '°', scale: 1 },
  gbw: { name: 'Unity-gain bandwidth', symbol: 'GBW', unit: 'MHz', scale: 1e-6 },
  slew_rate: { name: 'Slew rate', symbol: 'SR', unit: 'V/µs', scale: 1e-6 },
  dc_gain: { name: 'Open-loop gain', symbol: 'A0', unit: 'dB', scale: 1 },
};

/** A claim value off by a clear amount, in either direction (the rule's tolerance is ±10 %, ±1 dB, ±3°). */
function offValue(key: string, now: number, rand: () => number, extreme: boolean): number {
  if (extreme) return outOfReach(key, now, rand);
  const up = rand() < 0.6;
  switch (key) {
    case 'dc_gain':
      return now + (up ? 1 : -1) * (3 + 9 * rand());
    case 'phase_margin':
      // A few out of reach altogether.
      return Math.min(89, Math.max(now, 0) + 4 + (rand() < 0.15 ? 60 : 20) * rand());
    case 'gain_margin':
      return now + 3 + 12 * rand();
    default:
      return now * (up ? 1.3 + 1.2 * rand() : 0.35 + 0.4 * rand());
  }
}

/**
 * A claim no single knob is likely to reach within its range (three decades
 * either way): far more gain than any one stage gives, a phase margin of 89°
 * or more, figures four decades away.
 */
function outOfReach(key: string, now: number, rand: () => number): number {
  switch (key) {
    case 'dc_gain':
      return now + 70 + 30 * rand();
    case 'phase_margin':
      return 89 + 0.9 * rand();
    case 'gain_margin':
      return now + 60 + 30 * rand();
    default:
      return now * (rand() < 0.5 ? 1e4 * (1 + 9 * rand()) : 1e-4 / (1 + 9 * rand()));
  }
}

const topologyVariants: BuiltIn[] = ['two-stage-miller', 'two-stage-miller', 'single-stage', 'three-stage-nested-miller', 'common-source'];

/**
 * `count` failing specs from `seed`, the topologies in turn (two-stage twice
 * as often: with and without rz). Specs whose design cannot be evaluated, or
 * where no claim can be made to fail, are skipped.
 */
export function failingSpecs(seed: number, count: number, opts: { only?: BuiltIn[]; ranged?: boolean; outOfReach?: boolean } = {}): GeneratedSpec[] {
  const rand = mulberry32(seed);
  const out: GeneratedSpec[] = [];
  const topologies = opts.only ?? topologyVariants.filter((t) => !opts.ranged || t !== 'common-source');
  const drawn: Record<string, number> = {};
  for (let attempt = 0; out.length < count && attempt < count * 6; attempt++) {
    const topology = topologies[attempt % topologies.length];
    const i = (drawn[topology] = (drawn[topology] ?? -1) + 1);
    const g = buildSpec(topology, seed + 1000 * (attempt % topologies.length), i, rand, `${topology}-${seed}-${i}${opts.ranged ? '-ranged' : ''}${opts.outOfReach ? '-far' : ''}`, opts.ranged ?? false, opts.outOfReach ?? false);
    if (g) out.push(g);
  }
  return out;
}

/** A param worth spreading, per topology, besides the load. */
const SPREAD: Record<BuiltIn, string[]> = {
  'two-stage-miller': ['gm1', 'cc', 'gm2'],
  'single-stage': ['gm', 'gm_mirror', 'gm_cas'],
  'three-stage-nested-miller': ['gm2', 'cc2', 'gm3'],
  'common-source': ['gm'],
};

function buildSpec(topology: BuiltIn, designSeed: number, i: number, rand: () => number, id: string, ranged: boolean, extreme: boolean): GeneratedSpec | null {
  const t = topologyOf(topology);
  const { values: raw, variant } = designValues(topology, designSeed, i, rand);
  // Ranged specs: the load over a span, and one param over ±10–30 %.
  const spreads: Record<string, [number, number]> = {};
  if (ranged) {
    if (raw.cl > 0) spreads.cl = [logUniform(rand, 0.3, 0.7), logUniform(rand, 1.5, 3)];
    const p = SPREAD[topology].filter((k) => raw[k] !== undefined);
    const w = 0.1 + 0.2 * rand();
    const pick = p[Math.floor(rand() * p.length)];
    if (pick && (rand() < 0.7 || !spreads.cl)) spreads[pick] = [1 - w, 1 + w];
  }
  const ranges: Record<string, [number, number]> = {};
  // Written and read back: the spec's values are the reference's values.
  const values: Values = {};
  const paramLines: string[] = [];
  const conditionLines: string[] = [];
  for (const [k, x] of Object.entries(raw)) {
    const isCondition = t.conditions.some((c) => c.key === k);
    const kind = kindOf(t, k);
    if (k === 'cl' && x === 0) {
      values.cl = 0;
      conditionLines.push('  cl: 0 F');
      continue;
    }
    if (k === 'rs' && x === 0) {
      values.rs = 0;
      conditionLines.push('  rs: 0 Ω');
      continue;
    }
    const w = kind === 'ratio' ? { text: String(+x.toPrecision(3)), value: +x.toPrecision(3) } : written(x, kind);
    values[k] = w.value;
    const spread = spreads[k];
    if (spread) {
      const lo = written(x * spread[0], kind);
      const hi = written(x * spread[1], kind);
      ranges[k] = [lo.value, hi.value];
      (isCondition ? conditionLines : paramLines).push(`  ${k}: {min: ${lo.text}, typ: ${w.text}, max: ${hi.text}}`);
    } else (isCondition ? conditionLines : paramLines).push(`  ${k}: ${w.text}`);
  }
  let model;
  try {
    model = evaluate(t, values);
  } catch {
    return null;
  }
  const figureOf = (key: string, at: Values = values): number | null => {
    try {
      return (at === values ? model : evaluate(t, at)).exact[key]?.value ?? null;
    } catch {
      return null;
    }
  };
  // A margin withheld because the loop is unstable is a claim that fails as it stands.
  const unstable = model.loop.stability === 'unstable';
  const candidates = CLAIMS[topology].filter((k) => figureOf(k) !== null || (unstable && (k === 'phase_margin' || k === 'gain_margin')));
  if (candidates.length < 2) return null;
  const shuffled = [...candidates].sort(() => rand() - 0.5);
  const nFail = rand() < 0.3 ? 2 : 1;
  const failing = shuffled.slice(0, nFail);
  const holding = shuffled.slice(nFail, nFail + 2 + Math.floor(rand() * 2));

  const statements: Statement[] = [];
  const lines: string[] = ['---', 'polecheck: 1', `block: ${id}`, `topology: ${topology}`, 'params:', ...paramLines, 'conditions:', ...conditionLines, 'claims:'];
  for (const key of [...failing, ...holding].sort((a, b) => CLAIMS[topology].indexOf(a) - CLAIMS[topology].indexOf(b))) {
    const now = figureOf(key) ?? (key === 'phase_margin' ? 40 + 25 * rand() : 5 + 10 * rand());
    const isFailing = failing.includes(key);
    const kind = kindOf(t, key);
    const bound: 'typ' | 'min' = AS_MIN.has(key) || (key === 'slew_rate' && rand() < 0.5) ? 'min' : 'typ';
    // A holding bound sits a little under the figure, a holding typical value on it (3 digits).
    // (A withheld margin fails whatever it is claimed at: `now` is then a plausible claim.)
    const target = isFailing && figureOf(key) !== null ? offValue(key, now, rand, extreme) : bound === 'min' ? (kind === 'angle' || kind === 'gain' ? now - 4 - 4 * rand() : now * 0.75) : now;
    const w = written(target, kind, 3);
    statements.push({ key, bound, value: w.value, line: lines.length + 1, conditions: {}, row: false });
    lines.push(bound === 'min' ? `  ${key}: {min: ${w.text}}` : `  ${key}: ${w.text}`);
  }
  lines.push('---', '', `# ${id}`, '', 'A generated block whose front matter misses some of its claims on purpose.', '');

  // A datasheet row at other conditions, for some: it holds now and a change may break it.
  const rowKeys = ['phase_margin', 'gbw', 'slew_rate'].filter((k) => t.claims.some((c) => c.key === k) && figureOf(k) !== null);
  if (!ranged && topology !== 'common-source' && rowKeys.length && rand() < 0.4) {
    const cl = written(Math.max(values.cl ?? 0, 0.5e-12) * (1.5 + 2 * rand()), 'capacitance', 2);
    const beta = rand() < 0.5 ? undefined : +(0.2 + 0.6 * rand()).toPrecision(2);
    const at = { ...values, cl: cl.value, ...(beta !== undefined ? { beta } : {}) };
    const condText = `CL = ${cl.text}${beta !== undefined ? `, β = ${beta}` : ''}`;
    const rowLines = ['| Parameter | Symbol | Conditions | Min | Typ | Max | Unit |', '| --- | --- | --- | --- | --- | --- | --- |'];
    const rowStart = lines.length + rowLines.length + 1;
    const rows: Statement[] = [];
    for (const key of rowKeys.slice(0, 2)) {
      const now = figureOf(key, at);
      if (now === null) continue;
      const r = ROW[key];
      const bound = key === 'gbw' ? 'typ' : 'min';
      const target = bound === 'typ' ? now : key === 'phase_margin' ? now - 3 - 5 * rand() : now * 0.7;
      const shown = +(target * r.scale).toPrecision(3);
      const back = parseQuantity(`${shown} ${r.unit}`, kindOf(t, key));
      if (!back.ok) throw new Error(`cannot read back ${shown} ${r.unit}`);
      const cells = bound === 'typ' ? ` | ${shown} | ` : `${shown} |  | `;
      rowLines.push(`| ${r.name} | ${r.symbol} | ${condText} | ${cells} | ${r.unit} |`);
      rows.push({ key, bound, value: back.quantity.value, line: rowStart + rows.length, conditions: { cl: cl.value, ...(beta !== undefined ? { beta } : {}) }, row: true });
    }
    if (rows.length) {
      lines.push(...rowLines, '');
      statements.push(...rows);
    }
  }
  // Defaults the topology fills in, so the reference sees every value.
  for (const c of [...t.params, ...t.conditions]) if (c.default !== undefined && values[c.key] === undefined) values[c.key] = c.default;
  return { id, topology, variant: ranged ? `${variant}, ranged ${Object.keys(ranges).join(', ')}` : variant, text: lines.join('\n'), values, statements, failing, ranges };
}

/** Netlist elements and ports of a built-in topology at these values (the reference harness's netlist writers). */
export function elementsOf(topology: BuiltIn, v: Values, id: string): { elements: string[]; ports: Ports } {
  const rl = v.rl !== undefined && Number.isFinite(v.rl) ? { rl: v.rl } : {};
  switch (topology) {
    case 'two-stage-miller': {
      const d: TwoStageDesign = { id, gm1: v.gm1, r1: v.r1, c1: v.c1, gm2: v.gm2, r2: v.r2, c2: v.c2, cc: v.cc, cl: v.cl ?? 0, beta: v.beta ?? 1, ...rl, ...(v.rz ? { rz: v.rz } : {}) };
      return { elements: twoStageElements(d), ports: PORTS };
    }
    case 'single-stage': {
      const d: SingleStageDesign = { id, gm: v.gm, rout: v.rout, cout: v.cout, cl: v.cl ?? 0, beta: v.beta ?? 1, ...rl };
      if (v.gm_cas !== undefined) Object.assign(d, { gm_cas: v.gm_cas, c_cas: v.c_cas });
      if (v.gm_mirror !== undefined) Object.assign(d, { gm_mirror: v.gm_mirror, c_mirror: v.c_mirror });
      return { elements: singleStageElements(d), ports: PORTS };
    }
    case 'three-stage-nested-miller': {
      const d: ThreeStageDesign = { id, gm1: v.gm1, r1: v.r1, c1: v.c1, gm2: v.gm2, r2: v.r2, c2: v.c2, gm3: v.gm3, r3: v.r3, c3: v.c3, cc1: v.cc1, cc2: v.cc2, cl: v.cl ?? 0, beta: v.beta ?? 1, ...rl };
      return { elements: threeStageElements(d), ports: PORTS };
    }
    case 'common-source': {
      const d: CommonSourceDesign = { id, gm: v.gm, rout: v.rout, cgs: v.cgs, cgd: v.cgd, cdb: v.cdb, rs: v.rs ?? 0, cl: v.cl ?? 0, ...rl };
      return { elements: commonSourceElements(d), ports: CS_PORTS };
    }
  }
}

/**
 * Slew rate by the formulas the format states (SPEC-FORMAT §2: two-stage
 * min(i1/cc, (i2 − i1)/(c2 + cl)), P. E. Allen, D. R. Holberg, "CMOS Analog
 * Circuit Design", ch. 6; a one-stage OTA i_tail/(cout + cl); the three-stage
 * block min(i1/cc1, i3/(c3 + cl)), the README's first-order figure).
 * Null where the formula gives none.
 */
export function slewRateOf(topology: BuiltIn, v: Values): number | null {
  const cl = v.cl ?? 0;
  if (topology === 'two-stage-miller') {
    if (v.i1 === undefined || v.i2 === undefined || !(v.i2 > v.i1)) return null;
    const cOut = v.c2 + cl;
    return Math.min(v.i1 / v.cc, cOut > 0 ? (v.i2 - v.i1) / cOut : Infinity);
  }
  if (topology === 'single-stage') return v.i_tail === undefined || !(v.cout + cl > 0) ? null : v.i_tail / (v.cout + cl);
  if (topology === 'three-stage-nested-miller') {
    if (v.i1 === undefined || v.i3 === undefined) return null;
    const c = v.c3 + cl;
    return Math.min(v.i1 / v.cc1, c > 0 ? v.i3 / c : Infinity);
  }
  return null;
}
