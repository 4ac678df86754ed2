// A user-defined small-signal network: named nodes, resistors, capacitors and
// transconductances written in the front matter, so a block that no built-in
// topology covers can still be checked. The load (cl, rl) sits at the output
// node; β closes the loop from the output to the input.

import type { Element, Network } from '../engine/network';
import { GROUND } from '../engine/network';
import { DEFAULT_TEMPERATURE, type NoiseModel, type NoiseSource, fourKT } from '../engine/noise';
import type { Pos } from '../spec/position';
import { commonClaims, loadConditions, loopBeta, noiseClaims, temperatureCondition } from './common';
import type { KeySpec, Topology, Values } from './types';

export type ElementKind = 'resistor' | 'capacitor' | 'transconductance';

export interface NetworkElementDef {
  name: string;
  kind: ElementKind;
  /** Two-terminal elements: the nodes it joins. Transconductance: current leaves `a` and enters `b`. */
  a: string;
  b: string;
  /** Transconductance only: the controlling voltage v(ctrlP) − v(ctrlN). */
  ctrlP?: string;
  ctrlN?: string;
  /** Noise the element adds: resistors `thermal` (the default), transconductances `channel` (4kTγ·gm), or `none`. */
  noise?: ElementNoise;
  /** Channel-noise factor of a transconductance with `noise: channel` (2/3 when absent). */
  gamma?: number;
  pos: Pos;
}

export type ElementNoise = 'thermal' | 'channel' | 'none';

/** The noise each kind of element may carry, the default first. */
export const ELEMENT_NOISE: Record<ElementKind, readonly ElementNoise[]> = {
  resistor: ['thermal', 'none'],
  capacitor: ['none'],
  transconductance: ['none', 'channel'],
};

export interface NetworkDef {
  input: string;
  output: string;
  nodes: string[];
  elements: NetworkElementDef[];
}

export const GROUND_NAMES = ['0', 'gnd'];
export const ELEMENT_KINDS: readonly ElementKind[] = ['resistor', 'capacitor', 'transconductance'];

const KIND_OF: Record<ElementKind, KeySpec['kind']> = { resistor: 'resistance', capacitor: 'capacitance', transconductance: 'conductance' };

const node = (n: string): string => (GROUND_NAMES.includes(n) ? GROUND : n);

export interface StructureProblem {
  pos: Pos;
  message: string;
}

/**
 * Structural checks that need no values: every node an element names is
 * declared, no node hangs on a single element terminal, input and output are
 * declared nodes.
 */
export function checkStructure(def: NetworkDef, networkPos: Pos): StructureProblem[] {
  const problems: StructureProblem[] = [];
  const declared = new Set(def.nodes.map(node));
  for (const [role, n] of [['input', def.input], ['output', def.output]] as const) {
    if (!declared.has(node(n)) || node(n) === GROUND) problems.push({ pos: networkPos, message: `the ${role} node \`${n}\` is not one of the declared nodes` });
  }
  const touches = new Map<string, string[]>();
  for (const e of def.elements) {
    const terminals = e.kind === 'transconductance' ? [e.a, e.b, e.ctrlP!, e.ctrlN!] : [e.a, e.b];
    for (const t of terminals) {
      if (!declared.has(node(t)) && node(t) !== GROUND) {
        problems.push({ pos: e.pos, message: `element \`${e.name}\` connects to \`${t}\`, which is not a declared node (declared: ${def.nodes.join(', ')}; ground is 0 or gnd)` });
      }
    }
    if (e.kind !== 'transconductance' && node(e.a) === node(e.b)) problems.push({ pos: e.pos, message: `element \`${e.name}\` has both ends on \`${e.a}\`` });
    // Only the terminals that carry current count as connections.
    for (const t of [e.a, e.b]) {
      const list = touches.get(node(t)) ?? [];
      list.push(e.name);
      touches.set(node(t), list);
    }
  }
  for (const n of declared) {
    if (n === GROUND || n === node(def.input)) continue;
    const list = touches.get(n) ?? [];
    if (list.length === 0) problems.push({ pos: networkPos, message: `node \`${n}\` is declared but no element carries current into it` });
    else if (list.length === 1 && n !== node(def.output)) {
      const e = def.elements.find((x) => x.name === list[0])!;
      problems.push({ pos: e.pos, message: `node \`${n}\` is reached only by \`${e.name}\`: a dangling element` });
    }
  }
  return problems;
}

