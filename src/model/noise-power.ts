// Noise and power figures of a model, each computed when a claim asks for it:
//
// - input_noise: the input-referred density e_n(f) = √(S_out(f))/|A(j2πf)|
//   from every noise source the topology states (engine/noise.ts), plus the
//   1/f term e_w²·f_corner/f on the white floor e_w (the thermal density at
//   DC); at the claim's `at` frequency, or the white floor when it states none;
// - integrated_noise: with a band [f1, f2], √(∫ e_n² df) over it; without,
//   the rms output noise of the closed loop (ideal feedback β, noise gain 1/β),
//   √(∫₀^∞ S_out/|1 + βA|² df), integrated on the exact response;
// - supply_current, power, fom: the stated bias currents, times the supply,
//   and GBW·CL/I.
//
// Hand estimates: the topology's textbook input-referred density, and for the
// closed-loop rms the one-pole noise bandwidth (π/2)·β·GBW (the "π/2 rule").

import { type Figure, figure, missing } from '../engine/figure';
import { DEFAULT_TEMPERATURE, type NoiseModel, NoiseSolver, integrateLogFrequency } from '../engine/noise';
import type { Root } from '../engine/roots';
import type { Model } from './model';
import { formatQuantity } from '../quantity';
import { INPUT_NOISE_AT, NOISE_BAND_FROM, NOISE_BAND_TO } from '../topologies/common';
import type { Values } from '../topologies/types';

const TWO_PI = 2 * Math.PI;

/** The figures this module supplies, by claim key. */
export const NOISE_POWER_KEYS = ['input_noise', 'integrated_noise', 'supply_current', 'power', 'fom'] as const;

const fq = formatQuantity;
const rootsHz = (roots: readonly Root[]): number[] => roots.map((r) => Math.hypot(r.re, r.im) / TWO_PI).filter((f) => f > 0 && Number.isFinite(f));

/** One model's noise: the topology's sources, the adjoint solver, the white floor; built on first use. */
class NoiseOf {
  readonly noise: NoiseModel;
  private solver: NoiseSolver | undefined;
  private floor: number | undefined;

  constructor(readonly model: Model) {
    this.noise = model.topology.noise!(model.values);
  }

  private get solve(): NoiseSolver {
    return (this.solver ??= new NoiseSolver(this.model.analysis.stamped, this.noise.sources));
  }

  /** Thermal input-referred density at f, V²/Hz (NaN where the gain vanishes). */
  thermal(fHz: number): number {
    const p = this.solve.at(fHz);
    const a2 = p.gainRe * p.gainRe + p.gainIm * p.gainIm;
    return a2 > 0 ? p.outPsd / a2 : NaN;
  }

  /** The white floor e_w²: the thermal input-referred density at DC. */
  get white(): number {
    return (this.floor ??= this.thermal(0));
  }

  get fCorner(): number {
    return this.model.values.f_corner ?? 0;
  }

  /** Input-referred density with the 1/f term, V²/Hz. */
  density(fHz: number): number {
    return this.thermal(fHz) + (this.fCorner > 0 ? (this.white * this.fCorner) / fHz : 0);
  }

  /** Closed-loop output density with ideal feedback β, V²/Hz (thermal sources only). */
  closedLoop(fHz: number, beta: number): number {
    const p = this.solve.at(fHz);
    const dr = 1 + beta * p.gainRe;
    const di = beta * p.gainIm;
    return p.outPsd / (dr * dr + di * di);
  }

  get sourcesText(): string {
    return this.noise.sources.map((s) => s.name).join(', ');
  }
}

const cache = new WeakMap<Model, NoiseOf>();
const noiseOf = (m: Model): NoiseOf => {
  let n = cache.get(m);
  if (!n) cache.set(m, (n = new NoiseOf(m)));
  return n;
};

const tempText = (v: Values): string => `T = ${+(v.temperature ?? DEFAULT_TEMPERATURE).toPrecision(5)} K${v.gamma !== undefined ? `, γ = ${+v.gamma.toPrecision(3)}` : ''}`;

