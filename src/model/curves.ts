// The curves of a model, sampled for plots: A(jω), the loop gain β·A(jω) and
// the closed loop's signal response over frequency, the small-signal step
// response over time, the input-referred noise density. Pure functions of the
// model: every sample is the engine's own evaluation (the nodal solve of A,
// the closed loop factored from its poles and zeros, the modes of its step
// response, the adjoint noise solve), so a plot shows what the figures were
// computed from and a reporter computes nothing.

import type { NetworkAnalysis } from '../engine/analyze';
import { settlingTime } from '../engine/closed-loop';
import { rootHz } from '../engine/roots';
import { closedLoopView } from './closed-loop-figures';
import type { Model } from './model';
import { inputNoiseDensity } from './noise-power';

const TWO_PI = 2 * Math.PI;
const DB = 20 / Math.LN10;

export interface BodePoint {
  /** Hz. */
  f: number;
  db: number;
  deg: number;
}

export interface StepCurve {
  /** Seconds after the step and y(t)/y(∞) there. */
  points: Array<{ t: number; y: number }>;
  /** The settling band, a fraction of the final value. */
  band: number;
  /** The small-signal settling time into the band (the last exit, by the engine's root search), when it resolves. */
  settling?: number;
}

/** Most decades a frequency plot spans: roots beyond are listed in the table, not drawn. */
export const MAX_DECADES = 12;

/**
 * A frequency span in whole decades that holds every pole and zero of A(s),
 * the closed-loop poles and the crossovers, a decade beyond each end; at most
 * MAX_DECADES, kept around the loop's crossover when the roots spread wider.
 */
export function frequencySpan(m: Model): { from: number; to: number } {
  const hz = [...m.analysis.poles, ...m.analysis.zeros, ...safeClosedPoles(m)].map(rootHz).filter((f) => f > 0 && Number.isFinite(f));
  const cross = safeCrossovers(m);
  hz.push(...cross);
  if (!hz.length) return { from: 1, to: 1e9 };
  let lo = Math.floor(Math.log10(Math.min(...hz))) - 1;
  let hi = Math.ceil(Math.log10(Math.max(...hz))) + 1;
  if (hi - lo > MAX_DECADES) {
    const centre = cross.length ? Math.log10(cross[0]) : (lo + hi) / 2;
    lo = Math.max(lo, Math.floor(centre) - MAX_DECADES + 3);
    hi = lo + MAX_DECADES;
  }
  if (hi <= lo) hi = lo + 1;
  return { from: 10 ** lo, to: 10 ** hi };
}

function safeClosedPoles(m: Model) {
  try {
    return m.topology.conditions.some((c) => c.key === 'beta') ? m.loop.closedLoopPoles : [];
  } catch {
    return [];
  }
}

function safeCrossovers(m: Model): number[] {
  try {
    return m.topology.conditions.some((c) => c.key === 'beta') ? m.loop.crossoversHz : m.loop.unityGain.value !== null ? [m.loop.unityGain.value] : [];
  } catch {
    return [];
  }
}

/** Frequencies from `from` to `to`, `perDecade` to a decade on a log scale, with `extra` frequencies inside the span added in order. */
export function logGrid(from: number, to: number, perDecade: number, extra: number[] = []): number[] {
  const n = Math.round(Math.log10(to / from) * perDecade);
  const out: number[] = [];
  for (let i = 0; i <= n; i++) out.push(from * 10 ** (i / perDecade));
  for (const f of extra) if (f > from && f < to) out.push(f);
  return out.sort((a, b) => a - b);
}

/** A(j2πf) by the engine's nodal solve (continuous phase), at each frequency; points the network cannot be solved at are left out. */
export function openLoopCurve(a: NetworkAnalysis, freqs: number[]): BodePoint[] {
  const out: BodePoint[] = [];
  for (const f of freqs) {
    const r = a.at(f);
    if (Number.isFinite(r.magDb) && Number.isFinite(r.phaseDeg)) out.push({ f, db: r.magDb, deg: r.phaseDeg });
  }
  return out;
}

/** β·A(j2πf): A's curve shifted by 20·log10 β (β > 0 leaves the phase). */
export function loopGainCurve(open: BodePoint[], beta: number): BodePoint[] {
  const shift = 20 * Math.log10(beta);
  return open.map((p) => ({ f: p.f, db: p.db + shift, deg: p.deg }));
}

/** The closed loop's signal response factor·A/(1 + βA) from its factored form, or why there is none. */
export function closedLoopCurve(m: Model, freqs: number[]): BodePoint[] | string {
  const view = closedLoopView(m);
  if (!view) return 'the topology is not used in a closed loop';
  const r = view.response;
  if (typeof r === 'string') return r;
  const lnFactor = Math.log(Math.abs(view.factor));
  const turn = view.factor < 0 ? -Math.PI : 0;
  return freqs.map((f) => {
    const w = TWO_PI * f;
    return { f, db: (r.factored.lnMag(w) + lnFactor) * DB, deg: ((r.factored.phase(w) + turn) * 180) / Math.PI };
  });
}

/**
 * y(t)/y(∞) of the closed loop's small-signal step response (the sum of its
 * modes), over a span long enough to see it settle into its band: twice the
 * time its envelope needs to fall below the band, and at least `minEnd`.
 */
export function stepCurve(m: Model, samples = 240, minEnd = 0): StepCurve | string {
  const view = closedLoopView(m);
  if (!view) return 'the topology is not used in a closed loop';
  const r = view.response;
  if (typeof r === 'string') return r;
  const end = Math.max(2 * r.step.envelopeBelow(view.band), minEnd);
  if (!(end > 0 && Number.isFinite(end))) return 'the step response could not be followed to its end';
  const points: StepCurve['points'] = [];
  for (let i = 0; i <= samples; i++) {
    const t = (end * i) / samples;
    points.push({ t, y: 1 + r.step.value(t) });
  }
  const settled = settlingTime(r.step, view.band);
  return settled ? { points, band: view.band, settling: settled.t } : { points, band: view.band };
}

/** The input-referred noise density (V/√Hz) at each frequency, or undefined where the topology states no noise. */
export function noiseCurve(m: Model, freqs: number[]): Array<{ f: number; density: number }> | undefined {
  const density = inputNoiseDensity(m);
  if (!density) return undefined;
  const out: Array<{ f: number; density: number }> = [];
  for (const f of freqs) {
    const d = density(f);
    if (Number.isFinite(d) && d > 0) out.push({ f, density: d });
  }
  return out.length ? out : undefined;
}
