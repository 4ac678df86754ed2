// ngspice netlists for the noise comparison: the same small-signal networks
// as the AC harnesses (the element writers of ../netlist.ts and
// ../topologies/netlist.ts, written from the design params), with the noise
// of each device added as the trade does in small-signal netlists:
//
//   channel noise of a transconductance gm (γ, m devices): a resistor
//   Rn = 1/(m·γ·gm), whose thermal current noise 4kT/Rn is the devices'
//   4kTγ·gm·m, shorted by a 0 V source that senses that current (the
//   resistor loads nothing: no signal voltage ever appears across it), and a
//   current-controlled current source (F) per node that copies the sensed
//   current into the node where the device's current flows. A device whose
//   current enters two nodes (a cascode: out of its drain, into its source)
//   gets one F per node from the same sense source, so the two injections
//   are fully correlated.
//
// The small-signal resistors that model output resistances, 1/gm of diode
// and cascode nodes, the signal source's rs and the load rl are noiseless
// (ngspice's `noisy=0`); physical resistors (the nulling resistor rz, the
// resistors of a user-defined network) keep ngspice's own thermal noise
// 4kT/R. ngspice computes every density from its own Boltzmann constant and
// the circuit temperature (`.options temp`, in °C).

import { spiceNum } from '../netlist';
import { twoStageElements } from '../netlist';
import { commonSourceElements, singleStageElements, threeStageElements } from '../topologies/netlist';
import type { AnyNoiseDesign, CommonSourceNoise, NoiseTopology, RandomNetwork, SingleStageNoise, ThreeStageNoise, TwoStageNoise } from './designs';

const n = spiceNum;

/** A noise current from a resistor `r` (Ω) copied into nodes with weights: [resistor, sense source, copies]. */
export function noiseGenerator(name: string, r: number, into: Array<[node: string, weight: number]>): string[] {
  if (!(r > 0) || !Number.isFinite(r)) throw new Error(`noise resistor ${name} must be finite and positive, got ${r}`);
  const lines = [`Rn_${name} xn_${name} 0 ${n(r)}`, `Vn_${name} xn_${name} 0 dc 0`];
  into.forEach(([node, w], i) => {
    if (node !== '0') lines.push(`Fn_${name}_${i} 0 ${node} Vn_${name} ${n(w)}`);
  });
  return lines;
}

/** Channel noise of m devices of transconductance gm: Rn = 1/(m·γ·gm). */
const channel = (name: string, m: number, gamma: number, gm: number, into: Array<[string, number]>) => noiseGenerator(name, 1 / (m * gamma * gm), into);

/** Every resistor of the signal network made noiseless, except those named (physical resistors). */
function quiet(lines: string[], keepNoisy: string[] = []): string[] {
  return lines.map((l) => (/^R/i.test(l) && !keepNoisy.includes(l.split(/\s+/)[0].toUpperCase()) ? `${l} noisy=0` : l));
}

export function twoStageNoiseElements(d: TwoStageNoise): string[] {
  return [
    ...quiet(twoStageElements(d), ['RZ']),
    ...channel('in', 2, d.gamma, d.gm1, [['n1', 1]]),
    ...channel('load1', 2, d.gamma, d.gm_load1, [['n1', 1]]),
    ...channel('out', 1, d.gamma, d.gm2, [['out', 1]]),
  ];
}

export function threeStageNoiseElements(d: ThreeStageNoise): string[] {
  return [
    ...quiet(threeStageElements(d)),
    ...channel('in', 2, d.gamma, d.gm1, [['n1', 1]]),
    ...channel('load1', 2, d.gamma, d.gm_load1, [['n1', 1]]),
    ...channel('mid', 1, d.gamma, d.gm2, [['n2', 1]]),
    ...channel('out', 1, d.gamma, d.gm3, [['out', 1]]),
  ];
}

/**
 * Single stage: the input pair (and folding sources) where the signal current
 * goes — the cascode node xa, or split between out and the mirror node m; the
 * load devices at m and out (mirror) or both at out; the cascode devices from
 * out into xa (one F into each, same sign: the lumped xa is the inverted
 * source node, see the topology module).
 */
export function singleStageNoiseElements(d: SingleStageNoise): string[] {
  const cascode = d.gm_cas !== undefined;
  const mirror = d.gm_mirror !== undefined;
  const lines = quiet(singleStageElements(d));
  const pair = (name: string, gm: number) => {
    if (cascode) lines.push(...channel(name, 2, d.gamma, gm, [['xa', 1]]));
    else if (mirror) lines.push(...channel(`${name}a`, 1, d.gamma, gm, [['out', 1]]), ...channel(`${name}b`, 1, d.gamma, gm, [['m', 1]]));
    else lines.push(...channel(name, 2, d.gamma, gm, [['out', 1]]));
  };
  pair('in', d.gm);
  if (d.gm_fold !== undefined) pair('fold', d.gm_fold);
  if (mirror) lines.push(...channel('loada', 1, d.gamma, d.gm_load, [['m', 1]]), ...channel('loadb', 1, d.gamma, d.gm_load, [['out', 1]]));
  else lines.push(...channel('load', 2, d.gamma, d.gm_load, [['out', 1]]));
  if (cascode) lines.push(...channel('cas', 2, d.gamma, d.gm_cas!, [['xa', 1], ['out', 1]]));
  return lines;
}

