// Two-stage Miller-compensated amplifier: a transconductance first stage
// (gm1, r1, c1), an inverting second stage (gm2, r2, c2), compensation
// capacitor cc from the output back to the first-stage output, optionally
// in series with a nulling resistor rz; load cl ∥ rl; feedback factor β.
//
// Hand formulas: the pole-splitting analysis of the two-stage amplifier as in
// P. R. Gray, P. J. Hurst, S. H. Lewis, R. G. Meyer, "Analysis and Design of
// Analog Integrated Circuits", ch. 9 (Miller compensation, nulling resistor),
// and P. E. Allen, D. R. Holberg, "CMOS Analog Circuit Design", ch. 6 (slew rate).

import { type Figure, figure, missing } from '../engine/figure';
import type { Element, Network } from '../engine/network';
import { DEFAULT_TEMPERATURE, type NoiseModel, type NoiseSource, fourKT } from '../engine/noise';
import { formatQuantity } from '../quantity';
import { biasCurrentParam, commonClaims, loadConditions, loopBeta, noiseClaims, noiseParams, parallel, powerClaims, supplyConditions, temperatureCondition } from './common';
import type { Topology, Values } from './types';

const TWO_PI = 2 * Math.PI;
const DEG = 180 / Math.PI;

/** Output-node capacitance and resistance with the load included. */
export function loaded(v: Values): { c2l: number; r2l: number } {
  const c2l = v.c2 + (v.cl ?? 0);
  const r2l = parallel(v.r2, v.rl);
  return { c2l, r2l };
}