function inputNoise(m: Model): Figure {
  const how = 'e_n(f) = √(Σ S_k·|Z_k(j2πf)|²)/|A(j2πf)| over every noise source';
  const n = noiseOf(m);
  if (n.noise.missing) return missing('V/√Hz', 'noise-analysis', how, n.noise.missing);
  const at = m.values[INPUT_NOISE_AT];
  const f = at ?? 0;
  const d = at === undefined ? n.white : n.density(f);
  if (!(d >= 0) || !Number.isFinite(d)) return missing('V/√Hz', 'noise-analysis', how, at === undefined ? 'the gain at DC is zero: the density cannot be referred to the input; state `at:`' : `the gain at ${fq(f, 'frequency')} is zero: the density cannot be referred to the input there`);
  const flicker = n.fCorner > 0 && at !== undefined ? ` + e_w²·f_corner/f (f_corner = ${fq(n.fCorner, 'frequency')})` : '';
  const where = at === undefined ? 'the white floor (thermal sources at low frequency, 1/f excluded)' : `at f = ${fq(f, 'frequency')}`;
  return figure(Math.sqrt(d), 'V/√Hz', 'noise-analysis', `${how}${flicker}, ${where}; sources: ${n.sourcesText}; ${tempText(m.values)}`, [at === undefined ? 'density of the white floor' : `density at ${fq(f, 'frequency')}`]);
}

function integratedNoise(m: Model): Figure {
  const n = noiseOf(m);
  const from = m.values[NOISE_BAND_FROM];
  const to = m.values[NOISE_BAND_TO];
  if (from !== undefined && to !== undefined) {
    const how = `v_n = √(∫ e_n(f)² df) over ${fq(from, 'frequency')} to ${fq(to, 'frequency')}, input-referred`;
    if (n.noise.missing) return missing('V', 'noise-analysis', how, n.noise.missing);
    const breaks = [...rootsHz(m.analysis.poles), ...rootsHz(m.analysis.zeros)];
    const r = integrateLogFrequency((f) => n.thermal(f), from, to, breaks);
    if (!Number.isFinite(r.value)) return missing('V', 'noise-analysis', how, 'the gain vanishes inside the band: the noise cannot be referred to the input there');
    // The 1/f term integrates in closed form: ∫ e_w²·fc/f df = e_w²·fc·ln(f2/f1).
    const flicker = n.fCorner > 0 ? n.white * n.fCorner * Math.log(to / from) : 0;
    const text = `${how}, adaptive Gauss–Kronrod on the exact density${flicker ? ' + e_w²·f_corner·ln(f2/f1) for the 1/f term' : ''}; sources: ${n.sourcesText}; ${tempText(m.values)}`;
    return figure(Math.sqrt(r.value + flicker), 'V', 'noise-analysis', text, [`rms over ${fq(from, 'frequency')} to ${fq(to, 'frequency')}, referred to the input`, ...(r.converged ? [] : ['the integral did not converge to its tolerance'])]);
  }
  const beta = m.beta;
  const how = `v_out = √(∫₀^∞ S_out(f)/|1 + βA(j2πf)|² df), the closed loop's output noise (β = ${+beta.toPrecision(3)})`;
  if (n.noise.missing) return missing('V', 'noise-analysis', how, n.noise.missing);
  if (!m.topology.conditions.some((c) => c.key === 'beta')) return missing('V', 'noise-analysis', how, 'an open-loop stage has no closed-loop response to integrate over: state the band, `band: [f1, f2]`');
  if (n.fCorner > 0) return missing('V', 'noise-analysis', how, `the 1/f noise (f_corner = ${fq(n.fCorner, 'frequency')}) grows without bound towards DC: state the band, \`band: [f1, f2]\``);
  if (m.loop.stability !== 'stable') return missing('V', 'noise-analysis', how, m.loop.stability === 'unstable' ? 'the closed loop is unstable: it has no noise floor to integrate' : 'the stability of the closed loop is not known');
  const breaks = [...rootsHz(m.loop.closedLoopPoles), ...rootsHz(m.analysis.poles), ...rootsHz(m.analysis.zeros)];
  if (!breaks.length) return missing('V', 'noise-analysis', how, 'the loop has no pole: nothing limits its noise bandwidth');
  const lo = Math.min(...breaks) * 1e-4;
  const hi = Math.max(...breaks) * 1e4;
  if (!(lo > 0 && Number.isFinite(hi))) return missing('V', 'noise-analysis', how, 'the poles of the loop lie beyond the range of frequencies double precision integrates over');
  const g = (f: number) => n.closedLoop(f, beta);
  const r = integrateLogFrequency(g, lo, hi, breaks);
  // Below lo the density is flat to a part in 10⁴: S(lo)·lo. Above hi it falls as a power f^−k, k read off the last decade.
  const sHi = g(hi);
  const k = Math.log(g(hi / 10) / sHi) / Math.LN10;
  if (sHi > 0 && !(k > 1.5)) return missing('V', 'noise-analysis', how, `the output noise does not fall off above ${fq(hi / 1e4, 'frequency')} (no capacitance limits its bandwidth): its integral diverges`);
  const tail = sHi > 0 ? (sHi * hi) / (k - 1) : 0;
  const total = r.value + g(lo) * lo + tail;
  if (!Number.isFinite(total)) return missing('V', 'noise-analysis', how, 'the output noise could not be integrated (the network is singular at some frequency)');
  const text = `${how}, adaptive Gauss–Kronrod on the exact response from ${fq(lo, 'frequency')} to ${fq(hi, 'frequency')} with the flat part below and the power-law tail above; sources: ${n.sourcesText}; ${tempText(m.values)}`;
  return figure(Math.sqrt(total), 'V', 'noise-analysis', text, ['rms at the output of the closed loop, over all frequencies', ...(r.converged ? [] : ['the integral did not converge to its tolerance'])]);
}

