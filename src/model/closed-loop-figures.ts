// Closed-loop and time-domain figures of a model, each computed when a claim
// asks for it, from the loop closed by ideal resistive feedback β:
//
// - closed_loop_gain: A_CL(0) = A0/(1 + β·A0) by a nodal solve of the closed
//   loop (times −(1 − β) for an inverting gain), so the gain error shows;
// - closed_loop_bandwidth, peaking: on A/(1 + βA) factored from the
//   closed-loop poles and zeros (engine/closed-loop.ts);
// - overshoot, rise_time: on the small-signal step response, the sum of its
//   modes by partial fractions, every level found by root search;
// - settling_time: the same response's last exit from the band, or with a
//   `step` condition the first-order large-signal model of the input pair.
//
// Hand estimates: the second-order rules that link the phase margin to the
// damping of a two-pole loop, and β·GBW for the bandwidth; caveats say where
// the second-order picture does not hold (a third pole near the crossover, a
// pole-zero doublet whose slow tail sets the settling time).

import { type ClosedLoopResponse, type LargeStepSettling, type Modes, closedLoopResponse, closedMatrices, firstFall, largeStepSettling, overshoot, peakMagnitude, riseTime, settlingTime, unresolvedRinging } from '../engine/closed-loop';
import { type Figure, figure, missing } from '../engine/figure';
import { type Root, findRoots } from '../engine/roots';
import type { Model } from './model';
import { formatQuantity } from '../quantity';
import { DEFAULT_SETTLING_BAND, SETTLING_BAND, STEP_INPUT, signalGain } from '../topologies/common';

const TWO_PI = 2 * Math.PI;
const DB = 20 / Math.LN10;

/** The figures this module supplies, by claim key. */
export const CLOSED_LOOP_KEYS = ['closed_loop_gain', 'closed_loop_bandwidth', 'peaking', 'overshoot', 'rise_time', 'settling_time'] as const;

const hz = (f: number) => formatQuantity(f, 'frequency');
const sec = (t: number) => formatQuantity(t, 'time');
const volts = (v: number) => formatQuantity(v, 'voltage');
/** A fraction as a percentage in plain digits: 0.001 → "0.1 %". */
export const pct = (x: number): string => `${+(100 * x).toPrecision(3)} %`;

const RESPONSE_HOW = 'on A/(1 + βA) factored from its closed-loop poles and zeros';

/** Why a time figure is not given: the response rings longer than a scan follows. */
function ringingReason(m: Modes): string {
  const r = unresolvedRinging(m, m.envelopeBelow(1e-4));
  return r
    ? `the step response rings at ${hz(r.hz)} with Q = ${r.q.toPrecision(3)}, for more periods than polecheck follows (values beyond a real design?)`
    : 'the step response could not be followed to its end';
}
const STEP_HOW = 'the small-signal step response as the sum of its modes (partial fractions over the closed-loop poles and zeros)';

/** One model's closed loop, built on first use. */
class ClosedLoopOf {
  private resp: ClosedLoopResponse | string | undefined;
  private settled = new Map<number, ReturnType<typeof settlingTime>>();

  constructor(readonly model: Model) {}

  get response(): ClosedLoopResponse | string {
    if (this.resp === undefined) {
      const closed = this.closedPoles();
      this.resp = closed.stability === 'unstable'
        ? 'the closed loop is unstable (closed-loop poles in the right half-plane): it has no settled response'
        : closed.stability === 'unknown'
          ? 'the closed-loop poles could not be computed'
          : closedLoopResponse(this.model.analysis, this.model.beta, closed.poles);
    }
    return this.resp;
  }

