// Loops whose stability is the question, as specs and as ngspice circuits,
// for test/reference/stability.live.test.ts:
// - three-stage nested-Miller blocks with gm3 below gm2 (the inner loop can
//   leave right-half-plane poles in the open loop);
// - ordinary two-stage Miller designs, some with too little compensation;
// - conditionally stable loops: a user-defined `network` of three low poles
//   and two zeros from feedforward paths (multipath compensation), so that the
//   phase of βA dips below −180° where |βA| ≫ 1 and comes back before the
//   crossover; optionally two fast stages after it that bring a gain-increase
//   margin; β spread so that some are stable and some not;
// - inverting networks (A(0) < 0): one and three inverting gm-RC stages, and
//   an inverting Miller amplifier, with |βA(0)| above and below 1.
// The seeded designs of ./designs.ts and ./topologies/designs.ts are reused;
// netlists of the built-in topologies come from their writers (./netlist.ts,
// ./topologies/netlist.ts); the network's netlist is written element by element
// from its definition, as in ./network/network.live.test.ts.

import type { Values } from '../../src/topologies/types';
import { mulberry32, randomTwoStageDesigns } from './designs';
import { elementsOf, topologyOf, written, type BuiltIn } from './failing-specs';
import { spiceNum } from './netlist';
import type { LoopJob } from './loop-reference';
import { randomThreeStageDesigns } from './topologies/designs';
import { PORTS } from './topologies/netlist';

export interface StabilityCase {
  id: string;
  /** What kind of loop, in words. */
  family: string;
  text: string;
  job: LoopJob;
}

const logUniform = (rand: () => number, lo: number, hi: number) => lo * Math.pow(hi / lo, rand());

/** Claims every case states: a margin of each kind, so that their verdicts can be checked. */
const CLAIMS = ['claims:', '  phase_margin: {min: 20 deg}', '  gain_margin: {min: 3 dB}'];

function builtInCase(topology: BuiltIn, id: string, family: string, raw: Values): StabilityCase {
  const t = topologyOf(topology);
  const values: Values = {};
  const params: string[] = [];
  const conditions: string[] = [];
  for (const [k, x] of Object.entries(raw)) {
    const spec = [...t.params, ...t.conditions].find((s) => s.key === k)!;
    const isCondition = t.conditions.includes(spec);
    if (x === 0) {
      values[k] = 0;
      conditions.push(`  ${k}: 0 F`);
      continue;
    }
    const w = spec.kind === 'ratio' ? { text: String(+x.toPrecision(3)), value: +x.toPrecision(3) } : written(x, spec.kind);
    values[k] = w.value;
    (isCondition ? conditions : params).push(`  ${k}: ${w.text}`);
  }
  const text = ['---', 'polecheck: 1', `block: ${id}`, `topology: ${topology}`, 'params:', ...params, 'conditions:', ...conditions, ...CLAIMS, '---', ''].join('\n');
  return { id, family, text, job: { id, ...elementsOf(topology, values, id), beta: values.beta ?? 1 } };
}

interface Element {
  name: string;
  kind: 'resistor' | 'capacitor' | 'transconductance';
  /** resistor/capacitor: the two nodes; transconductance: [from, into] (the current leaves `from`). */
  nodes: [string, string];
  control?: [string, string];
  value: number;
}

const UNIT = { resistor: 'resistance', capacitor: 'capacitance', transconductance: 'conductance' } as const;

/** A `network` spec and its netlist (SPICE G convention: `G from into ctrl+ ctrl− gm` takes the current out of `from`). */
function networkCase(id: string, family: string, nodes: string[], elements: Element[], beta: number): StabilityCase {
  const lines: string[] = [];
  const netlist = ['vin in 0 dc 0 ac 1'];
  for (const e of elements) {
    const w = written(e.value, UNIT[e.kind]);
    const v = w.value;
    if (e.kind === 'transconductance') {
      lines.push(`    ${e.name}: {kind: transconductance, from: ${e.nodes[0]}, into: ${e.nodes[1]}, control: [${e.control![0]}, ${e.control![1]}], value: ${w.text}}`);
      netlist.push(`G${e.name} ${e.nodes[0]} ${e.nodes[1]} ${e.control![0]} ${e.control![1]} ${spiceNum(v)}`);
    } else {
      lines.push(`    ${e.name}: {kind: ${e.kind}, between: [${e.nodes[0]}, ${e.nodes[1]}], value: ${w.text}}`);
      netlist.push(`${e.kind === 'resistor' ? 'R' : 'C'}${e.name} ${e.nodes[0]} ${e.nodes[1]} ${spiceNum(v)}`);
    }
  }
  const b = +beta.toPrecision(3);
  const text = [
    '---', 'polecheck: 1', `block: ${id}`, 'topology: network', 'network:', '  input: in', '  output: out', `  nodes: [${nodes.join(', ')}]`, '  elements:', ...lines,
    'conditions:', `  beta: ${b}`, ...CLAIMS, '---', '',
  ].join('\n');
  return { id, family, text, job: { id, elements: netlist, ports: PORTS, beta: b } };
}