/** Common source: the device and an active load (channel noise) or a resistor load (a copy of a resistor of the load's value) at the drain. */
export function commonSourceNoiseElements(d: CommonSourceNoise): string[] {
  const lines = [...quiet(commonSourceElements(d)), ...channel('dev', 1, d.gamma, d.gm, [['d', 1]])];
  if (d.gm_load !== undefined) lines.push(...channel('load', 1, d.gamma, d.gm_load, [['d', 1]]));
  if (d.r_load !== undefined) lines.push(...noiseGenerator('rload', d.r_load, [['d', 1]]));
  return lines;
}

/** A user-defined network written element by element (G: the current leaves `from` and enters `into`). */
export function networkNoiseElements(net: RandomNetwork): string[] {
  const lines = ['vin in 0 dc 0 ac 1'];
  for (const e of net.elements) {
    if (e.kind === 'resistor') lines.push(`R${e.name} ${e.a} ${e.b} ${n(e.value)}${e.noise === 'none' ? ' noisy=0' : ''}`);
    else if (e.kind === 'capacitor') lines.push(`C${e.name} ${e.a} ${e.b} ${n(e.value)}`);
    else {
      lines.push(`G${e.name} ${e.a} ${e.b} ${e.control![0]} ${e.control![1]} ${n(e.value)}`);
      if (e.noise === 'channel') lines.push(...noiseGenerator(e.name, 1 / ((e.gamma ?? 2 / 3) * e.value), [[e.a, 1], [e.b, -1]]));
    }
  }
  lines.push(`CL out 0 ${n(net.cl)}`);
  return lines;
}

export const NOISE_OUTPUT: Record<NoiseTopology | 'network', string> = {
  'two-stage-miller': 'out',
  'single-stage': 'out',
  'three-stage-nested-miller': 'out',
  'common-source': 'd',
  network: 'out',
};

export function noiseElements(kind: NoiseTopology, d: AnyNoiseDesign): string[] {
  if (kind === 'two-stage-miller') return twoStageNoiseElements(d as TwoStageNoise);
  if (kind === 'three-stage-nested-miller') return threeStageNoiseElements(d as ThreeStageNoise);
  if (kind === 'single-stage') return singleStageNoiseElements(d as SingleStageNoise);
  return commonSourceNoiseElements(d as CommonSourceNoise);
}

/**
 * The loop closed with ideal feedback: the source now drives an internal
 * node x, and V(in) = V(x) − β·V(out) through a voltage-controlled voltage
 * source, as the engine closes the loop (vin − β·vout at the input).
 */
export function closeLoop(elements: string[], beta: number, output: string): string[] {
  const source = elements.findIndex((l) => /^vin in 0 /.test(l));
  if (source < 0) throw new Error('no `vin in 0` source to close the loop around');
  return [...elements.slice(0, source), 'vin xfb 0 dc 0 ac 1', `Efb in xfb ${output} 0 ${n(-beta)}`, ...elements.slice(source + 1)];
}

export const NOISE_MARK = { spectrum: ['@@NOISE1_BEGIN', '@@NOISE1_END'], total: ['@@NOISE2_BEGIN', '@@NOISE2_END'] } as const;

/**
 * A noise deck: the elements, the circuit temperature, and a `noise` analysis
 * of v(output) against vin over [f1, f2] at `perDecade` points, printing the
 * output and input-referred densities (V/√Hz) and their integrals over the
 * sweep (V rms) between markers.
 */
export function noiseDeck(title: string, elements: string[], output: string, temperatureK: number, f1: number, f2: number, perDecade: number): string {
  return [
    `* polecheck noise reference ${title.replace(/[^\w.+-]/g, '_')}`,
    ...elements,
    `.options temp=${n(temperatureK - 273.15)}`,
    '.control',
    'option numdgt=17',
    'set nobreak',
    'set width=400',
    `noise v(${output}) vin dec ${perDecade} ${n(f1)} ${n(f2)}`,
    `echo ${NOISE_MARK.spectrum[0]}`,
    'setplot noise1',
    'echo @@PLOT $curplot',
    'print onoise_spectrum inoise_spectrum',
    `echo ${NOISE_MARK.spectrum[1]}`,
    `echo ${NOISE_MARK.total[0]}`,
    'setplot noise2',
    'echo @@PLOT $curplot',
    'print all',
    `echo ${NOISE_MARK.total[1]}`,
    'quit',
    '.endc',
    '.end',
    '',
  ].join('\n');
}
