// Seeded designs for the noise comparison with ngspice: the small-signal
// designs of the other harnesses (test/reference/designs.ts and
// ../topologies/designs.ts), each given the params of its noise sources from a
// stream of its own, and random user-defined networks. Deterministic.

import { mulberry32, randomTwoStageDesigns, type TwoStageDesign } from '../designs';
import { randomCommonSourceDesigns, randomSingleStageDesigns, randomThreeStageDesigns, type CommonSourceDesign, type SingleStageDesign, type ThreeStageDesign } from '../topologies/designs';

/** Noise params every built-in design gets: channel-noise factor and temperature. */
export interface NoiseExtras {
  gamma: number;
  temperature: number;
}

export type TwoStageNoise = TwoStageDesign & NoiseExtras & { gm_load1: number };
export type ThreeStageNoise = ThreeStageDesign & NoiseExtras & { gm_load1: number };
export type SingleStageNoise = SingleStageDesign & NoiseExtras & { gm_load: number; gm_fold?: number };
export type CommonSourceNoise = CommonSourceDesign & NoiseExtras & { gm_load?: number; r_load?: number };

export type NoiseTopology = 'two-stage-miller' | 'single-stage' | 'common-source' | 'three-stage-nested-miller';
export type AnyNoiseDesign = TwoStageNoise | ThreeStageNoise | SingleStageNoise | CommonSourceNoise;

const logUniform = (rand: () => number, lo: number, hi: number): number => lo * Math.pow(hi / lo, rand());

/** γ 0.5–2 (long-channel 2/3 to short-channel values), T 250–400 K, load gm 0.2–3× the input device's. */
function extras(rand: () => number): NoiseExtras & { loadRatio: number; foldRatio: number; withFold: boolean; resistorLoad: boolean } {
  return {
    gamma: logUniform(rand, 0.5, 2),
    temperature: 250 + 150 * rand(),
    loadRatio: logUniform(rand, 0.2, 3),
    foldRatio: logUniform(rand, 0.3, 3),
    withFold: rand() < 0.5,
    resistorLoad: rand() < 0.5,
  };
}

export const DESIGN_COUNT = 40;

export function noiseDesigns(kind: NoiseTopology, count = DESIGN_COUNT): AnyNoiseDesign[] {
  const rand = mulberry32({ 'two-stage-miller': 1301, 'single-stage': 1302, 'common-source': 1303, 'three-stage-nested-miller': 1304 }[kind]);
  if (kind === 'two-stage-miller') {
    return randomTwoStageDesigns(2601, count).map((d) => {
      const x = extras(rand);
      return { ...d, id: `noise-${d.id}`, gamma: x.gamma, temperature: x.temperature, gm_load1: x.loadRatio * d.gm1 };
    });
  }
  if (kind === 'three-stage-nested-miller') {
    return randomThreeStageDesigns(2604, count).map((d) => {
      const x = extras(rand);
      return { ...d, id: `noise-${d.id}`, gamma: x.gamma, temperature: x.temperature, gm_load1: x.loadRatio * d.gm1 };
    });
  }
  if (kind === 'single-stage') {
    return randomSingleStageDesigns(2602, count).map((d) => {
      const x = extras(rand);
      const out: SingleStageNoise = { ...d, id: `noise-${d.id}`, gamma: x.gamma, temperature: x.temperature, gm_load: x.loadRatio * d.gm };
      if (x.withFold) out.gm_fold = x.foldRatio * d.gm;
      return out;
    });
  }
  return randomCommonSourceDesigns(2603, count).map((d) => {
    const x = extras(rand);
    const out: CommonSourceNoise = { ...d, id: `noise-${d.id}`, gamma: x.gamma, temperature: x.temperature };
    // A resistor load is part of rout (rout = ro ∥ r_load): drawn at 1–5× rout.
    if (x.resistorLoad) out.r_load = d.rout * (1 + 4 * rand());
    else out.gm_load = x.loadRatio * d.gm;
    return out;
  });
}

