// Common-source stage, open loop: the classic Miller-effect case. A source
// of resistance rs drives the gate; cgs to ground, cgd from gate to drain;
// gm into rout ∥ rl with cdb + cl at the drain. The stage inverts.
//
// Hand formulas: B. Razavi, "Design of Analog CMOS Integrated Circuits",
// ch. 6 (the common-source stage's poles by the dominant-pole approximation
// of its exact two-pole denominator, the Miller input capacitance, the
// right-half-plane zero gm/cgd).

import { inputAdmittance } from '../engine/analyze';
import { type Figure, figure, missing } from '../engine/figure';
import type { Element, Network } from '../engine/network';
import { DEFAULT_TEMPERATURE, type NoiseModel, type NoiseSource, fourKT } from '../engine/noise';
import { biasCurrentParam, noiseClaims, noiseParams, parallel, powerClaims, supplyConditions, temperatureCondition } from './common';
import type { Topology, Values } from './types';

const TWO_PI = 2 * Math.PI;

function build(v: Values, withSource: boolean): Network {
  const rs = withSource ? (v.rs ?? 0) : 0;
  const gate = rs > 0 ? 'g' : 'in';
  const elements: Element[] = [];
  if (rs > 0) elements.push({ kind: 'conductance', name: 'rs', a: 'in', b: 'g', siemens: 1 / rs });
  elements.push(
    { kind: 'capacitance', name: 'cgs', a: gate, b: '0', farads: v.cgs },
    { kind: 'capacitance', name: 'cgd', a: gate, b: 'd', farads: v.cgd },
    { kind: 'vccs', name: 'gm', a: 'd', b: '0', ctrlP: gate, ctrlN: '0', gm: v.gm },
    { kind: 'conductance', name: 'rout', a: 'd', b: '0', siemens: 1 / v.rout },
    { kind: 'capacitance', name: 'cdb+cl', a: 'd', b: '0', farads: v.cdb + (v.cl ?? 0) },
  );
  if (v.rl !== undefined && Number.isFinite(v.rl)) elements.push({ kind: 'conductance', name: 'rl', a: 'd', b: '0', siemens: 1 / v.rl });
  return { elements, input: 'in', output: 'd' };
}

