// Compares the engine with an ngspice result for the same two-stage design.
// Bars (issue: core): DC gain 0.01 dB, frequencies and poles 0.1 %, phase 0.1°.

import { type LoopAnalysis, analyzeLoop, analyzeNetwork, wrapDeg } from '../../src/engine/analyze';
import type { Root } from '../../src/engine/roots';
import { twoStageMiller } from '../../src/topologies/two-stage-miller';
import type { TwoStageDesign } from './designs';
import type { NgspiceResult } from './ngspice';

/**
 * The margins read off the open loop, for comparison with an AC sweep: of the
 * margins at the engine's crossovers (within ±180°), the one nearest the
 * sweep's (which crossover a sweep script reports varies), and the gain
 * margin at the first phase crossing.
 */
export function readOffOpenLoop(loop: LoopAnalysis, theirsDeg: number | null | undefined): { phaseMarginDeg: number | null; gainMarginDb: number | null } {
  const first = loop.phaseCrossings.find((c) => c.fHz > 0);
  const target = theirsDeg === null || theirsDeg === undefined ? 0 : wrapDeg(theirsDeg);
  let pm: number | null = null;
  for (const m of loop.crossoverMarginsDeg) if (pm === null || Math.abs(m - target) < Math.abs(pm - target)) pm = m;
  return { phaseMarginDeg: pm, gainMarginDb: first ? -first.loopDb : null };
}

export const BARS = { dcGainDb: 0.01, freqRel: 1e-3, phaseDeg: 0.1, gainMarginDb: 0.01 };

export interface Errors {
  dcGainDb: number;
  unityGainRel: number;
  crossoverRel: number;
  phaseMarginDeg: number;
  gainMarginDb: number;
  poleRel: number;
  zeroRel: number;
  problems: string[];
}

const relRoot = (a: Root, b: Root): number => Math.hypot(a.re - b.re, a.im - b.im) / Math.hypot(b.re, b.im);

export function compare(d: TwoStageDesign, ng: NgspiceResult): Errors {
  const { id: _id, rl, ...rest } = d;
  const values: Record<string, number> = { ...rest, rz: d.rz ?? 0, ...(rl !== undefined ? { rl } : {}) };
  const a = analyzeNetwork(twoStageMiller.network(values));
  const loop = analyzeLoop(a, d.beta);
  const e: Errors = { dcGainDb: 0, unityGainRel: 0, crossoverRel: 0, phaseMarginDeg: 0, gainMarginDb: 0, poleRel: 0, zeroRel: 0, problems: [] };
  e.dcGainDb = Math.abs(20 * Math.log10(Math.abs(a.dcGain)) - ng.dcGainDb);

  const freq = (name: string, mine: number | null, theirs: number | null): number => {
    if (mine === null || theirs === null) {
      if (mine !== theirs) e.problems.push(`${name}: engine ${mine}, ngspice ${theirs}`);
      return 0;
    }
    return Math.abs(mine - theirs) / theirs;
  };
  e.unityGainRel = freq('unity-gain frequency', loop.unityGain.value, ng.unityGainHz);
  e.crossoverRel = freq('loop crossover', loop.crossoversHz[0] ?? null, ng.loopCrossoverHz);
  // The margins as ngspice's AC sweep reads them off the open loop (first
  // crossover, first fall of the phase through −180°), whatever the closed
  // loop's stability, which the engine decides separately and states.
  const { phaseMarginDeg: pm, gainMarginDb: gm } = readOffOpenLoop(loop, ng.phaseMarginDeg);
  if (pm === null || ng.phaseMarginDeg === null) {
    if (pm !== ng.phaseMarginDeg) e.problems.push(`phase margin: engine ${pm}, ngspice ${ng.phaseMarginDeg}`);
  } else e.phaseMarginDeg = Math.abs(pm - wrapDeg(ng.phaseMarginDeg));
  if (gm !== null && ng.gainMarginDb !== null) e.gainMarginDb = Math.abs(gm - ng.gainMarginDb);
  else if (ng.gainMarginDb !== null) e.problems.push(`gain margin: engine none, ngspice ${ng.gainMarginDb}`);
  // ngspice's sweep ends a few decades above the poles; a phase crossing beyond it is the engine's alone.

  if (!ng.pzFailed) {
    const theirs = [...ng.poles].sort((x, y) => Math.hypot(x.re, x.im) - Math.hypot(y.re, y.im));
    if (theirs.length !== a.poles.length) e.problems.push(`pole count: engine ${a.poles.length}, ngspice ${theirs.length}`);
    for (const p of theirs) e.poleRel = Math.max(e.poleRel, Math.min(...a.poles.map((q) => relRoot(q, p))));
    // Every zero ngspice finds must be one of the engine's (ngspice drops zeros
    // far beyond the highest pole, so the converse is not required).
    for (const z of ng.zeros) e.zeroRel = Math.max(e.zeroRel, a.zeros.length ? Math.min(...a.zeros.map((q) => relRoot(q, z))) : Infinity);
  }
  return e;
}

export function within(e: Errors): string[] {
  const out = [...e.problems];
  if (!(e.dcGainDb <= BARS.dcGainDb)) out.push(`DC gain off by ${e.dcGainDb} dB`);
  if (!(e.unityGainRel <= BARS.freqRel)) out.push(`unity-gain frequency off by ${e.unityGainRel}`);
  if (!(e.crossoverRel <= BARS.freqRel)) out.push(`crossover off by ${e.crossoverRel}`);
  if (!(e.phaseMarginDeg <= BARS.phaseDeg)) out.push(`phase margin off by ${e.phaseMarginDeg}°`);
  if (!(e.gainMarginDb <= BARS.gainMarginDb)) out.push(`gain margin off by ${e.gainMarginDb} dB`);
  if (!(e.poleRel <= BARS.freqRel)) out.push(`a pole off by ${e.poleRel}`);
  if (!(e.zeroRel <= BARS.freqRel)) out.push(`a zero off by ${e.zeroRel}`);
  return out;
}

export function worst(all: Errors[]): Record<string, number> {
  const keys = ['dcGainDb', 'unityGainRel', 'crossoverRel', 'phaseMarginDeg', 'gainMarginDb', 'poleRel', 'zeroRel'] as const;
  return Object.fromEntries(keys.map((k) => [k, Math.max(0, ...all.map((e) => e[k]))]));
}