export const twoStageMiller: Topology = {
  id: 'two-stage-miller',
  title: 'Two-stage Miller-compensated amplifier',
  params: [
    { key: 'gm1', kind: 'conductance', required: true, description: 'first-stage (input pair) transconductance', plausible: [1e-7, 1] },
    { key: 'r1', kind: 'resistance', required: true, description: 'first-stage output resistance', plausible: [1e3, 1e10] },
    { key: 'c1', kind: 'capacitance', required: true, description: 'first-stage output node capacitance', plausible: [1e-16, 1e-10] },
    { key: 'gm2', kind: 'conductance', required: true, description: 'second-stage transconductance', plausible: [1e-7, 1] },
    { key: 'r2', kind: 'resistance', required: true, description: 'second-stage output resistance', plausible: [1e2, 1e10] },
    { key: 'c2', kind: 'capacitance', required: true, allowZero: true, description: 'output-node parasitic capacitance, load excluded', plausible: [1e-16, 1e-10] },
    { key: 'cc', kind: 'capacitance', required: true, description: 'Miller compensation capacitor', plausible: [1e-14, 1e-10] },
    { key: 'rz', kind: 'resistance', allowZero: true, default: 0, description: 'nulling resistor in series with cc', plausible: [1, 1e7], scale: (v) => 1 / v.gm2 },
    { key: 'i1', kind: 'current', description: 'first-stage tail current', plausible: [1e-9, 0.1] },
    { key: 'i2', kind: 'current', description: 'second-stage bias current', plausible: [1e-9, 0.1] },
    { key: 'gm_load1', kind: 'conductance', description: 'transconductance of each first-stage load device (noise)', plausible: [1e-7, 1] },
    ...noiseParams,
    biasCurrentParam,
  ],
  conditions: [...loadConditions, ...supplyConditions, temperatureCondition],
  claims: [
    ...commonClaims.map((c) => (c.key === 'slew_rate' ? { ...c, needs: ['i1', 'i2'] } : c)),
    ...noiseClaims(['gm_load1']),
    ...powerClaims(['i1', 'i2'], true),
  ],
  supplyCurrents: ['i1', 'i2', 'i_bias'],

  network(v: Values): Network {
    const { c2l } = loaded(v);
    const elements: Element[] = [
      // First stage inverts: its current leaves n1, so v(n1) = −gm1·r1·vin at DC.
      { kind: 'vccs', name: 'gm1', a: 'n1', b: '0', ctrlP: 'in', ctrlN: '0', gm: v.gm1 },
      { kind: 'conductance', name: 'r1', a: 'n1', b: '0', siemens: 1 / v.r1 },
      { kind: 'capacitance', name: 'c1', a: 'n1', b: '0', farads: v.c1 },
      { kind: 'vccs', name: 'gm2', a: 'out', b: '0', ctrlP: 'n1', ctrlN: '0', gm: v.gm2 },
      { kind: 'conductance', name: 'r2', a: 'out', b: '0', siemens: 1 / v.r2 },
      { kind: 'capacitance', name: 'c2+cl', a: 'out', b: '0', farads: c2l },
    ];
    if (v.rl !== undefined && Number.isFinite(v.rl)) elements.push({ kind: 'conductance', name: 'rl', a: 'out', b: '0', siemens: 1 / v.rl });
    if (v.rz) {
      elements.push(
        { kind: 'capacitance', name: 'cc', a: 'n1', b: 'nz', farads: v.cc },
        { kind: 'conductance', name: 'rz', a: 'nz', b: 'out', siemens: 1 / v.rz },
      );
    } else {
      elements.push({ kind: 'capacitance', name: 'cc', a: 'n1', b: 'out', farads: v.cc });
    }
    return { elements, input: 'in', output: 'out' };
  },

  beta: loopBeta,

  inputStage(v: Values) {
    if (v.i1 === undefined) return undefined;
    const own = v.i1 / v.cc;
    const cl = v.cl ?? 0;
    const external = v.i2 !== undefined && v.i2 > v.i1 && cl > 0 ? (v.i2 - v.i1) / cl : Infinity;
    return { gm: v.gm1, tail: v.i1, ...(external < own ? { slowerLimit: { slewRate: external, what: '(i2 − i1)/cl, the output stage charging the load' } } : {}) };
  },

  largeSignal(v: Values): Record<string, Figure> {
    // The output node's whole capacitance is slewed: the load and the node's own parasitic (c2 + cl).
    const how = 'SR = min(i1/cc, (i2 − i1)/(c2 + cl))';
    if (v.i1 === undefined || v.i2 === undefined) {
      return { slew_rate: missing('V/s', 'large-signal', how, 'needs the bias currents i1 and i2') };
    }
    const internal = v.i1 / v.cc;
    const cl = v.cl ?? 0;
    if (v.i2 <= v.i1) {
      return { slew_rate: missing('V/s', 'large-signal', how, `i2 (${formatQuantity(v.i2, 'current')}) must exceed i1 (${formatQuantity(v.i1, 'current')}) for the output stage to slew the load`) };
    }
    const cOut = (v.c2 ?? 0) + cl;
    const external = cOut > 0 ? (v.i2 - v.i1) / cOut : Infinity;
    const sr = Math.min(internal, external);
    const limit = internal <= external ? 'limited by i1/cc (the first stage charging cc)' : 'limited by (i2 − i1)/(c2 + cl) (the output stage charging the output node)';
    return { slew_rate: figure(sr, 'V/s', 'large-signal', `${how}: ${limit}`) };
  },

  noise(v: Values): NoiseModel {
    // Channel noise 4kTγ·gm of each device, as a current beside its signal
    // current: the input pair and the first stage's load (two devices each)
    // at n1, the output device at out; rz is a resistor (4kT/rz). The load
    // (cl, rl) is the test condition and noiseless.
    const t = v.temperature ?? DEFAULT_TEMPERATURE;
    const k = fourKT(t);
    const gamma = v.gamma ?? 2 / 3;
    if (v.gm_load1 === undefined) return { sources: [], hand: { reason: 'needs gm_load1' }, missing: 'needs gm_load1, the transconductance of the first-stage load devices, whose noise adds to the input pair\'s' };
    const sources: NoiseSource[] = [
      { name: 'gm1 (input pair, 2 devices)', psd: 2 * k * gamma * v.gm1, into: [['n1', 1]] },
      { name: 'gm_load1 (first-stage load, 2 devices)', psd: 2 * k * gamma * v.gm_load1, into: [['n1', 1]] },
      { name: 'gm2 (output device)', psd: k * gamma * v.gm2, into: [['out', 1]] },
    ];
    if (v.rz) sources.push({ name: 'rz (thermal)', psd: k / v.rz, into: [['nz', 1], ['out', -1]] });
    // The differential pair with a current-mirror load, input-referred:
    // 2·4kTγ/gm1·(1 + gm_load1/gm1) (B. Razavi, "Design of Analog CMOS
    // Integrated Circuits", ch. 7; P. E. Allen, D. R. Holberg, "CMOS Analog
    // Circuit Design", ch. 7 — from memory). The second stage is left out.
    const psd = ((2 * k * gamma) / v.gm1) * (1 + v.gm_load1 / v.gm1);
    return { sources, hand: { psd, how: 'e_n² ≈ 2·4kTγ/gm1·(1 + gm_load1/gm1), the first stage only' } };
  },

  hand(v: Values, exact: Record<string, Figure>) {
    const { c2l, r2l } = loaded(v);
    const beta = v.beta ?? 1;
    const rz = v.rz ?? 0;
    const a0 = v.gm1 * v.r1 * v.gm2 * r2l;
    const p1 = 1 / (TWO_PI * v.gm2 * v.r1 * r2l * v.cc);
    const p2 = (v.gm2 * v.cc) / (TWO_PI * (v.c1 * c2l + v.cc * (v.c1 + c2l)));
    const gbw = v.gm1 / (TWO_PI * v.cc);
    const zDen = v.cc * (1 / v.gm2 - rz);
    const zero = zDen === 0 ? Infinity : 1 / (TWO_PI * zDen); // > 0: RHP, < 0: LHP
    const fc = beta * gbw;
    const zeroLagDeg = Number.isFinite(zero) ? Math.atan(fc / zero) * DEG : 0; // an LHP zero (zero < 0) adds lead
    const pm = 90 - Math.atan(fc / p2) * DEG - zeroLagDeg;

    const figures: Record<string, Figure> = {
      dc_gain: figure(20 * Math.log10(a0), 'dB', 'hand-estimate', "A0 = gm1·r1·gm2·r2' (r2' = r2 ∥ rl)"),
      p1: figure(p1, 'Hz', 'hand-estimate', "p1 ≈ 1/(2π·gm2·r1·r2'·cc) (Miller-multiplied cc at the first-stage output)"),
      p2: figure(p2, 'Hz', 'hand-estimate', "p2 ≈ gm2·cc/(2π·(c1·c2' + cc·(c1 + c2'))) (c2' = c2 + cl)"),
      gbw: figure(gbw, 'Hz', 'hand-estimate', 'GBW ≈ gm1/(2π·cc)'),
      phase_margin: figure(pm, 'deg', 'hand-estimate', `PM ≈ 90° − atan(β·GBW/p2) − atan(β·GBW/z) with β·GBW = ${formatQuantity(fc, 'frequency')}`),
    };
    if (rz === 0) figures.rhp_zero = figure(zero, 'Hz', 'hand-estimate', 'z ≈ gm2/(2π·cc)');
    else if (Number.isFinite(zero) && zero > 0) figures.rhp_zero = figure(zero, 'Hz', 'hand-estimate', 'z ≈ 1/(2π·cc·(1/gm2 − rz))');
    else {
      figures.rhp_zero = missing('Hz', 'hand-estimate', 'z ≈ 1/(2π·cc·(1/gm2 − rz))', !Number.isFinite(zero) ? 'rz = 1/gm2 moves the zero to infinity' : 'rz > 1/gm2 moves the zero into the left half-plane');
    }

    const caveats: string[] = [];
    const ep1 = exact.p1?.value;
    const ep2 = exact.p2?.value;
    if (ep1 && ep2 && ep2 / ep1 < 10) caveats.push(`pole splitting assumes p2 ≫ p1; here the exact p2/p1 = ${(ep2 / ep1).toPrecision(2)}`);
    const egbw = exact.gbw?.value;
    if (egbw && ep2 && egbw / ep2 > 0.5) caveats.push(`the one-pole picture of GBW assumes GBW ≪ p2; here GBW/p2 = ${(egbw / ep2).toPrecision(2)}`);
    if (exact.p2?.notes?.some((n) => n.includes('complex'))) caveats.push('the exact non-dominant poles are a complex pair; the real-pole estimates do not describe them');
    // Pole splitting needs a second stage with real gain: with gm2·r2' near 1 the
    // Miller multiplication of cc is small and GBW ≈ gm1/cc no longer follows.
    const a2 = v.gm2 * r2l;
    if (a2 < 10) caveats.push(`the second stage's gain gm2·r2' = ${a2.toPrecision(2)} is small: pole splitting assumes gm2·r2' ≫ 1, and the GBW and phase-margin estimates do not hold`);
    const p3 = rz > 0 ? 1 / (TWO_PI * rz * v.c1) : Infinity;
    if (egbw && p3 < 10 * beta * egbw) caveats.push(`rz adds a third pole p3 ≈ 1/(2π·rz·c1) = ${formatQuantity(p3, 'frequency')}, within ten times the crossover; the two-pole estimates ignore it`);
    return { figures, caveats };
  },

  knobs: {
    dc_gain: ['gm2', 'r2', 'r1'],
    gbw: ['cc', 'gm1'],
    p1: ['cc'],
    p2: ['gm2'],
    rhp_zero: ['rz'],
    phase_margin: ['cc', 'gm2'],
    gain_margin: ['cc', 'gm2'],
    slew_rate: ['i1', 'i2'],
    // Closed loop: two knobs each (every evaluation of a time figure costs a
    // step response): the compensation first; for a settling time with
    // slewing, the tail current.
    closed_loop_gain: ['gm2', 'r2'],
    closed_loop_bandwidth: ['cc', 'gm1'],
    peaking: ['cc', 'rz'],
    overshoot: ['cc', 'rz'],
    rise_time: ['cc', 'gm1'],
    settling_time: ['cc', 'i1'],
    input_noise: ['gm1', 'gm_load1'],
    integrated_noise: ['gm1', 'cc', 'gm_load1'],
    supply_current: ['i2', 'i1', 'i_bias'],
    power: ['i2', 'i1', 'i_bias'],
    fom: ['i2', 'gm1'],
  },

  hints(claim: string, v: Values) {
    if (claim !== 'phase_margin' && claim !== 'rhp_zero' && claim !== 'gain_margin') return [];
    const { c2l } = loaded(v);
    return [
      { changes: { rz: 1 / v.gm2 }, why: 'rz = 1/gm2 cancels the right-half-plane zero' },
      { changes: { rz: (v.cc + c2l) / (v.gm2 * v.cc) }, why: "rz = (cc + c2')/(gm2·cc) puts the zero on the second pole" },
    ];
  },
};