  /**
   * The closed-loop poles and the loop's verdict. A network whose factored
   * form holds gets them from the loop analysis (computed once, shared); one
   * that is swept would pay for the whole sweep, so its closed loop is solved
   * here, as analyzeLoop solves it: the roots of the closed-loop pencil.
   */
  private closedPoles(): { poles: Root[]; stability: 'stable' | 'unstable' | 'unknown' } {
    if (this.model.analysis.factored) return { poles: this.model.loop.closedLoopPoles, stability: this.model.loop.stability };
    const st = this.model.analysis.stamped;
    const { G, C } = closedMatrices(st, this.model.beta);
    let poles: Root[];
    try {
      poles = findRoots(G, C, st.n).roots;
    } catch {
      return { poles: [], stability: 'unknown' };
    }
    if (poles.some((p) => !Number.isFinite(p.re) || !Number.isFinite(p.im))) return { poles: [], stability: 'unknown' };
    return { poles, stability: poles.every((p) => p.re < 1e-12 * Math.hypot(p.re, p.im)) ? 'stable' : 'unstable' };
  }

  /** The stated signal gain (signed, ideal), and the factor A_CL = factor·A/(1 + βA). */
  get gain(): { ideal: number; factor: number; inverting: boolean } {
    const ideal = signalGain(this.model.values, this.model.beta);
    const inverting = ideal < 0;
    return { ideal, factor: inverting ? -(1 - this.model.beta) : 1, inverting };
  }

  get band(): number {
    return this.model.values[SETTLING_BAND] ?? DEFAULT_SETTLING_BAND;
  }

  smallSettling(band: number): ReturnType<typeof settlingTime> {
    const r = this.response as ClosedLoopResponse;
    if (!this.settled.has(band)) this.settled.set(band, settlingTime(r.step, band));
    return this.settled.get(band)!;
  }

  closedLoopGain(): Figure {
    const { ideal, factor, inverting } = this.gain;
    const how = `${inverting ? 'A_CL(0) = −(1 − β)·A0/(1 + β·A0)' : 'A_CL(0) = A0/(1 + β·A0)'} by a nodal solve of the closed loop at DC`;
    const r = this.response;
    if (typeof r === 'string') return missing('dB', 'nodal-solve', how, r);
    const acl = factor * r.dcGain;
    const loopGain = this.model.beta * this.model.analysis.dcGain;
    const short = (Math.abs(ideal) - Math.abs(acl)) / Math.abs(ideal);
    return figure(20 * Math.log10(Math.abs(acl)), 'dB', 'nodal-solve', `${how}: ${acl.toPrecision(6)} V/V`, [
      `the ideal gain ${+ideal.toPrecision(6)} V/V less ${pct(short)}: the loop gain β·A0 = ${loopGain.toPrecision(4)} is finite (1/(1 + β·A0))`,
    ]);
  }

  bandwidth(): Figure {
    const how = `|A_CL(j2πf)| = |A_CL(0)|/√2 searched ${RESPONSE_HOW}`;
    const r = this.response;
    if (typeof r === 'string') return missing('Hz', 'frequency-search', how, r);
    const w = firstFall(r.factored, r.factored.lnGain - 0.5 * Math.LN2);
    return w === null ? missing('Hz', 'frequency-search', how, '|A_CL| never falls 3 dB below its DC value') : figure(w / TWO_PI, 'Hz', 'frequency-search', how);
  }

  peaking(): Figure {
    const how = `largest |A_CL(j2πf)|/|A_CL(0)| in dB, where d|A_CL|/df falls through zero, ${RESPONSE_HOW}`;
    const r = this.response;
    if (typeof r === 'string') return missing('dB', 'frequency-search', how, r);
    const p = peakMagnitude(r.factored);
    if (!p) return missing('dB', 'frequency-search', how, 'the closed-loop magnitude could not be bounded everywhere (values beyond what double precision resolves?)');
    const db = (p.lnMag - r.factored.lnGain) * DB;
    if (!(db > 1e-9) || !(p.w > 0)) return figure(0, 'dB', 'frequency-search', how, ['no peaking: |A_CL| never rises above its DC value']);
    return figure(db, 'dB', 'frequency-search', `${how}; the peak is at ${hz(p.w / TWO_PI)}`);
  }