function supplyCurrent(m: Model): { amps: number; how: string } | { reason: string } {
  const keys = (m.topology.supplyCurrents ?? []).filter((k) => m.values[k] !== undefined);
  if (!keys.length) return { reason: `needs the bias currents (${(m.topology.supplyCurrents ?? []).join(', ') || 'none defined'})` };
  const amps = keys.reduce((s, k) => s + m.values[k], 0);
  return { amps, how: `I = ${keys.join(' + ')} = ${keys.map((k) => fq(m.values[k], 'current')).join(' + ')}` };
}

/** The voltage across the supply: `supply`, or vdd − vss. */
export function supplyVoltage(v: Values): { volts: number; how: string } | { reason: string } {
  if (v.supply !== undefined) return { volts: v.supply, how: `supply = ${fq(v.supply, 'voltage')}` };
  if (v.vdd !== undefined) {
    const vss = v.vss ?? 0;
    return { volts: v.vdd - vss, how: `vdd − vss = ${fq(v.vdd, 'voltage')} − ${fq(vss, 'voltage')}` };
  }
  return { reason: 'needs the supply: `supply`, or `vdd` (and `vss`) under `conditions:`' };
}

function powerFigures(m: Model, key: 'supply_current' | 'power' | 'fom'): Figure {
  const i = supplyCurrent(m);
  if (key === 'supply_current') return 'reason' in i ? missing('A', 'bias-currents', 'I = Σ bias currents', i.reason) : figure(i.amps, 'A', 'bias-currents', i.how);
  if (key === 'power') {
    const how = 'P = I·V_supply';
    if ('reason' in i) return missing('W', 'bias-currents', how, i.reason);
    const s = supplyVoltage(m.values);
    if ('reason' in s) return missing('W', 'bias-currents', how, s.reason);
    if (!(s.volts > 0)) return missing('W', 'bias-currents', how, `the supply voltage is not positive (${s.how})`);
    return figure(i.amps * s.volts, 'W', 'bias-currents', `${how} with ${i.how}, ${s.how}`);
  }
  const how = 'FOM = GBW·CL/I in MHz·pF/mA';
  if ('reason' in i) return missing('MHz·pF/mA', 'bias-currents', how, i.reason);
  const cl = m.values.cl ?? 0;
  if (!(cl > 0)) return missing('MHz·pF/mA', 'bias-currents', how, 'cl = 0: the figure of merit is stated for a load capacitance');
  const gbw = m.exact.gbw;
  if (!gbw || gbw.value === null) return missing('MHz·pF/mA', 'bias-currents', how, `the model gives no gain-bandwidth: ${gbw?.reason ?? 'none'}`);
  const fom = ((gbw.value / 1e6) * (cl / 1e-12)) / (i.amps / 1e-3);
  return figure(fom, 'MHz·pF/mA', 'bias-currents', `${how} = ${fq(gbw.value, 'frequency')} · ${fq(cl, 'capacitance')} / ${fq(i.amps, 'current')} (GBW from the exact response; ${i.how})`);
}

