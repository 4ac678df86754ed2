// Compares the engine (evaluate() of src/model/model.ts with the topology modules)
// with an ngspice result for the same design.
// Bars: DC gain 0.01 dB, frequencies and poles 0.1 %, phase margin 0.1°,
// gain margin 0.01 dB; input capacitance 1e-5 relative (ngspice measures it
// 1000× below the lowest pole, where it is within ~1e-6 of its DC limit).

import { evaluate } from '../../../src/model/model';
import { wrapDeg } from '../../../src/engine/analyze';
import { readOffOpenLoop } from '../compare';
import { commonSource } from '../../../src/topologies/common-source';
import { singleStage } from '../../../src/topologies/single-stage';
import { threeStageNestedMiller } from '../../../src/topologies/three-stage-nested-miller';
import type { Topology, Values } from '../../../src/topologies/types';
import type { Complex } from '../ngspice';
import type { TopologyId } from './designs';
import type { AnyDesign, TopologyResult } from './ngspice';

export const BARS = { dcGainDb: 0.01, freqRel: 1e-3, phaseDeg: 0.1, gainMarginDb: 0.01, cinRel: 1e-5 };

export const TOPOLOGY: Record<TopologyId, Topology> = {
  'single-stage': singleStage,
  'common-source': commonSource,
  'three-stage-nested-miller': threeStageNestedMiller,
};

export interface Errors {
  dcGainDb: number;
  unityGainRel: number;
  bandwidthRel: number;
  crossoverRel: number;
  phaseMarginDeg: number;
  gainMarginDb: number;
  poleRel: number;
  zeroRel: number;
  inputCapacitanceRel: number;
  /** Mismatches that are not a number off by some amount (a figure one side lacks, a sign, a count). */
  problems: string[];
}

export const ERROR_KEYS = ['dcGainDb', 'unityGainRel', 'bandwidthRel', 'crossoverRel', 'phaseMarginDeg', 'gainMarginDb', 'poleRel', 'zeroRel', 'inputCapacitanceRel'] as const;

/** The design as the values of a spec: every field but the id (absent optional ones stay absent). */
export function valuesOf(d: AnyDesign): Values {
  const { id: _id, ...rest } = d;
  return rest as unknown as Values;
}

const relRoot = (a: Complex, b: Complex): number => Math.hypot(a.re - b.re, a.im - b.im) / Math.hypot(b.re, b.im);