  overshoot(): Figure {
    const how = `largest y(t)/y(∞) − 1 of ${STEP_HOW}, its peaks found where dy/dt changes sign`;
    const r = this.response;
    if (typeof r === 'string') return missing('ratio', 'time-search', how, r);
    const o = overshoot(r.step);
    if (!o) return missing('ratio', 'time-search', how, ringingReason(r.step));
    return figure(o.value, 'ratio', 'time-search', how, [o.value > 0 ? `${pct(o.value)} of the final value, at t = ${sec(o.t)} after the step` : 'no overshoot: the step response approaches its final value from below']);
  }

  riseTime(): Figure {
    const how = `10 % to 90 % of the final value on ${STEP_HOW}`;
    const r = this.response;
    if (typeof r === 'string') return missing('s', 'time-search', how, r);
    const t = riseTime(r.step);
    if (!t) return missing('s', 'time-search', how, unresolvedRinging(r.step, r.step.envelopeBelow(0.05)) ? ringingReason(r.step) : 'the step response does not reach 90 % of its final value');
    return figure(t.t90 - t.t10, 's', 'time-search', `${how}: t10 = ${sec(t.t10)}, t90 = ${sec(t.t90)}`);
  }

  settlingTime(): Figure {
    const band = this.band;
    const smallHow = `last exit of ${STEP_HOW} from ±${pct(band)} of its final value, found by root search`;
    const r = this.response;
    if (!(band > 0 && band < 0.5)) return missing('s', 'time-search', smallHow, `a settling band of ${pct(band)} is not a band around the final value`);
    if (typeof r === 'string') return missing('s', 'time-search', smallHow, r);
    const v = this.model.values;
    const { factor } = this.gain;
    const inputStep = v.step > 0 ? undefined : v[STEP_INPUT] > 0 ? v[STEP_INPUT] : undefined;
    const outputStep = v.step > 0 ? v.step : inputStep !== undefined ? Math.abs(factor * r.dcGain) * inputStep : undefined;
    const stage = outputStep === undefined ? undefined : this.model.topology.inputStage?.(v);
    if (outputStep === undefined || !stage) {
      const small = this.smallSettling(band);
      if (!small) return missing('s', 'time-search', smallHow, ringingReason(r.step));
      const tail = slowTail(r, small.t, band);
      const why = outputStep === undefined
        ? 'no `step` condition: the small-signal settling, without slewing'
        : `${this.model.topology.inputStage ? 'the tail current of the input pair is not given' : 'the network states no input pair'}: the small-signal settling, without slewing, for the ${volts(outputStep)} step`;
      return figure(small.t, 's', 'time-search', smallHow, [why, ...(tail ? [tail] : [])]);
    }
    const how = `first-order large-signal estimate: the input pair's current i_tail·tanh(gm·v_id/i_tail) (i_tail = ${formatQuantity(stage.tail, 'current')}, gm = ${formatQuantity(stage.gm, 'conductance')}), every other element linear, integrated in time (TR-BDF2, adaptive) until the pair is back in its linear range, then the exact linear response; the last exit from ±${pct(band)} found by root search`;
    const large: LargeStepSettling | string = largeStepSettling(this.model.analysis.stamped, this.model.beta, r.poles, stage, outputStep, band);
    if (typeof large === 'string') return missing('s', 'transient', how, large);
    // The notes compare with the small-signal settling: worked out only when read
    // (a solver asks for the value alone, many times over).
    const notes = (): string[] => {
      const small = this.smallSettling(band);
      const alone = small ? sec(small.t) : 'not resolved';
      const out = [
        `a ${volts(outputStep)} step at the output${inputStep !== undefined ? ` (${volts(inputStep)} at the input)` : ''}, settling to ±${pct(band)} of the final value`,
        large.peakDrive > 1
          ? `slewing until ${sec(large.slewingUntil)} (the input pair beyond its linear range, gm·|v_id| > i_tail), then linear settling for ${sec(Math.max(0, large.settlingTime - large.slewingUntil))}; small-signal settling alone would take ${alone}`
          : `no slewing: gm·|v_id| reaches ${large.peakDrive.toFixed(2)}·i_tail at most (the pair steers ${pct(Math.tanh(large.peakDrive))} of its tail), short of the i_tail where it slews (small-signal settling ${alone})`,
      ];
      if (stage.slowerLimit) out.push(`the model saturates the input pair only; ${stage.slowerLimit.what} limits the slew rate to ${formatQuantity(stage.slowerLimit.slewRate, 'slew')}, lower than the input stage's, so this estimate is optimistic`);
      const tail = small && slowTail(r, small.t, band);
      if (tail) out.push(tail);
      return out;
    };
    let written: string[] | undefined;
    return {
      value: large.settlingTime,
      unit: 's',
      method: 'transient',
      how,
      get notes(): string[] {
        return (written ??= notes());
      },
    };
  }
}