/** A gm-RC stage from `ctrl` into `node`: inverting (the current leaves `node`) or not. */
const stage = (k: string, ctrl: string, node: string, gm: number, r: number, c: number, inverting: boolean): Element[] => [
  { name: `g${k}`, kind: 'transconductance', nodes: inverting ? [node, '0'] : ['0', node], control: [ctrl, '0'], value: gm },
  { name: `r${k}`, kind: 'resistor', nodes: [node, '0'], value: r },
  { name: `c${k}`, kind: 'capacitor', nodes: [node, '0'], value: c },
];

/**
 * Three low poles near p and two zeros from feedforward transconductances
 * into the summing node (A ∝ [G³ + gf2·R·G·u + gf1·R·u²]/u³ with u = 1 + s/p,
 * G = gm·R), the zeros placed near `zeroRatio`·p; optionally two fast unity
 * stages after the summing node.
 */
/**
 * `mode`: 'above' puts β above the window of the phase dip (|βA| > 1 at both of
 * its −180° crossings: conditionally stable), 'inside' between them (the loop
 * encircles −1), 'below' under it (|βA| < 1 at both).
 */
function conditional(rand: () => number, id: string, tail: boolean, mode: 'above' | 'inside' | 'below'): StabilityCase {
  const r = 1e6;
  const fp = logUniform(rand, 300, 3000);
  const c = 1 / (2 * Math.PI * r * fp);
  const g = logUniform(rand, 60, 150) / r;
  const G = g * r;
  const zr = logUniform(rand, 8, 20);
  // (u + zr)² scaled so that its constant term is G³.
  const gf1 = (G ** 3 / (zr * zr)) / r;
  const gf2 = ((2 * zr * gf1 * r) / G) / r;
  const sum = tail ? 'n3' : 'out';
  const els: Element[] = [
    // Poles near each other but apart (a repeated root is ill-conditioned for any pole-zero search).
    ...stage('1', 'in', 'n1', g, r, c * logUniform(rand, 0.6, 0.8), false),
    ...stage('2', 'n1', 'n2', g, r, c, false),
    ...stage('3', 'n2', sum, g, r, c * logUniform(rand, 1.25, 1.6), false),
    { name: 'gf1', kind: 'transconductance', nodes: ['0', sum], control: ['in', '0'], value: gf1 },
    { name: 'gf2', kind: 'transconductance', nodes: ['0', sum], control: ['n1', '0'], value: gf2 },
  ];
  const nodes = ['in', 'n1', 'n2', sum];
  if (tail) {
    // Two unity-gain stages with poles a few times above the crossover gf1/(2π·c).
    const fc = gf1 / (2 * Math.PI * c);
    const ft = fc * logUniform(rand, 2, 6);
    const rt = 10e3;
    els.push(...stage('4', 'n3', 'n4', 1 / rt, rt, 1 / (2 * Math.PI * rt * ft), false), ...stage('5', 'n4', 'out', 1 / rt, rt, 1 / (2 * Math.PI * rt * ft * 1.7), false));
    nodes.push('n4', 'out');
  }
  // The window of the dip from the closed form of A below (|A| at its two −180° crossings).
  const dip = dipCrossings(els);
  const u = rand();
  const beta = !dip ? logUniform(rand, 1e-6, 0.3) : mode === 'above' ? Math.min(0.5, (1 / dip[1]) * 10 ** (0.3 + 1.7 * u)) : mode === 'inside' ? (1 / dip[1]) * (dip[1] / dip[0]) ** (0.15 + 0.7 * u) : (1 / dip[0]) * 10 ** (-0.3 - 1.2 * u);
  return networkCase(id, tail ? 'conditionally stable network with fast output stages' : 'conditionally stable network', nodes, els, beta);
}

