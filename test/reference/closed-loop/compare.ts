// The engine's closed-loop figures against ngspice's measurements of the same
// closed loop (./ngspice.ts), case by case. Bars (issue 12): overshoot within
// 0.05 percentage points, rise and settling time within 0.5 %, closed-loop
// bandwidth within 0.1 %, peaking within 0.01 dB; the slew-limited settling
// within 2 %; the closed-loop DC gain within 1e-4 dB (it is one nodal solve).

import { closedLoopResponse, largeStepSettling, peakMagnitude } from '../../../src/engine/closed-loop';
import { evaluate } from '../../../src/model/model';
import { STEP_INPUT } from '../../../src/topologies/common';
import type { LoopCase } from './cases';
import { type SimResult, deck, limitedPair, parse, runDeck } from './ngspice';

export const BARS = { overshootPp: 0.05, riseRel: 5e-3, settleRel: 5e-3, bandwidthRel: 1e-3, peakingDb: 0.01, slewSettleRel: 0.02, gainDb: 1e-4 };

export interface SmallSignalErrors {
  id: string;
  overshootPp: number;
  riseRel: number;
  settleRel: number;
  bandwidthRel: number;
  peakingDb: number;
  gainDb: number;
  problems: string[];
}

export interface LargeStepErrors {
  id: string;
  settleRel: number;
  /** How far the pair was driven, |gm·v_id|/i_tail at most (> 1: it slewed). */
  peakDrive: number;
  problems: string[];
}

const BAND = 1e-3;

/** The engine's small-signal figures of a case against one ngspice run of its closed loop. */
export async function smallSignal(c: LoopCase): Promise<SmallSignalErrors> {
  const m = evaluate(c.topology, c.values);
  const f = (k: string) => m.exact[k]?.value ?? null;
  const e: SmallSignalErrors = { id: c.id, overshootPp: 0, riseRel: 0, settleRel: 0, bandwidthRel: 0, peakingDb: 0, gainDb: 0, problems: [] };
  const [os, rise, settle, bw, pk, gain] = ['overshoot', 'rise_time', 'settling_time', 'closed_loop_bandwidth', 'peaking', 'closed_loop_gain'].map(f);
  if (os === null || rise === null || settle === null || bw === null || pk === null || gain === null) {
    e.problems.push(`engine gives no figure: ${['overshoot', 'rise_time', 'settling_time', 'closed_loop_bandwidth', 'peaking', 'closed_loop_gain'].filter((k) => f(k) === null).map((k) => `${k} (${m.exact[k]?.reason})`).join(', ')}`);
    return e;
  }
  const tr = rise * 1e-6;
  const tstop = 3 * Math.max(settle, rise * 10);
  // Where the engine puts the peak (an input of the run, not a figure compared): ngspice samples it densely there.
  const r = closedLoopResponse(m.analysis, m.beta, m.loop.closedLoopPoles);
  const fPeak = pk > 0 && typeof r !== 'string' ? (peakMagnitude(r.factored)?.w ?? 0) / (2 * Math.PI) || null : null;
  const text = deck(c, c.elements, { step: 1, tr, tstop, tmax: tstop / 12000, band: BAND, ac: [bw / 1e3, bw * 1e2], ...(fPeak ? { zoom: [fPeak * 0.9, fPeak * 1.1] as [number, number] } : {}) });
  const { stdout, stderr } = await runDeck(text);
  const ng: SimResult = parse(stdout, stderr);
  const yf = ng.dcGain;
  // A response that never passes its final value crosses only the lower edge of the band.
  const lastExit = Math.max(ng.tUpper ?? -Infinity, ng.tLower ?? -Infinity);
  if (ng.extreme === null || ng.t10 === null || ng.t90 === null || !Number.isFinite(lastExit) || ng.peakDb === null || ng.bandwidthHz === null) {
    e.problems.push(`ngspice measured no value for ${Object.entries(ng).filter(([, v]) => v === null).map(([k]) => k).join(', ')}`);
    return e;
  }
  const ngOvershoot = Math.max(0, ng.extreme - 1);
  e.overshootPp = Math.abs(100 * (os - ngOvershoot));
  e.riseRel = Math.abs(rise - (ng.t90 - ng.t10)) / (ng.t90 - ng.t10);
  const ngSettle = lastExit - tr / 2;
  e.settleRel = Math.abs(settle - ngSettle) / ngSettle;
  e.bandwidthRel = Math.abs(bw - ng.bandwidthHz) / ng.bandwidthHz;
  const dcDb = 20 * Math.log10(Math.abs(yf));
  e.peakingDb = Math.abs(pk - Math.max(0, ng.peakDb));
  e.gainDb = Math.abs(gain - dcDb);
  return e;
}

/** Settling after a 1 V output step with the pair saturating at its tail, engine against ngspice with the behavioural pair. */
export async function largeStep(c: LoopCase): Promise<LargeStepErrors> {
  // 1 V at the output, or less where the loop gain cannot hold the pair linear
  // once settled: v_id = step/A0 there, kept below 0.5 % of i_tail/gm.
  const a0 = Math.abs(evaluate(c.topology, c.values).analysis.dcGain);
  const outputStep = Math.min(1, (0.005 * a0 * c.pair.tail) / c.pair.gm);
  const u = outputStep / Math.abs(c.gain);
  const m = evaluate(c.topology, { ...c.values, [STEP_INPUT]: u });
  const fig = m.exact.settling_time;
  const e: LargeStepErrors = { id: c.id, settleRel: 0, peakDrive: 0, problems: [] };
  if (fig.value === null) {
    e.problems.push(`engine gives no settling time: ${fig.reason}`);
    return e;
  }
  if (fig.method !== 'transient') e.problems.push(`engine settling is ${fig.method}, not the large-signal model`);
  const run = largeStepSettling(m.analysis.stamped, m.beta, m.loop.closedLoopPoles, c.pair, Math.abs(c.gain) * u, BAND);
  e.peakDrive = typeof run === 'string' ? NaN : run.peakDrive;
  const settle = fig.value;
  const small = m.exact.rise_time.value ?? settle / 10;
  const tr = small * 1e-4;
  const tstop = 3 * settle;
  const { stdout, stderr } = await runDeck(deck(c, limitedPair(c.elements, c.pair), { step: u, tr, tstop, tmax: tstop / 12000, band: BAND }));
  const ng = parse(stdout, stderr);
  const lastExit = Math.max(ng.tUpper ?? -Infinity, ng.tLower ?? -Infinity);
  if (!Number.isFinite(lastExit)) {
    e.problems.push('ngspice measured no settling time');
    return e;
  }
  const ngSettle = lastExit - tr / 2;
  e.settleRel = Math.abs(settle - ngSettle) / ngSettle;
  return e;
}