/** Declared nodes with no resistive path to ground or to the input source, for messages. */
export function floatingNodes(def: NetworkDef): string[] {
  const adj = new Map<string, string[]>();
  const link = (x: string, y: string) => {
    adj.set(x, [...(adj.get(x) ?? []), y]);
    adj.set(y, [...(adj.get(y) ?? []), x]);
  };
  for (const e of def.elements) if (e.kind === 'resistor') link(node(e.a), node(e.b));
  const seen = new Set<string>([GROUND, node(def.input)]);
  const stack = [GROUND, node(def.input)];
  while (stack.length) for (const y of adj.get(stack.pop()!) ?? []) if (!seen.has(y)) (seen.add(y), stack.push(y));
  return def.nodes.map(node).filter((n) => !seen.has(n));
}

export function networkTopology(def: NetworkDef): Topology {
  return {
    id: 'network',
    title: 'User-defined small-signal network',
    params: def.elements.map((e) => ({
      key: e.name,
      kind: KIND_OF[e.kind],
      required: true,
      description: `${e.kind} ${e.name}`,
    })),
    conditions: [...loadConditions, temperatureCondition],
    claims: [...commonClaims.filter((c) => c.key !== 'slew_rate'), { key: 'bandwidth', kind: 'frequency', better: 'higher', description: '−3 dB frequency of A(jω)' }, ...noiseClaims()],

    network(v: Values): Network {
      const out = node(def.output);
      const elements: Element[] = def.elements.map((e): Element => {
        const value = v[e.name];
        if (e.kind === 'resistor') return { kind: 'conductance', name: e.name, a: node(e.a), b: node(e.b), siemens: 1 / value };
        if (e.kind === 'capacitor') return { kind: 'capacitance', name: e.name, a: node(e.a), b: node(e.b), farads: value };
        return { kind: 'vccs', name: e.name, a: node(e.a), b: node(e.b), ctrlP: node(e.ctrlP!), ctrlN: node(e.ctrlN!), gm: value };
      });
      if (v.cl) elements.push({ kind: 'capacitance', name: 'cl', a: out, b: GROUND, farads: v.cl });
      if (v.rl !== undefined && Number.isFinite(v.rl)) elements.push({ kind: 'conductance', name: 'rl', a: out, b: GROUND, siemens: 1 / v.rl });
      return { elements, input: node(def.input), output: out };
    },
    beta: loopBeta,
    largeSignal: () => ({}),
    noise(v: Values): NoiseModel {
      // A resistor's thermal noise 4kT/R and a transconductance's channel
      // noise 4kTγ·gm, each a current between the element's two nodes; the
      // load (cl, rl) is the test condition and noiseless.
      const k = fourKT(v.temperature ?? DEFAULT_TEMPERATURE);
      const sources: NoiseSource[] = [];
      for (const e of def.elements) {
        const noise = e.noise ?? ELEMENT_NOISE[e.kind][0];
        if (noise === 'none') continue;
        const psd = e.kind === 'resistor' ? k / v[e.name] : k * (e.gamma ?? 2 / 3) * v[e.name];
        sources.push({ name: `${e.name} (${noise})`, psd, into: [[node(e.a), 1], [node(e.b), -1]] });
      }
      return { sources, hand: { reason: 'a user-defined network has no textbook noise formula' } };
    },
    hand: () => ({ figures: {}, caveats: [] }),
    // Any element may be solved for; capacitors first, as compensation is where designs move.
    knobs: {
      ...Object.fromEntries(
        ['gbw', 'phase_margin', 'gain_margin', 'p1', 'p2', 'bandwidth'].map((c) => [c, def.elements.filter((e) => e.kind === 'capacitor').map((e) => e.name).slice(0, 3)]),
      ),
      // The closed loop's figures: the first two capacitors (each evaluation of a time figure costs a step response).
      ...Object.fromEntries(['closed_loop_bandwidth', 'peaking', 'overshoot', 'rise_time', 'settling_time'].map((c) => [c, def.elements.filter((e) => e.kind === 'capacitor').map((e) => e.name).slice(0, 2)])),
      // For noise, the noisy transconductances (more gm, less input noise), then the capacitors that set the noise bandwidth.
      input_noise: def.elements.filter((e) => e.kind === 'transconductance' && e.noise === 'channel').map((e) => e.name).slice(0, 3),
      integrated_noise: [...def.elements.filter((e) => e.kind === 'capacitor'), ...def.elements.filter((e) => e.kind === 'transconductance' && e.noise === 'channel')].map((e) => e.name).slice(0, 3),
    },
    hints: () => [],
    diagnose() {
      const floating = floatingNodes(def);
      if (!floating.length) return undefined;
      const first = def.elements.find((e) => floating.includes(node(e.a)) || floating.includes(node(e.b)));
      return { message: `no DC path to ground from ${floating.map((n) => `\`${n}\``).join(', ')} (only capacitors or current sources reach ${floating.length === 1 ? 'it' : 'them'})`, pos: first?.pos };
    },
  };
}