/**
 * The slow mode that sets the settling time when the second-order picture
 * misses it: a closed-loop pole of small residue (a pole-zero doublet) that
 * still outweighs every other mode at the settling time.
 */
function slowTail(r: ClosedLoopResponse, ts: number, band: number): string | undefined {
  const m = r.step;
  if (!(ts > 0)) return undefined;
  let main = 0;
  let dominant = 0;
  const amp = m.poles.map((_, i) => Math.hypot(m.coef[i].re, m.coef[i].im) * (m.poles[i].im !== 0 ? 2 : 1));
  const at = m.poles.map((p, i) => amp[i] * Math.exp(p.re * ts));
  for (let i = 1; i < amp.length; i++) {
    if (amp[i] > amp[main]) main = i;
    if (at[i] > at[dominant]) dominant = i;
  }
  const p = m.poles[dominant];
  const q = m.poles[main];
  // A mode that starts small but decays more than twice as slowly as the main one.
  if (dominant === main || !(amp[dominant] < 0.2) || !(p.re > 0.5 * q.re)) return undefined;
  const size = Math.hypot(p.re, p.im);
  const near = r.zeros.filter((z) => Math.hypot(z.re - p.re, z.im - p.im) < 0.5 * size);
  const what = near.length
    ? `a closed-loop pole at ${hz(size / TWO_PI)} almost cancelled by a zero at ${hz(Math.hypot(near[0].re, near[0].im) / TWO_PI)} (a pole-zero doublet)`
    : `a slow closed-loop pole at ${hz(size / TWO_PI)} of small residue`;
  return `${what} leaves a tail of ${pct(amp[dominant])} of the step decaying with τ = ${sec(-1 / p.re)}; it sets the small-signal settling time to ±${pct(band)}, ${sec(ts)}, which the phase margin and the second-order rules do not show`;
}

const cache = new WeakMap<Model, ClosedLoopOf>();
const of = (m: Model): ClosedLoopOf => {
  let c = cache.get(m);
  if (!c) cache.set(m, (c = new ClosedLoopOf(m)));
  return c;
};

/**
 * The closed loop of a model as the figures see it, for plots: the response
 * (or why there is none), the signal gain's factor (A_CL = factor·A/(1 + βA))
 * and the settling band.
 */
export function closedLoopView(m: Model): { response: ClosedLoopResponse | string; factor: number; band: number } | undefined {
  if (!hasLoopClaims(m)) return undefined;
  const c = of(m);
  return { response: c.response, factor: c.gain.factor, band: c.band };
}

/** Whether the topology claims closed-loop figures at all (an open-loop stage does not). */
const hasLoopClaims = (m: Model): boolean => m.topology.claims.some((c) => c.key === 'settling_time');

/** The closed-loop figures, each computed when first read. */
export function closedLoopFigures(m: Model): Record<string, () => Figure> {
  if (!hasLoopClaims(m)) return {};
  const c = of(m);
  return {
    closed_loop_gain: () => c.closedLoopGain(),
    closed_loop_bandwidth: () => c.bandwidth(),
    peaking: () => c.peaking(),
    overshoot: () => c.overshoot(),
    rise_time: () => c.riseTime(),
    settling_time: () => c.settlingTime(),
  };
}

// ---------------------------------------------------------------------------
// Hand estimates: the second-order loop

