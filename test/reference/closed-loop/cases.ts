// Seeded closed-loop cases for the ngspice time- and frequency-domain checks:
// every topology with a loop, its open-loop netlist written from the design
// parameters by the existing reference harnesses (not from the engine's
// network), plus the loop: a gain (non-inverting 1/β, or inverting for every
// third case) and, for the slew checks, a tail current.
//
// Designs: the seeded random designs of test/reference/designs.ts and
// ./topologies/designs.ts (their ranges are documented there), and for the
// user-defined network the demo spec specs/strand/feedforward-amp.md with
// seeded variations of its element values. Cases whose closed loop is
// unstable or barely damped (phase margin below MIN_PM_DEG at their β) are
// passed over: a time-domain comparison of a loop that rings for thousands of
// periods measures the simulator's patience, not the model.

import { readFileSync } from 'node:fs';
import { load } from 'js-yaml';
import { evaluate } from '../../../src/model/model';
import { type Kind, parseQuantity } from '../../../src/quantity';
import { networkTopology, type NetworkDef } from '../../../src/topologies/network';
import { singleStage } from '../../../src/topologies/single-stage';
import { threeStageNestedMiller } from '../../../src/topologies/three-stage-nested-miller';
import { twoStageMiller } from '../../../src/topologies/two-stage-miller';
import type { Topology, Values } from '../../../src/topologies/types';
import { mulberry32, randomTwoStageDesigns } from '../designs';
import { spiceNum as n, twoStageElements } from '../netlist';
import { randomSingleStageDesigns, randomThreeStageDesigns } from '../topologies/designs';
import { singleStageElements, threeStageElements } from '../topologies/netlist';

export type LoopTopology = 'two-stage-miller' | 'single-stage' | 'three-stage-nested-miller' | 'network';
export const LOOP_TOPOLOGIES: readonly LoopTopology[] = ['two-stage-miller', 'single-stage', 'three-stage-nested-miller', 'network'];

/** Closed loops with less phase margin than this are passed over (see above). */
export const MIN_PM_DEG = 25;

export interface LoopCase {
  id: string;
  topology: Topology;
  /** Params and conditions as the engine reads them (beta, gain, cl, rl, …). */
  values: Values;
  beta: number;
  /** Signed ideal gain: 1/β non-inverting, 1 − 1/β inverting. */
  gain: number;
  /** Open-loop element lines, the input node `in`, the output `out`; no source. */
  elements: string[];
  /** The input pair for the slew checks: its element lines are those controlled by `in`. */
  pair: { gm: number; tail: number };
}

const withoutSource = (lines: string[]) => lines.filter((l) => !/^vin\s/i.test(l));

/** A tail current for designs that state none: the pair's gm times an overdrive-like voltage of 50–200 mV. */
const tailFor = (rand: () => number, gm: number) => gm * 0.05 * Math.pow(4, rand());

function loopOf(i: number, beta: number): { beta: number; gain: number } {
  // Every third case inverting, with the same β: G = 1 − 1/β (|G| = 1/β − 1, noise gain 1/β).
  if (i % 3 === 2 && beta < 0.9) return { beta, gain: 1 - 1 / beta };
  return { beta, gain: 1 / beta };
}

/**
 * A case before tuning: its design record, how the engine values and the
 * netlist follow from it, and the element whose value sets the damping.
 */
interface Draft {
  id: string;
  topology: Topology;
  design: Record<string, number>;
  /** The compensation element scaled to reach a phase margin. */
  knob: string;
  build(design: Record<string, number>): { values: Values; elements: string[] };
  beta: number;
  gain: number;
  pair: { gm: number; tail: number };
}