/**
 * The chain's response from its elements by hand (each node r ∥ c, the
 * transconductances summed into it; nodes in signal order): |A| at the lower
 * and the upper −180° crossing of the phase dip, or null without a dip.
 */
function dipCrossings(els: Element[]): [number, number] | null {
  const at = (name: string) => els.find((e) => e.name === name)!.value;
  const z = (k: string, w: number) => {
    const r = at(`r${k}`);
    const d = { re: 1, im: w * r * at(`c${k}`) };
    const m = d.re * d.re + d.im * d.im;
    return { re: (r * d.re) / m, im: (-r * d.im) / m };
  };
  const mul = (a: { re: number; im: number }, b: { re: number; im: number }) => ({ re: a.re * b.re - a.im * b.im, im: a.re * b.im + a.im * b.re });
  const scale = (a: { re: number; im: number }, k: number) => ({ re: a.re * k, im: a.im * k });
  const H = (w: number) => {
    const v1 = scale(z('1', w), at('g1'));
    const v2 = scale(mul(z('2', w), v1), at('g2'));
    const i3 = { re: at('g3') * v2.re + at('gf2') * v1.re + at('gf1'), im: at('g3') * v2.im + at('gf2') * v1.im };
    let v = mul(z('3', w), i3);
    if (els.some((e) => e.name === 'g4')) v = mul(z('5', w), scale(mul(z('4', w), scale(v, at('g4'))), at('g5')));
    return v;
  };
  let prev = 0;
  let phase = 0;
  const crossings: number[] = [];
  for (let i = 0; i <= 4000; i++) {
    const w = 2 * Math.PI * 10 ** (-1 + (10 * i) / 4000);
    const h = H(w);
    const raw = Math.atan2(h.im, h.re);
    if (i > 0) {
      let d = raw - prev;
      d -= 2 * Math.PI * Math.round(d / (2 * Math.PI));
      const next = phase + d;
      if ((phase + Math.PI) * (next + Math.PI) < 0) crossings.push(Math.hypot(h.re, h.im));
      phase = next;
    } else phase = raw;
    prev = raw;
  }
  return crossings.length >= 2 && crossings[0] > crossings[1] && crossings[1] > 1 ? [crossings[0], crossings[1]] : null;
}