/**
 * ζ of the two-pole loop L(s) = ωn²/(s·(s + 2ζωn)) whose phase margin is
 * `pmDeg`: PM = atan(2ζ/√(√(1 + 4ζ⁴) − 2ζ²)), increasing in ζ, solved by
 * bisection (K. Ogata, "Modern Control Engineering", the second-order
 * system's phase margin; from memory). Infinity at PM ≥ 90° (one pole).
 */
export function zetaFromPhaseMargin(pmDeg: number): number {
  if (!(pmDeg > 0)) return NaN;
  if (pmDeg >= 90) return Infinity;
  const pmOf = (z: number) => (Math.atan((2 * z) / Math.sqrt(Math.sqrt(1 + 4 * z ** 4) - 2 * z * z)) * 180) / Math.PI;
  let lo = Math.log(1e-6);
  let hi = Math.log(1e4);
  for (let i = 0; i < 200; i++) {
    const mid = 0.5 * (lo + hi);
    if (pmOf(Math.exp(mid)) < pmDeg) lo = mid;
    else hi = mid;
  }
  return Math.exp(0.5 * (lo + hi));
}

/** Crossover of the same two-pole loop over its natural frequency: ωc/ωn = √(√(1 + 4ζ⁴) − 2ζ²). */
export const crossoverOverNatural = (zeta: number): number => Math.sqrt(Math.sqrt(1 + 4 * zeta ** 4) - 2 * zeta * zeta);
/** Percent overshoot of the second-order step response, exp(−πζ/√(1 − ζ²)) for ζ < 1 (Ogata, from memory). */
export const overshootOfZeta = (zeta: number): number => (zeta < 1 ? Math.exp((-Math.PI * zeta) / Math.sqrt(1 - zeta * zeta)) : 0);
/** Resonant peak of the second-order response, 1/(2ζ√(1 − ζ²)) for ζ < 1/√2 (Ogata, from memory). */
export const peakOfZeta = (zeta: number): number => (zeta < Math.SQRT1_2 ? 1 / (2 * zeta * Math.sqrt(1 - zeta * zeta)) : 1);

/**
 * 10–90 % rise time of the second-order step response times ωn, by the curve
 * fit 1.768ζ³ − 0.417ζ² + 1.039ζ + 1 for 0 < ζ < 0.9 (N. S. Nise, "Control
 * Systems Engineering", ch. 4; from memory, checked against the exact
 * response in test/engine/closed-loop.test.ts).
 */
export const riseOfZeta = (zeta: number): number => 1.768 * zeta ** 3 - 0.417 * zeta ** 2 + 1.039 * zeta + 1;