function twoStageDrafts(seed: number, count: number): Draft[] {
  const rand = mulberry32(seed ^ 0x5eed);
  return randomTwoStageDesigns(seed, count).map((d, i) => {
    const { beta, gain } = loopOf(i, d.beta);
    const tail = tailFor(rand, d.gm1);
    const { id: _id, ...design } = d;
    return {
      id: d.id, topology: twoStageMiller, design: design as unknown as Record<string, number>, knob: 'cc', beta, gain, pair: { gm: d.gm1, tail },
      build: (x) => ({ values: { ...x, rz: x.rz ?? 0, beta, gain, i1: tail }, elements: withoutSource(twoStageElements({ ...(x as unknown as typeof d), id: d.id })) }),
    };
  });
}

function singleStageDrafts(seed: number, count: number): Draft[] {
  const rand = mulberry32(seed ^ 0x5eed);
  return randomSingleStageDesigns(seed, count).map((d, i) => {
    const { beta, gain } = loopOf(i, d.beta);
    const tail = d.i_tail ?? tailFor(rand, d.gm);
    const { id: _id, ...design } = d;
    // The output node carries the dominant pole: its load sets the crossover against the inner nodes.
    return {
      id: d.id, topology: singleStage, design: { ...design, cl: d.cl || 1e-13 } as unknown as Record<string, number>, knob: 'cl', beta, gain, pair: { gm: d.gm, tail },
      build: (x) => ({ values: { ...x, beta, gain, i_tail: tail }, elements: withoutSource(singleStageElements({ ...(x as unknown as typeof d), id: d.id })) }),
    };
  });
}

function threeStageDrafts(seed: number, count: number): Draft[] {
  const rand = mulberry32(seed ^ 0x5eed);
  return randomThreeStageDesigns(seed, count).map((d, i) => {
    const { beta, gain } = loopOf(i, d.beta);
    const tail = tailFor(rand, d.gm1);
    const { id: _id, ...design } = d;
    return {
      id: d.id, topology: threeStageNestedMiller, design: design as unknown as Record<string, number>, knob: 'cc1', beta, gain, pair: { gm: d.gm1, tail },
      build: (x) => ({ values: { ...x, beta, gain, i1: tail }, elements: withoutSource(threeStageElements({ ...(x as unknown as typeof d), id: d.id })) }),
    };
  });
}

type SpecElement = { kind: string; between?: unknown[]; into?: unknown; from?: unknown; control?: unknown[]; value: string };
const KIND_OF = { resistor: 'resistance', capacitor: 'capacitance', transconductance: 'conductance' } as const;

/** The demo network spec, its element values varied by a seeded factor of 0.5–1.6, β drawn in 0.1–1. */
function networkDrafts(seed: number, count: number): Draft[] {
  const text = readFileSync('specs/strand/feedforward-amp.md', 'utf8');
  const front = load(text.split(/^---\s*$/m)[1]) as { network: { input: string; output: string; nodes: unknown[]; elements: Record<string, SpecElement> }; conditions: { cl: string } };
  const node = (x: unknown) => (String(x) === 'gnd' ? '0' : String(x));
  const at = { line: 1, column: 1, offset: 0 };
  const def: NetworkDef = {
    input: front.network.input,
    output: front.network.output,
    nodes: front.network.nodes.map(String),
    elements: Object.entries(front.network.elements).map(([name, e]) =>
      e.kind === 'transconductance'
        ? { name, kind: 'transconductance', a: node(e.from ?? 0), b: node(e.into), ctrlP: node(e.control![0]), ctrlN: node(e.control![1]), pos: at }
        : { name, kind: e.kind as 'resistor' | 'capacitor', a: node(e.between![0]), b: node(e.between![1]), pos: at },
    ),
  };
  const topology = networkTopology(def);
  const si = (t: string, kind: Kind) => {
    const q = parseQuantity(t, kind);
    if (!q.ok) throw new Error(t);
    return q.quantity.value;
  };
  const build = (x: Record<string, number>, beta: number, gain: number) => {
    const lines: string[] = [];
    for (const [name, e] of Object.entries(front.network.elements)) {
      const v = n(x[name]);
      if (e.kind === 'resistor') lines.push(`R${name} ${node(e.between![0])} ${node(e.between![1])} ${v}`);
      else if (e.kind === 'capacitor') lines.push(`C${name} ${node(e.between![0])} ${node(e.between![1])} ${v}`);
      else lines.push(`G${name} ${node(e.from ?? 0)} ${node(e.into)} ${node(e.control![0])} ${node(e.control![1])} ${v}`);
    }
    lines.push(`CL ${node(front.network.output)} 0 ${n(x.cl)}`);
    return { values: { ...x, beta, gain }, elements: lines };
  };
  const rand = mulberry32(seed);
  const out: Draft[] = [];
  for (let i = 0; i < count; i++) {
    const design: Record<string, number> = {};
    for (const [name, e] of Object.entries(front.network.elements)) design[name] = si(e.value, KIND_OF[e.kind as keyof typeof KIND_OF]) * (0.5 + 1.1 * rand());
    design.cl = si(front.conditions.cl, 'capacitance') * (0.3 + 2 * rand());
    const { beta, gain } = loopOf(i, 0.1 * Math.pow(10, rand()));
    out.push({ id: `net-${seed}-${String(i).padStart(3, '0')}`, topology, design, knob: 'cc', beta, gain, pair: { gm: design.gm1, tail: design.gm1 * 0.1 }, build: (x) => build(x, beta, gain) });
  }
  return out;
}