/** Every case, seeded. */
export function stabilityCases(seed: number): StabilityCase[] {
  const rand = mulberry32(seed);
  const out: StabilityCase[] = [];
  // Three-stage nested Miller with gm3 below gm2.
  const three = randomThreeStageDesigns(seed, 14);
  three.forEach((d, i) => {
    const { id: _id, rl, ...v } = d;
    const gm3 = d.gm2 * logUniform(rand, 0.15, 0.95);
    out.push(builtInCase('three-stage-nested-miller', `nmc-weak-gm3-${seed}-${i}`, 'three-stage, gm3 < gm2', { ...v, gm3, ...(rl !== undefined ? { rl } : {}) }));
  });
  // Ordinary two-stage designs; every other one with cc cut tenfold, no rz and gm1 above gm2, so that the
  // right-half-plane zero gm2/cc sits below the crossover gm1/cc (little margin, often none).
  randomTwoStageDesigns(seed, 12).forEach((d, i) => {
    const { id: _id, rl, rz, ...v } = d;
    const weak = logUniform(rand, 1.2, 4);
    const changed = i % 2 ? { cc: v.cc / 10, gm1: v.gm2 * weak } : { ...(rz !== undefined ? { rz } : {}) };
    out.push(builtInCase('two-stage-miller', `two-stage-${seed}-${i}`, i % 2 ? 'two-stage, gm1 > gm2, cc cut tenfold' : 'two-stage', { ...v, ...changed, ...(rl !== undefined ? { rl } : {}) }));
  });
  // Conditionally stable networks over a spread of β (the stable window lies between the two gain limits).
  // β above the dip's window (conditionally stable), inside it (unstable, though a Bode plot's margins look fine), below it.
  for (let i = 0; i < 18; i++) out.push(conditional(rand, `conditional-${seed}-${i}`, i % 2 === 1, (['above', 'inside', 'below'] as const)[i % 3]));
  // An open loop with a right-half-plane pole (a node whose own transconductance outweighs its resistor:
  // A = gm/(s·c − a), inverting at DC), stable when closed with β·gm > a; some with a second, fast pole.
  for (let i = 0; i < 8; i++) {
    const r = logUniform(rand, 50e3, 500e3);
    const gp = (1 / r) * logUniform(rand, 1.5, 4);
    const gm = logUniform(rand, 100e-6, 1e-3);
    const a = gp - 1 / r;
    const els: Element[] = [
      { name: 'gm', kind: 'transconductance', nodes: ['0', 'out'], control: ['in', '0'], value: gm },
      { name: 'gp', kind: 'transconductance', nodes: ['0', 'n1'], control: ['n1', '0'], value: gp },
      { name: 'r', kind: 'resistor', nodes: ['n1', '0'], value: r },
      { name: 'c', kind: 'capacitor', nodes: ['n1', '0'], value: logUniform(rand, 0.2e-12, 2e-12) },
    ];
    // The unstable node n1 drives the output through a unity stage (fast, or slower for every other one).
    els[0].nodes = ['0', 'n1'];
    const rt = 10e3;
    const ft = (gm / (2 * Math.PI * els[3].value)) * (i % 2 ? logUniform(rand, 2, 5) : logUniform(rand, 50, 200));
    els.push(...stage('2', 'n1', 'out', 1 / rt, rt, 1 / (2 * Math.PI * rt * ft), false));
    const beta = Math.min(1, ([0.4, 0.8, 1.3, 2, 5, 10, 40, 200][i] * a) / gm);
    out.push(networkCase(`open-loop-unstable-${seed}-${i}`, 'open loop with a right-half-plane pole', ['in', 'n1', 'out'], els, beta));
  }
  // Inverting networks: one stage, three stages, an inverting Miller amplifier; |βA(0)| both sides of 1.
  for (let i = 0; i < 6; i++) {
    const g = logUniform(rand, 50e-6, 2e-3);
    const r = logUniform(rand, 10e3, 1e6);
    const loop = [0.2, 0.6, 0.9, 1.5, 20, 300][i];
    const beta = Math.min(1, loop / (g * r));
    out.push(networkCase(`inverting-one-${seed}-${i}`, 'inverting, one stage', ['in', 'out'], stage('1', 'in', 'out', g, r, logUniform(rand, 0.1e-12, 5e-12), true), beta));
  }
  for (let i = 0; i < 6; i++) {
    const els: Element[] = [];
    const nodes = ['in', 'n1', 'n2', 'out'];
    let prev = 'in';
    let gain = 1;
    for (const [k, node] of [['1', 'n1'], ['2', 'n2'], ['3', 'out']] as const) {
      const g = logUniform(rand, 100e-6, 1e-3);
      const r = logUniform(rand, 20e3, 200e3);
      gain *= g * r;
      els.push(...stage(k, prev, node, g, r, logUniform(rand, 20e-15, 2e-12), true));
      prev = node;
    }
    const beta = Math.min(1, [0.3, 0.8, 0.95, 2, 50, 1e4][i] / gain);
    out.push(networkCase(`inverting-three-${seed}-${i}`, 'inverting, three stages', nodes, els, beta));
  }
  for (let i = 0; i < 4; i++) {
    // Non-inverting first stage, inverting second, Miller capacitor across the second: A(0) = −gm1·r1·gm2·r2.
    const gm1 = logUniform(rand, 50e-6, 500e-6);
    const r1 = logUniform(rand, 200e3, 2e6);
    const gm2 = logUniform(rand, 500e-6, 5e-3);
    const r2 = logUniform(rand, 20e3, 200e3);
    const els: Element[] = [
      ...stage('1', 'in', 'n1', gm1, r1, logUniform(rand, 20e-15, 100e-15), false),
      ...stage('2', 'n1', 'out', gm2, r2, logUniform(rand, 0.2e-12, 2e-12), true),
      { name: 'cc', kind: 'capacitor', nodes: ['n1', 'out'], value: logUniform(rand, 0.5e-12, 3e-12) },
    ];
    const beta = Math.min(1, [0.5, 0.9, 5, 1000][i] / (gm1 * r1 * gm2 * r2));
    out.push(networkCase(`inverting-miller-${seed}-${i}`, 'inverting Miller amplifier', ['in', 'n1', 'out'], els, beta));
  }
  return out;
}
