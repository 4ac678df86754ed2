// Three-stage nested-Miller amplifier: an inverting first stage (gm1, r1, c1),
// a non-inverting second stage (gm2, r2, c2), an inverting output stage
// (gm3, r3, c3); cc1 from the output to node 1 (outer loop) and cc2 from the
// output to node 2 (inner loop); load cl ∥ rl; feedback factor β.
//
// Hand formulas, from memory: K. N. Leung, P. K. T. Mok, "Analysis of
// multistage amplifier-frequency compensation", IEEE Trans. Circuits and
// Systems I, 48(9), 2001: with large gains and small c1, c2,
//   A(s) ≈ A0·(1 − s·cc2/gm3 − s²·cc1·cc2/(gm2·gm3))
//          / ((1 + s/p1)·(1 + s·cc2·(gm3 − gm2)/(gm2·gm3) + s²·cl·cc2/(gm2·gm3))),
//   p1 = 1/(cc1·r1·gm2·r2·gm3·r3), GBW ≈ gm1/cc1,
// and the Butterworth placement cc1 = 4·(gm1/gm3)·cl, cc2 = 2·(gm2/gm3)·cl
// (about 60° of phase margin).

import { type Figure, figure, missing } from '../engine/figure';
import type { Element, Network } from '../engine/network';
import { DEFAULT_TEMPERATURE, type NoiseModel, fourKT } from '../engine/noise';
import { formatQuantity } from '../quantity';
import { biasCurrentParam, commonClaims, loadConditions, loopBeta, noiseClaims, noiseParams, parallel, powerClaims, supplyConditions, temperatureCondition } from './common';
import type { DesignHint, Topology, Values } from './types';

const TWO_PI = 2 * Math.PI;
const DEG = 180 / Math.PI;

const loadCap = (v: Values) => v.c3 + (v.cl ?? 0);

function butterworth(v: Values): DesignHint {
  const cl = loadCap(v);
  return {
    changes: { cc1: (4 * v.gm1 * cl) / v.gm3, cc2: (2 * v.gm2 * cl) / v.gm3 },
    why: 'the Butterworth placement cc1 = 4·(gm1/gm3)·cl, cc2 = 2·(gm2/gm3)·cl (Leung & Mok, 2001)',
  };
}

const stage = (key: string, description: string, kind: 'conductance' | 'resistance' | 'capacitance', plausible: [number, number]) =>
  ({ key, kind, required: true, description, plausible, ...(kind === 'capacitance' && !key.startsWith('cc') ? { allowZero: true } : {}) });