export function compare(kind: TopologyId, d: AnyDesign, ng: TopologyResult): Errors {
  const model = evaluate(TOPOLOGY[kind], valuesOf(d));
  const { exact, analysis, loop } = model;
  const e: Errors = { dcGainDb: 0, unityGainRel: 0, bandwidthRel: 0, crossoverRel: 0, phaseMarginDeg: 0, gainMarginDb: 0, poleRel: 0, zeroRel: 0, inputCapacitanceRel: 0, problems: [] };

  const num = (name: string, mine: number | null | undefined, theirs: number | null | undefined, diff: (a: number, b: number) => number): number => {
    if (mine === null || mine === undefined || theirs === null || theirs === undefined) {
      if ((mine ?? null) !== (theirs ?? null)) e.problems.push(`${name}: engine ${mine}, ngspice ${theirs}`);
      return 0;
    }
    return diff(mine, theirs);
  };
  const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);
  const abs = (a: number, b: number) => Math.abs(a - b);

  if (Math.sign(analysis.dcGain) !== Math.sign(ng.dcGain)) e.problems.push(`DC gain sign: engine ${analysis.dcGain}, ngspice ${ng.dcGain}`);
  e.dcGainDb = num('DC gain', exact.dc_gain?.value, ng.dcGainDb, abs);
  e.bandwidthRel = num('−3 dB bandwidth', exact.bandwidth?.value, ng.bandwidthHz, rel);

  if (kind === 'common-source') {
    // Open loop: DC gain, bandwidth, poles, zeros and the input capacitance are its figures (the
    // unity-gain frequency is recorded in the fixture but not one of them; see fixture.test.ts).
    e.inputCapacitanceRel = num('input capacitance', exact.input_capacitance?.value, ng.inputCapacitanceF, rel);
  } else {
    e.unityGainRel = num('unity-gain frequency', exact.gbw?.value, ng.unityGainHz, rel);
    // Loop figures of β·A. ngspice sees only its sweep; the engine's crossings inside it must be the same ones.
    const { fStartHz, fStopHz } = ng.diagnostics;
    const mine = loop.crossoversHz.filter((f) => f >= fStartHz && f <= fStopHz);
    const theirs = ng.loopCrossoversHz ?? [];
    if (mine.length !== theirs.length) e.problems.push(`loop crossovers: engine ${JSON.stringify(loop.crossoversHz)}, ngspice ${JSON.stringify(theirs)}`);
    else for (let i = 0; i < mine.length; i++) e.crossoverRel = Math.max(e.crossoverRel, rel(mine[i], theirs[i]));
    e.crossoverRel = Math.max(e.crossoverRel, num('first loop crossover', loop.crossoversHz[0] ?? null, ng.loopCrossoverHz, rel));
    // Margins as ngspice's sweep reads them off the open loop; stability is decided apart (readOffOpenLoop).
    const read = readOffOpenLoop(loop, ng.phaseMarginDeg);
    e.phaseMarginDeg = num('phase margin', read.phaseMarginDeg, ng.phaseMarginDeg === null || ng.phaseMarginDeg === undefined ? ng.phaseMarginDeg : wrapDeg(ng.phaseMarginDeg), abs);
    const gm = read.gainMarginDb;
    // A phase crossing beyond ngspice's sweep (two decades above every root) is the engine's alone.
    if (gm !== null && ng.gainMarginDb !== null && ng.gainMarginDb !== undefined) e.gainMarginDb = abs(gm, ng.gainMarginDb);
    else if (ng.gainMarginDb !== null && ng.gainMarginDb !== undefined) e.problems.push(`gain margin: engine none, ngspice ${ng.gainMarginDb}`);
  }

  if (!ng.pzFailed) {
    const poles = analysis.poles;
    if (ng.poles.length !== poles.length) e.problems.push(`pole count: engine ${poles.length}, ngspice ${ng.poles.length}`);
    for (const p of ng.poles) e.poleRel = Math.max(e.poleRel, poles.length ? Math.min(...poles.map((q) => relRoot(q, p))) : Infinity);
    // Every zero ngspice finds must be one of the engine's; ngspice may drop zeros far above the poles.
    for (const z of ng.zeros) e.zeroRel = Math.max(e.zeroRel, analysis.zeros.length ? Math.min(...analysis.zeros.map((q) => relRoot(q, z))) : Infinity);
    if (analysis.zeros.length < ng.zeros.length) e.problems.push(`zero count: engine ${analysis.zeros.length}, ngspice ${ng.zeros.length}`);
  }
  return e;
}

export function within(e: Errors): string[] {
  const out = [...e.problems];
  if (!(e.dcGainDb <= BARS.dcGainDb)) out.push(`DC gain off by ${e.dcGainDb} dB`);
  if (!(e.unityGainRel <= BARS.freqRel)) out.push(`unity-gain frequency off by ${e.unityGainRel}`);
  if (!(e.bandwidthRel <= BARS.freqRel)) out.push(`bandwidth off by ${e.bandwidthRel}`);
  if (!(e.crossoverRel <= BARS.freqRel)) out.push(`crossover off by ${e.crossoverRel}`);
  if (!(e.phaseMarginDeg <= BARS.phaseDeg)) out.push(`phase margin off by ${e.phaseMarginDeg}°`);
  if (!(e.gainMarginDb <= BARS.gainMarginDb)) out.push(`gain margin off by ${e.gainMarginDb} dB`);
  if (!(e.poleRel <= BARS.freqRel)) out.push(`a pole off by ${e.poleRel}`);
  if (!(e.zeroRel <= BARS.freqRel)) out.push(`a zero off by ${e.zeroRel}`);
  if (!(e.inputCapacitanceRel <= BARS.cinRel)) out.push(`input capacitance off by ${e.inputCapacitanceRel}`);
  return out;
}

/** Worst of each error over a set of comparisons, with the design it came from. */
export function worst(all: { id: string; e: Errors }[]): Record<string, string> {
  const out: Record<string, string> = {};
  for (const k of ERROR_KEYS) {
    let best = { v: 0, id: '-' };
    for (const { id, e } of all) if (e[k] > best.v) best = { v: e[k], id };
    out[k] = `${best.v.toExponential(2)} (${best.id})`;
  }
  return out;
}
