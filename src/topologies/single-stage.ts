// Single-stage OTA (telescopic or folded cascode), the output node dominant:
// input transconductance gm into rout ∥ (cout + cl); optionally a cascode or
// folding node (pole gm_cas/c_cas) in the signal path, and a current-mirror
// node that carries half of the signal (a pole gm_mirror/c_mirror with a zero
// at twice its frequency: the pole-zero doublet of a mirrored differential pair).
//
// Hand formulas: B. Razavi, "Design of Analog CMOS Integrated Circuits",
// ch. 6 and 10 (one-stage op-amp poles, the mirror doublet); slew rate of a
// one-stage OTA, i_tail/(cout + cl).

import { type Figure, figure, missing } from '../engine/figure';
import type { Element, Network } from '../engine/network';
import { DEFAULT_TEMPERATURE, type NoiseModel, type NoiseSource, fourKT } from '../engine/noise';
import { formatQuantity } from '../quantity';
import { biasCurrentParam, commonClaims, loadConditions, loopBeta, noiseClaims, noiseParams, parallel, powerClaims, supplyConditions, temperatureCondition } from './common';
import type { Topology, Values } from './types';

const TWO_PI = 2 * Math.PI;
const DEG = 180 / Math.PI;

const hasCascode = (v: Values) => v.gm_cas !== undefined && v.c_cas !== undefined;
const hasMirror = (v: Values) => v.gm_mirror !== undefined && v.c_mirror !== undefined;