export const commonSource: Topology = {
  id: 'common-source',
  title: 'Common-source gain stage (open loop)',
  params: [
    { key: 'gm', kind: 'conductance', required: true, description: 'transconductance of the device', plausible: [1e-7, 1] },
    { key: 'rout', kind: 'resistance', required: true, description: 'drain-side resistance (ro ∥ load device)', plausible: [1e2, 1e10] },
    { key: 'cgs', kind: 'capacitance', required: true, allowZero: true, description: 'gate-source capacitance', plausible: [1e-17, 1e-10] },
    { key: 'cgd', kind: 'capacitance', required: true, description: 'gate-drain (overlap) capacitance', plausible: [1e-17, 1e-10] },
    { key: 'cdb', kind: 'capacitance', required: true, allowZero: true, description: 'drain-bulk capacitance', plausible: [1e-17, 1e-10] },
    { key: 'gm_load', kind: 'conductance', description: 'transconductance of an active load device (noise)', plausible: [1e-7, 1] },
    { key: 'r_load', kind: 'resistance', description: 'a resistor load (its thermal noise; its resistance is part of rout)', plausible: [1, 1e10] },
    { key: 'i_d', kind: 'current', description: 'drain bias current (supply current only)', plausible: [1e-9, 0.1] },
    ...noiseParams,
    biasCurrentParam,
  ],
  conditions: [
    { key: 'rs', kind: 'resistance', allowZero: true, default: 0, description: 'resistance of the source driving the gate (0: an ideal source)' },
    { key: 'cl', kind: 'capacitance', allowZero: true, default: 0, description: 'load capacitance' },
    { key: 'rl', kind: 'resistance', open: true, description: 'load resistance (absent or `open`: none)' },
    ...supplyConditions,
    temperatureCondition,
  ],
  claims: [
    { key: 'dc_gain', kind: 'gain', better: 'higher', description: 'magnitude of the DC gain (the stage inverts)' },
    { key: 'bandwidth', kind: 'frequency', better: 'higher', description: '−3 dB frequency of the gain' },
    { key: 'p1', kind: 'frequency', description: 'lowest pole frequency' },
    { key: 'p2', kind: 'frequency', description: 'second-lowest pole frequency' },
    { key: 'rhp_zero', kind: 'frequency', description: 'right-half-plane zero (gm/cgd)' },
    { key: 'input_capacitance', kind: 'capacitance', better: 'lower', description: 'low-frequency capacitance seen at the gate (Miller)' },
    ...noiseClaims(),
    ...powerClaims(['i_d'], false),
  ],
  supplyCurrents: ['i_d', 'i_bias'],

  noise(v: Values): NoiseModel {
    // The device's channel noise 4kTγ·gm and the load's (4kTγ·gm_load, or
    // 4kT/r_load for a resistor) at the drain. rs is the signal source's own
    // resistance and the load (cl, rl) the test condition: both noiseless.
    const k = fourKT(v.temperature ?? DEFAULT_TEMPERATURE);
    const gamma = v.gamma ?? 2 / 3;
    if (v.gm_load === undefined && v.r_load === undefined) return { sources: [], hand: { reason: 'needs the load' }, missing: 'needs the noise of the load: `gm_load` (an active load) or `r_load` (a resistor load)' };
    const sources: NoiseSource[] = [{ name: 'gm (device)', psd: k * gamma * v.gm, into: [['d', 1]] }];
    if (v.gm_load !== undefined) sources.push({ name: 'gm_load (load device)', psd: k * gamma * v.gm_load, into: [['d', 1]] });
    if (v.r_load !== undefined) sources.push({ name: 'r_load (thermal)', psd: k / v.r_load, into: [['d', 1]] });
    // 4kTγ/gm·(1 + gm_load/gm) with an active load, 4kTγ/gm + 4kT/(gm²·R_D)
    // with a resistor (B. Razavi, "Design of Analog CMOS Integrated Circuits",
    // ch. 7, the common-source stage — from memory).
    const psd = ((k * gamma) / v.gm) * (1 + (v.gm_load ?? 0) / v.gm) + (v.r_load !== undefined ? k / (v.gm * v.gm * v.r_load) : 0);
    const how = `e_n² ≈ 4kTγ/gm${v.gm_load !== undefined ? '·(1 + gm_load/gm)' : ''}${v.r_load !== undefined ? ' + 4kT/(gm²·r_load)' : ''}`;
    return { sources, hand: { psd, how } };
  },

  network: (v) => build(v, true),
  beta: () => 1,
  largeSignal: () => ({}),

  figures(v: Values): Record<string, Figure> {
    // Im(Y_in)/ω far below every pole is the low-frequency input capacitance.
    const rl = parallel(v.rout, v.rl);
    const slowest = 1 / (TWO_PI * rl * (v.cgd + v.cdb + (v.cl ?? 0)) * (1 + v.gm * rl));
    const f = Math.max(slowest * 1e-4, 1e-3);
    const y = inputAdmittance(build(v, false), f);
    const cin = y.im / (TWO_PI * f);
    return {
      input_capacitance: cin > 0
        ? figure(cin, 'F', 'nodal-solve', `C_in = Im(Y_in(j2πf))/(2πf) at f = ${f.toPrecision(3)} Hz, far below the poles, with the gate driven directly`)
        : missing('F', 'nodal-solve', 'C_in = Im(Y_in)/ω at low frequency', 'the gate shows no capacitance'),
    };
  },

  hand(v: Values, exact: Record<string, Figure>) {
    const rl = parallel(v.rout, v.rl);
    const rs = v.rs ?? 0;
    const cd = v.cdb + (v.cl ?? 0);
    const miller = v.cgs + v.cgd * (1 + v.gm * rl);
    // Exact denominator 1 + a1·s + a2·s²; the dominant-pole approximation takes p1 ≈ 1/a1, p2 ≈ a1/a2.
    const a1 = rs * miller + rl * (v.cgd + cd);
    const a2 = rs * rl * (v.cgs * v.cgd + v.cgs * cd + v.cgd * cd);
    const p1 = 1 / (TWO_PI * a1);
    const figures: Record<string, Figure> = {
      dc_gain: figure(20 * Math.log10(v.gm * rl), 'dB', 'hand-estimate', "|A0| = gm·rout' (rout' = rout ∥ rl); the stage inverts"),
      p1: figure(p1, 'Hz', 'hand-estimate', "p1 ≈ 1/(2π·(rs·(cgs + cgd·(1 + gm·rout')) + rout'·(cgd + cdb + cl)))"),
      bandwidth: figure(p1, 'Hz', 'hand-estimate', 'f−3dB ≈ p1 (dominant pole)'),
      rhp_zero: figure(v.gm / (TWO_PI * v.cgd), 'Hz', 'hand-estimate', 'z = gm/(2π·cgd)'),
      input_capacitance: figure(miller, 'F', 'hand-estimate', "C_in ≈ cgs + cgd·(1 + gm·rout') (Miller)"),
    };
    figures.p2 = a2 > 0
      ? figure(a1 / (TWO_PI * a2), 'Hz', 'hand-estimate', "p2 ≈ a1/(2π·a2), a2 = rs·rout'·(cgs·cgd + cgs·cd + cgd·cd)")
      : missing('Hz', 'hand-estimate', 'p2 ≈ a1/(2π·a2)', 'with rs = 0 the gate node has no pole: one pole only');
    const caveats: string[] = [];
    const e1 = exact.p1?.value;
    const e2 = exact.p2?.value;
    if (e1 && e2 && e2 / e1 < 10) caveats.push(`the dominant-pole approximation assumes p2 ≫ p1; here the exact p2/p1 = ${(e2 / e1).toPrecision(2)}`);
    return { figures, caveats };
  },

  knobs: {
    dc_gain: ['gm', 'rout'],
    bandwidth: ['rout'],
    p1: ['rout'],
    input_capacitance: ['cgd'],
    input_noise: ['gm', 'gm_load'],
    integrated_noise: ['gm', 'gm_load'],
    supply_current: ['i_d', 'i_bias'],
    power: ['i_d', 'i_bias'],
  },
  hints: () => [],
};