/** The input-referred density e_n(f) in V/√Hz (thermal sources and the 1/f term), for plots; undefined where the topology states no noise. */
export function inputNoiseDensity(m: Model): ((fHz: number) => number) | undefined {
  if (!m.topology.noise) return undefined;
  const n = noiseOf(m);
  if (n.noise.missing) return undefined;
  return (fHz) => Math.sqrt(n.density(fHz));
}

/** The noise and power figures the topology claims, each a thunk computed on first use. */
export function noisePowerFigures(m: Model): Record<string, () => Figure> {
  const claimed = new Set(m.topology.claims.map((c) => c.key));
  const out: Record<string, () => Figure> = {};
  if (claimed.has('input_noise') && m.topology.noise) out.input_noise = () => inputNoise(m);
  if (claimed.has('integrated_noise') && m.topology.noise) out.integrated_noise = () => integratedNoise(m);
  for (const k of ['supply_current', 'power', 'fom'] as const) if (claimed.has(k)) out[k] = () => powerFigures(m, k);
  return out;
}

/** Hand estimates of the noise claims: the textbook density, its band integral, and the π/2 rule for the closed loop. */
export function noiseHand(m: Model): Record<string, Figure> {
  const claimed = new Set(m.topology.claims.map((c) => c.key));
  if (!m.topology.noise || !(claimed.has('input_noise') || claimed.has('integrated_noise'))) return {};
  const n = noiseOf(m);
  const out: Record<string, Figure> = {};
  const h = n.noise.hand;
  const fc = n.fCorner;
  const at = m.values[INPUT_NOISE_AT];
  if ('reason' in h || n.noise.missing) {
    const reason = n.noise.missing ?? ('reason' in h ? h.reason : '');
    out.input_noise = missing('V/√Hz', 'hand-estimate', 'the textbook input-referred density', reason);
  } else {
    const flicker = fc > 0 && at !== undefined ? 1 + fc / at : 1;
    out.input_noise = figure(Math.sqrt(h.psd * flicker), 'V/√Hz', 'hand-estimate', `${h.how}${flicker !== 1 ? ', times (1 + f_corner/f)' : ''}`);
  }
  const from = m.values[NOISE_BAND_FROM];
  const to = m.values[NOISE_BAND_TO];
  if (from !== undefined && to !== undefined) {
    if (!('reason' in h) && !n.noise.missing) {
      const area = h.psd * (to - from + (fc > 0 ? fc * Math.log(to / from) : 0));
      out.integrated_noise = figure(Math.sqrt(area), 'V', 'hand-estimate', `v_n ≈ e_w·√(f2 − f1${fc > 0 ? ' + f_corner·ln(f2/f1)' : ''}) with the textbook e_w`);
    }
  } else if (m.topology.conditions.some((c) => c.key === 'beta') && !n.noise.missing && !(fc > 0)) {
    const gbw = m.exact.gbw?.value;
    const w = n.white;
    const beta = m.beta;
    if (gbw && Number.isFinite(w)) {
      out.integrated_noise = figure(Math.sqrt((w * (Math.PI / 2) * gbw) / beta), 'V', 'hand-estimate', `v_out ≈ (e_w/β)·√((π/2)·β·GBW), the one-pole noise bandwidth with the exact white floor e_w = ${fq(Math.sqrt(w), 'noise')} and GBW = ${fq(gbw, 'frequency')}`);
    }
  }
  return out;
}