export const singleStage: Topology = {
  id: 'single-stage',
  title: 'Single-stage OTA (telescopic or folded cascode)',
  params: [
    { key: 'gm', kind: 'conductance', required: true, description: 'input transconductance', plausible: [1e-7, 1] },
    { key: 'rout', kind: 'resistance', required: true, description: 'output resistance', plausible: [1e3, 1e11] },
    { key: 'cout', kind: 'capacitance', required: true, allowZero: true, description: 'output-node parasitic capacitance, load excluded', plausible: [1e-16, 1e-10] },
    { key: 'gm_cas', kind: 'conductance', description: 'transconductance of the cascode (or folding) device at the non-dominant node', plausible: [1e-7, 1] },
    { key: 'c_cas', kind: 'capacitance', description: 'capacitance of the cascode (or folding) node', plausible: [1e-16, 1e-10] },
    { key: 'gm_mirror', kind: 'conductance', description: 'transconductance of the current-mirror diode device', plausible: [1e-7, 1] },
    { key: 'c_mirror', kind: 'capacitance', description: 'capacitance of the current-mirror node', plausible: [1e-16, 1e-10] },
    { key: 'i_tail', kind: 'current', description: 'tail current of the input pair', plausible: [1e-9, 0.1] },
    { key: 'gm_load', kind: 'conductance', description: 'transconductance of each load (current-source or mirror) device (noise)', plausible: [1e-7, 1] },
    { key: 'gm_fold', kind: 'conductance', description: 'transconductance of each folding current-source device of a folded cascode (noise)', plausible: [1e-7, 1] },
    ...noiseParams,
    biasCurrentParam,
  ],
  conditions: [...loadConditions, ...supplyConditions, temperatureCondition],
  claims: [
    ...commonClaims.map((c) => (c.key === 'slew_rate' ? { ...c, needs: ['i_tail'] } : c)).filter((c) => c.key !== 'rhp_zero'),
    ...noiseClaims(['gm_load']),
    ...powerClaims(['i_tail'], true),
  ],
  // A folded cascode's folding branches are counted in i_bias.
  supplyCurrents: ['i_tail', 'i_bias'],

  network(v: Values): Network {
    // The signal current passes the cascode (or folding) node first; behind it,
    // with a mirror, half reaches the output directly and half through the mirror:
    // A = gm·rout'·[1/(1 + s·c_cas/gm_cas)]·[½ + ½/(1 + s·c_mirror/gm_mirror)]/(1 + s·rout'·(cout + cl)).
    const mirror = hasMirror(v);
    const elements: Element[] = [];
    let feed: { ctrl: string; gm: number; sign: 1 | -1 };
    if (hasCascode(v)) {
      elements.push(
        { kind: 'vccs', name: 'gm', a: 'xa', b: '0', ctrlP: 'in', ctrlN: '0', gm: v.gm },
        { kind: 'conductance', name: '1/gm_cas', a: 'xa', b: '0', siemens: v.gm_cas },
        { kind: 'capacitance', name: 'c_cas', a: 'xa', b: '0', farads: v.c_cas },
      );
      // v(xa) is inverted: the cascode's current leaves its target node in proportion to it.
      feed = { ctrl: 'xa', gm: v.gm_cas, sign: -1 };
    } else {
      feed = { ctrl: 'in', gm: v.gm, sign: 1 };
    }
    const into = (node: string, gm: number, name: string): Element =>
      feed.sign === 1
        ? { kind: 'vccs', name, a: '0', b: node, ctrlP: feed.ctrl, ctrlN: '0', gm }
        : { kind: 'vccs', name, a: node, b: '0', ctrlP: feed.ctrl, ctrlN: '0', gm };
    if (mirror) {
      elements.push(
        into('out', feed.gm / 2, 'direct half'),
        into('m', feed.gm / 2, 'mirrored half'),
        { kind: 'conductance', name: '1/gm_mirror', a: 'm', b: '0', siemens: v.gm_mirror },
        { kind: 'capacitance', name: 'c_mirror', a: 'm', b: '0', farads: v.c_mirror },
        { kind: 'vccs', name: 'gm_mirror', a: '0', b: 'out', ctrlP: 'm', ctrlN: '0', gm: v.gm_mirror },
      );
    } else {
      elements.push(into('out', feed.gm, 'signal'));
    }
    elements.push(
      { kind: 'conductance', name: 'rout', a: 'out', b: '0', siemens: 1 / v.rout },
      { kind: 'capacitance', name: 'cout+cl', a: 'out', b: '0', farads: v.cout + (v.cl ?? 0) },
    );
    if (v.rl !== undefined && Number.isFinite(v.rl)) elements.push({ kind: 'conductance', name: 'rl', a: 'out', b: '0', siemens: 1 / v.rl });
    return { elements, input: 'in', output: 'out' };
  },

  beta: loopBeta,

  // The input pair steers at most its tail current into the output (or the folding node).
  inputStage: (v: Values) => (v.i_tail === undefined ? undefined : { gm: v.gm, tail: v.i_tail }),

  largeSignal(v: Values): Record<string, Figure> {
    const how = 'SR = i_tail/(cout + cl)';
    if (v.i_tail === undefined) return { slew_rate: missing('V/s', 'large-signal', how, 'needs the tail current i_tail') };
    const c = v.cout + (v.cl ?? 0);
    if (c <= 0) return { slew_rate: missing('V/s', 'large-signal', how, 'no capacitance at the output: the slew rate is not set by this stage') };
    return { slew_rate: figure(v.i_tail / c, 'V/s', 'large-signal', how) };
  },

  noise(v: Values): NoiseModel {
    // Channel noise 4kTγ·gm per device, where each device's current enters
    // the lumped network: the input pair (and a folded cascode's folding
    // sources) where the signal current goes — the cascode node, or without
    // one split like the signal between the output and the mirror; the load
    // devices at the mirror node and the output (a mirror), or both at the
    // output. A cascode device's noise circulates in its own branch: it
    // enters its source node and leaves its drain, so it reaches the output
    // only through c_cas (correlated injection at xa and out, which cancels
    // at low frequency). The load (cl, rl) is noiseless.
    const k = fourKT(v.temperature ?? DEFAULT_TEMPERATURE);
    const gamma = v.gamma ?? 2 / 3;
    if (v.gm_load === undefined) return { sources: [], hand: { reason: 'needs gm_load' }, missing: 'needs gm_load, the transconductance of the load devices, whose noise adds to the input pair\'s' };
    const mirror = hasMirror(v);
    const cascode = hasCascode(v);
    const sources: NoiseSource[] = [];
    const pair = (name: string, gm: number) => {
      if (cascode) sources.push({ name: `${name} (2 devices)`, psd: 2 * k * gamma * gm, into: [['xa', 1]] });
      else if (mirror) sources.push({ name: `${name} (direct half)`, psd: k * gamma * gm, into: [['out', 1]] }, { name: `${name} (mirrored half)`, psd: k * gamma * gm, into: [['m', 1]] });
      else sources.push({ name: `${name} (2 devices)`, psd: 2 * k * gamma * gm, into: [['out', 1]] });
    };
    pair('gm (input pair)', v.gm);
    if (v.gm_fold !== undefined) pair('gm_fold (folding sources)', v.gm_fold);
    if (mirror) sources.push({ name: 'gm_load (mirror diode)', psd: k * gamma * v.gm_load, into: [['m', 1]] }, { name: 'gm_load (mirror output)', psd: k * gamma * v.gm_load, into: [['out', 1]] });
    else sources.push({ name: 'gm_load (load, 2 devices)', psd: 2 * k * gamma * v.gm_load, into: [['out', 1]] });
    if (cascode) sources.push({ name: 'gm_cas (cascode, 2 devices)', psd: 2 * k * gamma * v.gm_cas, into: [['xa', 1], ['out', 1]] });
    // 2·4kTγ/gm·(1 + gm_load/gm + gm_fold/gm): the input pair, the load and
    // the folding sources, the cascodes neglected (B. Razavi, "Design of
    // Analog CMOS Integrated Circuits", ch. 7, telescopic and folded-cascode
    // noise — from memory).
    const psd = ((2 * k * gamma) / v.gm) * (1 + v.gm_load / v.gm + (v.gm_fold ?? 0) / v.gm);
    return { sources, hand: { psd, how: `e_n² ≈ 2·4kTγ/gm·(1 + gm_load/gm${v.gm_fold !== undefined ? ' + gm_fold/gm' : ''}), the cascodes neglected` } };
  },

  hand(v: Values, exact: Record<string, Figure>) {
    const rl = parallel(v.rout, v.rl);
    const cl = v.cout + (v.cl ?? 0);
    const beta = v.beta ?? 1;
    const gbw = v.gm / (TWO_PI * cl);
    const fc = beta * gbw;
    const others: Array<{ name: string; f: number }> = [];
    if (hasCascode(v)) others.push({ name: 'gm_cas/(2π·c_cas)', f: v.gm_cas / (TWO_PI * v.c_cas) });
    if (hasMirror(v)) others.push({ name: 'gm_mirror/(2π·c_mirror)', f: v.gm_mirror / (TWO_PI * v.c_mirror) });
    others.sort((a, b) => a.f - b.f);
    const lagDeg = others.reduce((sum, p) => sum + Math.atan(fc / p.f) * DEG, 0);
    // The mirror's doublet zero at 2·gm_mirror/c_mirror gives back part of its pole's lag.
    const leadDeg = hasMirror(v) ? Math.atan(fc / ((2 * v.gm_mirror) / (TWO_PI * v.c_mirror))) * DEG : 0;
    const figures: Record<string, Figure> = {
      dc_gain: figure(20 * Math.log10(v.gm * rl), 'dB', 'hand-estimate', "A0 = gm·rout' (rout' = rout ∥ rl)"),
      p1: figure(1 / (TWO_PI * rl * cl), 'Hz', 'hand-estimate', "p1 ≈ 1/(2π·rout'·(cout + cl))"),
      gbw: figure(gbw, 'Hz', 'hand-estimate', 'GBW ≈ gm/(2π·(cout + cl))'),
      phase_margin: figure(90 - lagDeg + leadDeg, 'deg', 'hand-estimate', `PM ≈ 90° − Σ atan(β·GBW/p_i) + atan(β·GBW/z_mirror), β·GBW = ${formatQuantity(fc, 'frequency')}`),
    };
    if (others.length) figures.p2 = figure(others[0].f, 'Hz', 'hand-estimate', `p2 ≈ ${others[0].name}`);
    else figures.p2 = missing('Hz', 'hand-estimate', 'p2 from the non-dominant nodes', 'no non-dominant node is given (gm_cas/c_cas or gm_mirror/c_mirror)');
    const caveats: string[] = [];
    const egbw = exact.gbw?.value;
    const ep2 = exact.p2?.value;
    if (egbw && ep2 && egbw / ep2 > 0.5) caveats.push(`the one-pole picture of GBW assumes GBW ≪ p2; here GBW/p2 = ${(egbw / ep2).toPrecision(2)}`);
    if (rl * cl * TWO_PI * fc < 10) caveats.push('the output pole is not far below the crossover: GBW ≈ gm/cl assumes A0 ≫ 1');
    return { figures, caveats };
  },

  knobs: {
    dc_gain: ['rout', 'gm'],
    gbw: ['gm'],
    p1: ['rout'],
    p2: ['gm_cas', 'gm_mirror'],
    phase_margin: ['gm_cas', 'gm_mirror', 'gm'],
    gain_margin: ['gm_cas', 'gm'],
    slew_rate: ['i_tail'],
    closed_loop_gain: ['rout', 'gm'],
    closed_loop_bandwidth: ['gm'],
    peaking: ['gm_cas', 'gm'],
    overshoot: ['gm_cas', 'gm'],
    rise_time: ['gm'],
    settling_time: ['gm', 'i_tail'],
    input_noise: ['gm', 'gm_load'],
    integrated_noise: ['gm', 'gm_load'],
    supply_current: ['i_tail', 'i_bias'],
    power: ['i_tail', 'i_bias'],
    fom: ['i_tail', 'gm'],
  },

  hints: () => [],
};