export const threeStageNestedMiller: Topology = {
  id: 'three-stage-nested-miller',
  title: 'Three-stage nested-Miller amplifier',
  params: [
    stage('gm1', 'first-stage transconductance', 'conductance', [1e-7, 1]),
    stage('r1', 'first-stage output resistance', 'resistance', [1e3, 1e10]),
    stage('c1', 'first-stage output node capacitance', 'capacitance', [1e-16, 1e-10]),
    stage('gm2', 'second-stage (non-inverting) transconductance', 'conductance', [1e-7, 1]),
    stage('r2', 'second-stage output resistance', 'resistance', [1e3, 1e10]),
    stage('c2', 'second-stage output node capacitance', 'capacitance', [1e-16, 1e-10]),
    stage('gm3', 'output-stage (inverting) transconductance', 'conductance', [1e-7, 1]),
    stage('r3', 'output-stage output resistance', 'resistance', [1e2, 1e10]),
    stage('c3', 'output-node parasitic capacitance, load excluded', 'capacitance', [1e-16, 1e-10]),
    stage('cc1', 'outer Miller capacitor, output to node 1', 'capacitance', [1e-14, 1e-10]),
    stage('cc2', 'inner Miller capacitor, output to node 2', 'capacitance', [1e-14, 1e-10]),
    { key: 'i1', kind: 'current', description: 'first-stage tail current', plausible: [1e-9, 0.1] },
    { key: 'i3', kind: 'current', description: 'output-stage bias current', plausible: [1e-9, 0.1] },
    { key: 'i2', kind: 'current', description: 'second-stage bias current (supply current only)', plausible: [1e-9, 0.1] },
    { key: 'gm_load1', kind: 'conductance', description: 'transconductance of each first-stage load device (noise)', plausible: [1e-7, 1] },
    ...noiseParams,
    biasCurrentParam,
  ],
  conditions: [...loadConditions, ...supplyConditions, temperatureCondition],
  claims: [
    ...commonClaims.map((c) => (c.key === 'slew_rate' ? { ...c, needs: ['i1', 'i3'] } : c)),
    ...noiseClaims(['gm_load1']),
    ...powerClaims(['i1', 'i2', 'i3'], true),
  ],
  supplyCurrents: ['i1', 'i2', 'i3', 'i_bias'],

  network(v: Values): Network {
    const elements: Element[] = [
      { kind: 'vccs', name: 'gm1', a: 'n1', b: '0', ctrlP: 'in', ctrlN: '0', gm: v.gm1 },
      { kind: 'conductance', name: 'r1', a: 'n1', b: '0', siemens: 1 / v.r1 },
      { kind: 'capacitance', name: 'c1', a: 'n1', b: '0', farads: v.c1 },
      // Non-inverting second stage: its current enters n2.
      { kind: 'vccs', name: 'gm2', a: '0', b: 'n2', ctrlP: 'n1', ctrlN: '0', gm: v.gm2 },
      { kind: 'conductance', name: 'r2', a: 'n2', b: '0', siemens: 1 / v.r2 },
      { kind: 'capacitance', name: 'c2', a: 'n2', b: '0', farads: v.c2 },
      { kind: 'vccs', name: 'gm3', a: 'out', b: '0', ctrlP: 'n2', ctrlN: '0', gm: v.gm3 },
      { kind: 'conductance', name: 'r3', a: 'out', b: '0', siemens: 1 / v.r3 },
      { kind: 'capacitance', name: 'c3+cl', a: 'out', b: '0', farads: loadCap(v) },
      { kind: 'capacitance', name: 'cc1', a: 'n1', b: 'out', farads: v.cc1 },
      { kind: 'capacitance', name: 'cc2', a: 'n2', b: 'out', farads: v.cc2 },
    ];
    if (v.rl !== undefined && Number.isFinite(v.rl)) elements.push({ kind: 'conductance', name: 'rl', a: 'out', b: '0', siemens: 1 / v.rl });
    return { elements, input: 'in', output: 'out' };
  },

  beta: loopBeta,

  inputStage(v: Values) {
    if (v.i1 === undefined) return undefined;
    const own = v.i1 / v.cc1;
    const cl = loadCap(v);
    const external = v.i3 !== undefined && cl > 0 ? v.i3 / cl : Infinity;
    return { gm: v.gm1, tail: v.i1, ...(external < own ? { slowerLimit: { slewRate: external, what: 'i3/(c3 + cl), the output stage charging the load' } } : {}) };
  },

  largeSignal(v: Values): Record<string, Figure> {
    const how = 'SR ≈ min(i1/cc1, i3/(c3 + cl)) (first order)';
    if (v.i1 === undefined || v.i3 === undefined) return { slew_rate: missing('V/s', 'large-signal', how, 'needs the bias currents i1 and i3') };
    const cl = loadCap(v);
    const internal = v.i1 / v.cc1;
    const external = cl > 0 ? v.i3 / cl : Infinity;
    return { slew_rate: figure(Math.min(internal, external), 'V/s', 'large-signal', `${how}: limited by ${internal <= external ? 'i1/cc1' : 'i3/cl'}`) };
  },

  noise(v: Values): NoiseModel {
    // As the two-stage amplifier: the input pair and the first stage's load
    // (two devices each) at n1, one device for each later stage (gm2 at n2,
    // gm3 at out), 4kTγ·gm each; the load is noiseless.
    const k = fourKT(v.temperature ?? DEFAULT_TEMPERATURE);
    const gamma = v.gamma ?? 2 / 3;
    if (v.gm_load1 === undefined) return { sources: [], hand: { reason: 'needs gm_load1' }, missing: 'needs gm_load1, the transconductance of the first-stage load devices, whose noise adds to the input pair\'s' };
    return {
      sources: [
        { name: 'gm1 (input pair, 2 devices)', psd: 2 * k * gamma * v.gm1, into: [['n1', 1]] },
        { name: 'gm_load1 (first-stage load, 2 devices)', psd: 2 * k * gamma * v.gm_load1, into: [['n1', 1]] },
        { name: 'gm2 (second-stage device)', psd: k * gamma * v.gm2, into: [['n2', 1]] },
        { name: 'gm3 (output device)', psd: k * gamma * v.gm3, into: [['out', 1]] },
      ],
      // The first stage dominates at low frequency: 2·4kTγ/gm1·(1 + gm_load1/gm1) (Razavi, ch. 7, from memory).
      hand: { psd: ((2 * k * gamma) / v.gm1) * (1 + v.gm_load1 / v.gm1), how: 'e_n² ≈ 2·4kTγ/gm1·(1 + gm_load1/gm1), the first stage only' },
    };
  },

  hand(v: Values, exact: Record<string, Figure>) {
    const r3 = parallel(v.r3, v.rl);
    const cl = loadCap(v);
    const beta = v.beta ?? 1;
    const a0 = v.gm1 * v.r1 * v.gm2 * v.r2 * v.gm3 * r3;
    const gbw = v.gm1 / (TWO_PI * v.cc1);
    const b1 = (v.cc2 * (v.gm3 - v.gm2)) / (v.gm2 * v.gm3);
    const b2 = (cl * v.cc2) / (v.gm2 * v.gm3);
    const n1 = v.cc2 / v.gm3;
    const n2 = (v.cc1 * v.cc2) / (v.gm2 * v.gm3);
    // Numerator 1 − n1·s − n2·s²: its positive root is the right-half-plane zero.
    const zRhp = (-n1 + Math.sqrt(n1 * n1 + 4 * n2)) / (2 * n2);
    const w = TWO_PI * beta * gbw;
    const pm = 90 - Math.atan2(w * b1, 1 - w * w * b2) * DEG + Math.atan2(-w * n1, 1 + w * w * n2) * DEG;
    const figures: Record<string, Figure> = {
      dc_gain: figure(20 * Math.log10(a0), 'dB', 'hand-estimate', "A0 = gm1·r1·gm2·r2·gm3·r3' (r3' = r3 ∥ rl)"),
      p1: figure(1 / (TWO_PI * v.cc1 * v.r1 * v.gm2 * v.r2 * v.gm3 * r3), 'Hz', 'hand-estimate', "p1 ≈ 1/(2π·cc1·r1·gm2·r2·gm3·r3')"),
      p2: figure(Math.sqrt(1 / b2) / TWO_PI, 'Hz', 'hand-estimate', '|p2,3| ≈ √(gm2·gm3/(cl·cc2))/2π (the non-dominant pair)'),
      gbw: figure(gbw, 'Hz', 'hand-estimate', 'GBW ≈ gm1/(2π·cc1)'),
      rhp_zero: figure(zRhp / TWO_PI, 'Hz', 'hand-estimate', 'positive root of 1 − s·cc2/gm3 − s²·cc1·cc2/(gm2·gm3)'),
      phase_margin: figure(pm, 'deg', 'hand-estimate', `PM ≈ 90° − ∠(1 + jω·cc2(gm3 − gm2)/(gm2·gm3) − ω²·cl·cc2/(gm2·gm3)) + ∠N(jω) at ω = 2π·β·GBW = 2π·${formatQuantity(beta * gbw, 'frequency')}`),
    };
    const bw = butterworth(v);
    const caveats: string[] = [];
    const ratio = (k: string) => v[k] / bw.changes[k];
    if (Math.max(ratio('cc1'), 1 / ratio('cc1'), ratio('cc2'), 1 / ratio('cc2')) > 2) {
      caveats.push(`the compensation is far from the Butterworth placement (cc1 = ${formatQuantity(bw.changes.cc1, 'capacitance')}, cc2 = ${formatQuantity(bw.changes.cc2, 'capacitance')}), where the hand formulas are least reliable`);
    }
    if (exact.p2?.notes?.some((n) => n.includes('complex'))) caveats.push('the non-dominant poles are a complex pair, as nested-Miller designs usually have: p2 is their magnitude');
    // The nested-Miller estimates take the inner loop's zero and poles as
    // well behaved, which needs gm3 > gm2; with gm3 ≤ gm2 the open loop may
    // itself have right-half-plane poles, and the hand figures say nothing.
    if (v.gm3 <= v.gm2) caveats.push(`gm3 (${formatQuantity(v.gm3, 'conductance')}) is not above gm2 (${formatQuantity(v.gm2, 'conductance')}): the inner Miller loop can leave right-half-plane poles in the open loop, and the hand formulas do not hold`);
    return { figures, caveats };
  },

  knobs: {
    dc_gain: ['gm3', 'gm2'],
    gbw: ['cc1', 'gm1'],
    p1: ['cc1'],
    p2: ['cc2', 'gm3'],
    rhp_zero: ['cc2'],
    phase_margin: ['cc2', 'cc1', 'gm3'],
    gain_margin: ['cc2', 'gm3'],
    slew_rate: ['i1', 'i3'],
    closed_loop_gain: ['gm3', 'gm2'],
    closed_loop_bandwidth: ['cc1', 'gm1'],
    peaking: ['cc2', 'cc1'],
    overshoot: ['cc2', 'cc1'],
    rise_time: ['cc1', 'gm1'],
    settling_time: ['cc2', 'cc1'],
    input_noise: ['gm1', 'gm_load1'],
    integrated_noise: ['gm1', 'cc1', 'gm_load1'],
    supply_current: ['i3', 'i2', 'i1', 'i_bias'],
    power: ['i3', 'i2', 'i1', 'i_bias'],
    fom: ['i3', 'gm1'],
  },

  hints: (claim, v) => (claim === 'phase_margin' || claim === 'gain_margin' ? [butterworth(v)] : []),
  sizing: (v) => [butterworth(v)],
};