/** One element of a random user-defined network, as the spec writes it. */
export interface RandomElement {
  name: string;
  kind: 'resistor' | 'capacitor' | 'transconductance';
  /** resistor/capacitor: the two nodes; transconductance: from, into. */
  a: string;
  b: string;
  control?: [string, string];
  value: number;
  noise?: 'none' | 'channel';
  gamma?: number;
}

export interface RandomNetwork {
  id: string;
  nodes: string[];
  elements: RandomElement[];
  cl: number;
  beta: number;
  temperature: number;
}

/**
 * Random networks: a chain of 1–3 gain stages from `in` to `out`, non-inverting overall
 * (each a transconductance into a node with a resistor and a capacitor to
 * ground, so every node has a DC path and the chain has gain), plus random
 * extras: bridging capacitors and resistors between nodes, a feedforward
 * transconductance. Resistors are noisy except one in four (`noise: none`);
 * transconductances carry channel noise with probability 3/4, γ 0.5–2.
 * Ranges: gm 20µS–5mS, R 10k–5MΩ, C 10f–2pF, cl 0.1–10pF, β 1 or 0.1–1.
 */
export function randomNetworks(seed: number, count = DESIGN_COUNT): RandomNetwork[] {
  const rand = mulberry32(seed);
  const out: RandomNetwork[] = [];
  for (let i = 0; i < count; i++) {
    const stages = 1 + Math.floor(rand() * 3);
    const nodes = ['in', ...Array.from({ length: stages - 1 }, (_, k) => `n${k + 1}`), 'out'];
    const elements: RandomElement[] = [];
    const noisyGm = () => (rand() < 0.75 ? { noise: 'channel' as const, gamma: logUniform(rand, 0.5, 2) } : { noise: 'none' as const });
    const resistor = (name: string, a: string, b: string, lo: number, hi: number) => elements.push({ name, kind: 'resistor', a, b, value: logUniform(rand, lo, hi), ...(rand() < 0.25 ? { noise: 'none' as const } : {}) });
    for (let k = 1; k < nodes.length; k++) {
      const [prev, node] = [nodes[k - 1], nodes[k]];
      // Inverting stages, the first one non-inverting when their number is odd: A(0) > 0, so that β closes a negative-feedback loop.
      const invert = !(k === 1 && stages % 2 === 1);
      elements.push({ name: `gm${k}`, kind: 'transconductance', a: invert ? node : '0', b: invert ? '0' : node, control: [prev, '0'], value: logUniform(rand, 20e-6, 5e-3), ...noisyGm() });
      resistor(`r${k}`, node, '0', 10e3, 5e6);
      elements.push({ name: `c${k}`, kind: 'capacitor', a: node, b: '0', value: logUniform(rand, 10e-15, 500e-15) });
    }
    // Extras, drawn unconditionally so the stream does not depend on the branches.
    const bridge = rand() < 0.6;
    const bridgeC = logUniform(rand, 100e-15, 2e-12);
    const shunt = rand() < 0.4;
    const ffw = rand() < 0.3;
    const ffwGm = logUniform(rand, 20e-6, 500e-6);
    if (bridge && nodes.length > 2) elements.push({ name: 'cc', kind: 'capacitor', a: nodes[1], b: 'out', value: bridgeC });
    if (shunt && nodes.length > 2) resistor('rb', nodes[1], 'out', 100e3, 10e6);
    if (ffw) elements.push({ name: 'gmf', kind: 'transconductance', a: '0', b: 'out', control: ['in', '0'], value: ffwGm, ...noisyGm() });
    const betaOne = rand() < 0.5;
    const beta = betaOne ? 1 : logUniform(rand, 0.1, 1);
    out.push({ id: `net-${seed}-${String(i).padStart(3, '0')}`, nodes, elements, cl: logUniform(rand, 0.1e-12, 10e-12), beta, temperature: 250 + 150 * rand() });
  }
  return out;
}