/** The closed-loop hand estimates and the caveats of the second-order picture. */
export function closedLoopHand(m: Model): { figures: Record<string, Figure>; caveats: string[] } {
  if (!hasLoopClaims(m)) return { figures: {}, caveats: [] };
  const c = of(m);
  const loop = m.loop;
  const beta = m.beta;
  const figures: Record<string, Figure> = {};
  const caveats: string[] = [];
  const { ideal, inverting } = c.gain;
  figures.closed_loop_gain = figure(20 * Math.log10(Math.abs(ideal)), 'dB', 'hand-estimate', `A_CL ≈ ${inverting ? '1/β − 1' : '1/β'} = ${+Math.abs(ideal).toPrecision(4)} V/V (ideal feedback, A0 → ∞)`);
  const gbw = loop.unityGain.value;
  if (gbw !== null) {
    figures.closed_loop_bandwidth = figure(beta * gbw, 'Hz', 'hand-estimate', `f−3dB ≈ β·GBW = ${+beta.toPrecision(3)}·${hz(gbw)} (one-pole loop)`);
    figures.rise_time = figure(Math.log(9) / (TWO_PI * beta * gbw), 's', 'hand-estimate', 't_r ≈ ln 9/(2π·β·GBW) = 0.35/(β·GBW) (one-pole loop)');
  }
  const pm = loop.phaseMargin.value;
  const margins = loop.crossoverMarginsDeg;
  if (pm === null || !margins.length) return { figures, caveats };
  const fc = loop.crossoversHz[margins.indexOf(Math.min(...margins))];
  const zeta = zetaFromPhaseMargin(pm);
  if (!Number.isFinite(zeta)) return { figures, caveats };
  const wn = (TWO_PI * fc) / crossoverOverNatural(zeta);
  const from = `ζ = ${zeta.toPrecision(3)} from PM = ${pm.toFixed(1)}° (two-pole loop), ωn = ω_c/√(√(1 + 4ζ⁴) − 2ζ²) = 2π·${hz(wn / TWO_PI)}`;
  figures.peaking = figure(DB * Math.log(peakOfZeta(zeta)), 'dB', 'hand-estimate', `Mp = 1/(2ζ√(1 − ζ²)) for ζ < 0.707, else none; ${from}`);
  figures.overshoot = figure(overshootOfZeta(zeta), 'ratio', 'hand-estimate', `overshoot = exp(−πζ/√(1 − ζ²)) for ζ < 1; ${from}`);
  if (zeta <= 0.9) figures.rise_time = figure(riseOfZeta(zeta) / wn, 's', 'hand-estimate', `t_r ≈ (1.768ζ³ − 0.417ζ² + 1.039ζ + 1)/ωn (a curve fit for 0 < ζ < 0.9); ${from}`);
  const band = c.band;
  // The envelope e^{−ζωn·t} of the pair, or for ζ ≥ 1 its slower real pole.
  const sigma = zeta < 1 ? zeta * wn : wn * (zeta - Math.sqrt(zeta * zeta - 1));
  let settle = -Math.log(band) / sigma;
  let how = `t_s ≈ −ln(band)/(${zeta < 1 ? 'ζ·ωn' : 'ωn·(ζ − √(ζ² − 1))'}) with band ${pct(band)}; ${from}`;
  const v = m.values;
  const sr = m.exact.slew_rate?.value;
  const r = c.response;
  const step = v.step > 0 ? v.step : v[STEP_INPUT] > 0 && typeof r !== 'string' ? Math.abs(c.gain.factor * r.dcGain) * v[STEP_INPUT] : undefined;
  if (step !== undefined && sr && m.topology.inputStage?.(v)) {
    // Slewing at SR until the error is small enough for the loop to follow
    // linearly, SR/ω_c for a one-pole loop, then linear settling from there
    // (common practice).
    const wc = TWO_PI * fc;
    const linear = sr / wc;
    if (step > linear) {
      settle = (step - linear) / sr + Math.max(0, Math.log(linear / (band * step))) / sigma;
      how = `t_s ≈ (step − SR/ω_c)/SR + ln(SR/(ω_c·band·step))/σ: slewing at SR = ${formatQuantity(sr, 'slew')}, then linear settling from SR/ω_c = ${volts(linear)} (common practice), σ = ${zeta < 1 ? 'ζ·ωn' : 'the slower real pole'}; ${from}`;
    }
  }
  figures.settling_time = figure(settle, 's', 'hand-estimate', how);
  // Where the second-order picture does not hold.
  if (typeof r !== 'string') {
    const amp = r.step.poles.map((_, i) => Math.hypot(r.step.coef[i].re, r.step.coef[i].im));
    const near = r.poles.filter((p, i) => amp[i] >= 0.05 && Math.hypot(p.re, p.im) <= 3 * TWO_PI * fc);
    if (near.length > 2) {
      const third = near.sort((a, b) => Math.hypot(b.re, b.im) - Math.hypot(a.re, a.im))[0];
      caveats.push(`a third closed-loop pole (${hz(Math.hypot(third.re, third.im) / TWO_PI)}) lies within three times the crossover and takes part in the step response: the second-order rules from the phase margin describe the loop only roughly`);
    }
    const settled = c.smallSettling(band);
    const tail = settled && slowTail(r, settled.t, band);
    if (tail) caveats.push(tail);
  }
  return { figures, caveats };
}