const phaseMargin = (t: Topology, v: Values): number | null => {
  const m = evaluate(t, v);
  return m.loop.stability === 'stable' ? m.loop.phaseMargin.value : null;
};

/**
 * Every other case as drawn (random designs are mostly well damped), the
 * others with the knob scaled (bisection in log over a factor of 100 either
 * way) to a phase margin drawn in 30–75°, so that ringing and peaking are
 * exercised too. Null when the draft cannot be made stable with MIN_PM_DEG.
 */
function finish(d: Draft, i: number, rand: () => number): LoopCase | null {
  let design = d.design;
  if (i % 2 === 1) {
    const target = 30 + 45 * rand();
    const at = (s: number) => ({ ...d.design, [d.knob]: d.design[d.knob] * s });
    const pmAt = (s: number) => phaseMargin(d.topology, d.build(at(s)).values) ?? -Infinity;
    let lo = Math.log(0.01);
    let hi = Math.log(100);
    // More compensation (or load, for the one-stage OTA: less) more margin.
    const up = pmAt(Math.exp(hi)) > pmAt(Math.exp(lo));
    for (let k = 0; k < 40; k++) {
      const mid = 0.5 * (lo + hi);
      if (pmAt(Math.exp(mid)) < target === up) lo = mid;
      else hi = mid;
    }
    design = at(Math.exp(0.5 * (lo + hi)));
  }
  const { values, elements } = d.build(design);
  const pm = phaseMargin(d.topology, values);
  if (pm === null || pm < MIN_PM_DEG) return null;
  return { id: `${d.id}${i % 2 === 1 ? '-tuned' : ''}`, topology: d.topology, values, beta: d.beta, gain: d.gain, elements, pair: d.pair };
}

/** Seeded cases of one topology, the first `count` that are stable with at least MIN_PM_DEG (drawn from up to 4·count designs). */
export function loopCases(topology: LoopTopology, count: number, seed = 1201): { cases: LoopCase[]; drawn: number; passedOver: string[] } {
  const pool = 4 * count;
  const drafts = topology === 'two-stage-miller' ? twoStageDrafts(seed, pool) : topology === 'single-stage' ? singleStageDrafts(seed, pool) : topology === 'three-stage-nested-miller' ? threeStageDrafts(seed, pool) : networkDrafts(seed, pool);
  const rand = mulberry32(seed ^ 0x7a9e);
  const cases: LoopCase[] = [];
  const passedOver: string[] = [];
  let drawn = 0;
  for (const [i, d] of drafts.entries()) {
    if (cases.length >= count) break;
    drawn++;
    const c = finish(d, i, rand);
    if (c) cases.push(c);
    else passedOver.push(d.id);
  }
  return { cases, drawn, passedOver };
}
