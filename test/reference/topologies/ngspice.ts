// Runs ngspice (batch mode) on the single-stage, common-source and three-stage
// nested-Miller netlists of ./netlist.ts and extracts the reference figures.
//
// Per design: deck 1 runs `tf` (exact DC gain, signed) and `pz` (poles and
// zeros, rad/s); its roots choose the AC sweep of deck 2 (≥ 4 decades below
// the lowest root, ≥ 2 above the highest and above |A0|·|p1|; extended by two
// decades at a time until |A| is below −40 dB or flat). Every sweep interval
// holding a crossing (|A| = 1, −3 dB, |βA| = 1, phase at an odd multiple of
// 180°) is re-run with 201 linear points (deck 3), so the figures are
// interpolated on steps ~200× finer than the 1000/decade sweep (the Richardson
// estimate in diagnostics.interpErr is ~1e-11 relative). Common-source designs
// get two more decks with the source at the gate: `pz` for its lowest pole,
// then a one-frequency AC run 1000× below the lowest pole of either circuit
// whose source current gives the input capacitance Im(I_in)/(2πf·|V|).
//
// Parsing (markers, pz lines, AC rows, phase unwrapping, crossings) is
// imported from ../ngspice.ts, the two-stage harness.

import { MARK, type AcSweep } from '../netlist';
import {
  firstFall,
  logFactor,
  parseAc,
  parsePz,
  parseScalars,
  runNetlist,
  section,
  unwrapPhaseDeg,
  type Complex,
} from '../ngspice';
import type { CommonSourceDesign, SingleStageDesign, ThreeStageDesign, TopologyId } from './designs';
import {
  acControl,
  commonSourceElements,
  commonSourceGateElements,
  CS_GATE_PORTS,
  CS_PORTS,
  deck,
  MARK_IIN,
  PORTS,
  singleStageElements,
  sourceCurrentControl,
  tfPzControl,
  zoomControl,
  zoomMarks,
  threeStageElements,
  type Ports,
} from './netlist';

export const POINTS_PER_DECADE = 1000;
/** pz is declared consistent with the AC sweep within these (far inside the 0.1 % / 0.1° bars). */
const PZ_AC_TOL_DB = 1e-4;
const PZ_AC_TOL_DEG = 1e-3;
/** The input capacitance is measured this far below the lowest pole. */
export const CIN_BELOW_POLE = 1000;

export interface TopologyDiagnostics {
  acPointsPerDecade: number;
  fStartHz: number;
  fStopHz: number;
  acPoints: number;
  /** Times the sweep was extended because |A| had not fallen off yet at fStop. */
  sweepExtensions: number;
  acFirstPointDb: number;
  acLastPointDb: number;
  acLastPhaseDeg: number;
  pzVsAcMaxDb: number | null;
  pzVsAcMaxDeg: number | null;
  /** |q(h) − q(2h)|/3 of the sweep at full and half density (Richardson estimate of the interpolation error). */
  interpErr: Record<string, number | null>;
}

export interface TopologyResult {
  /** A(0) in V/V, signed, from ngspice `tf`. */
  dcGain: number;
  dcGainDb: number;
  /** |A| = 1, first crossing from above; null if there is none in the sweep. */
  unityGainHz: number | null;
  /** |A| = |A(0)|/√2, first crossing from above. */
  bandwidthHz: number | null;
  /** Loop figures of β·A: absent for common-source (open loop). First |βA| = 1 crossing, and all of them. */
  loopCrossoverHz?: number | null;
  loopCrossoversHz?: number[];
  phaseMarginDeg?: number | null;
  gainMarginDb?: number | null;
  /** Low-frequency input capacitance at the gate, common-source only. */
  inputCapacitanceF?: number;
  inputCapacitanceAtHz?: number;
  /** rad/s */
  poles: Complex[];
  /** rad/s */
  zeros: Complex[];
  pzFailed: boolean;
  pzNote?: string;
  diagnostics: TopologyDiagnostics;
}

export type AnyDesign = SingleStageDesign | CommonSourceDesign | ThreeStageDesign;

function num(s: string | undefined, what: string): number {
  const x = Number(s);
  if (s === undefined || !Number.isFinite(x)) throw new Error(`cannot parse ngspice ${what} "${s}"`);
  return x;
}

/** "re,im" as printed for a complex scalar. */
function complexScalar(s: string | undefined, what: string): Complex {
  const m = s === undefined ? null : /^([^,\s]+)\s*,\s*(\S+)$/.exec(s);
  if (!m) throw new Error(`cannot parse ngspice complex ${what} "${s}"`);
  return { re: num(m[1], what), im: num(m[2], what) };
}

const mag = (r: Complex) => Math.hypot(r.re, r.im);


/** Max deviation of the AC sweep from K·Π(1 − s/z)/Π(1 − s/p), K signed (arg K = 0 or 180°). */
export function pzVsAc(k: number, poles: Complex[], zeros: Complex[], f: number[], db: number[], ph: number[]): { maxDb: number; maxDeg: number } {
  let maxDb = 0;
  let maxDeg = 0;
  const argK = k < 0 ? 180 : 0;
  for (let i = 0; i < f.length; i++) {
    const w = 2 * Math.PI * f[i];
    const [zl, za] = logFactor(zeros, w);
    const [pl, pa] = logFactor(poles, w);
    const mDb = 20 * Math.log10(Math.abs(k)) + (20 / Math.LN10) * (zl - pl);
    let dDeg = argK + ((za - pa) * 180) / Math.PI - ph[i];
    dDeg -= 360 * Math.round(dDeg / 360);
    maxDb = Math.max(maxDb, Math.abs(mDb - db[i]));
    maxDeg = Math.max(maxDeg, Math.abs(dDeg));
  }
  return { maxDb, maxDeg };
}

interface TfPz {
  a0: number;
  poles: Complex[];
  zeros: Complex[];
  /** null: pz printed roots; otherwise why it did not. */
  pzError: string | null;
}

function runTfPz(id: string, elements: string[], p: Ports): TfPz {
  const { stdout, stderr } = runNetlist(deck(`${id} tf+pz`, elements, tfPzControl(p)));
  const tf = section(stdout, MARK.tf);
  const tfv = parseScalars(tf.lines).get('transfer_function');
  if (!tf.plot.startsWith('tf') || tfv === undefined) throw new Error(`${id}: ngspice tf failed\n${stderr}`);
  const a0 = num(tfv, 'transfer_function');
  const pzSec = section(stdout, MARK.pz);
  if (!pzSec.plot.startsWith('pz')) {
    const err = stderr.split('\n').filter((l) => l.trim() !== '').join(' | ');
    return { a0, poles: [], zeros: [], pzError: `ngspice pz produced no pz plot${err ? `: ${err}` : ''}` };
  }
  return { a0, ...parsePz(pzSec.lines), pzError: null };
}

const decadeFloor = (x: number) => Math.pow(10, Math.floor(Math.log10(x)));
const decadeCeil = (x: number) => Math.pow(10, Math.ceil(Math.log10(x)));

/** Sweep from the roots: 4 decades below the lowest, 2 above the highest pole, relevant zero and |A0|·|p1|. */
export function sweepFromRoots(a0: number, poles: Complex[], zeros: Complex[], acPointsPerDecade = POINTS_PER_DECADE): AcSweep {
  if (poles.length === 0) return { acPointsPerDecade, fStartHz: 1e-6, fStopHz: 1e14 };
  const pm = poles.map(mag);
  const zm = zeros.map(mag).filter((x) => x > 0);
  const pLo = Math.min(...pm);
  const pHi = Math.max(...pm);
  const lo = Math.min(pLo, ...zm);
  const hi = Math.max(pHi, Math.abs(a0) * pLo, ...zm.filter((z) => z < 1e4 * pHi));
  const TWO_PI = 2 * Math.PI;
  return { acPointsPerDecade, fStartHz: decadeFloor((1e-4 * lo) / TWO_PI), fStopHz: decadeCeil((100 * hi) / TWO_PI) };
}

interface Ac {
  sweep: AcSweep;
  f: number[];
  re: number[];
  im: number[];
  db: number[];
  ph: number[];
  extensions: number;
}

function runAc(id: string, elements: string[], p: Ports, first: AcSweep): Ac {
  let sweep = first;
  for (let ext = 0; ; ext++) {
    const { stdout, stderr } = runNetlist(deck(`${id} ac`, elements, acControl(p, sweep)));
    const sec = section(stdout, MARK.ac);
    if (!sec.plot.startsWith('ac')) throw new Error(`${id}: ngspice ac failed\n${stderr}`);
    const { f, re, im } = parseAc(sec.lines);
    const expect = Math.round(Math.log10(sweep.fStopHz / sweep.fStartHz) * sweep.acPointsPerDecade) + 1;
    if (Math.abs(f.length - expect) > 1) throw new Error(`${id}: expected ~${expect} AC points, parsed ${f.length}`);
    const db = re.map((r, i) => 10 * Math.log10(r * r + im[i] * im[i]));
    const ph = unwrapPhaseDeg(re, im);
    const last = db[db.length - 1];
    const decadeBefore = db[db.length - 1 - sweep.acPointsPerDecade];
    // Done when |A| is far below every loop crossing (β ≤ 1) or has settled on its high-frequency asymptote.
    if (last < -40 || Math.abs(last - decadeBefore) < 1e-3) return { sweep, f, re, im, db, ph, extensions: ext };
    if (ext >= 5) throw new Error(`${id}: |A| still ${last.toFixed(2)} dB and falling at ${sweep.fStopHz} Hz`);
    sweep = { ...sweep, fStopHz: sweep.fStopHz * 100 };
  }
}

const relErr = (a: number | null, b: number | null) => (a === null || b === null ? null : Math.abs(a - b) / Math.abs(a) / 3);
const absErr = (a: number | null, b: number | null) => (a === null || b === null ? null : Math.abs(a - b) / 3);

/** Every sign change of y − t between samples, interpolated linearly in log10 f: [f, i, w]. */
function crossings(f: number[], y: number[], t: number): { f: number; i: number; w: number }[] {
  const out: { f: number; i: number; w: number }[] = [];
  for (let i = 0; i + 1 < y.length; i++) {
    const a = y[i] - t;
    const b = y[i + 1] - t;
    if (a === 0 || a * b < 0) {
      const w = a === 0 ? 0 : a / (a - b);
      out.push({ f: Math.pow(10, Math.log10(f[i]) + w * (Math.log10(f[i + 1]) - Math.log10(f[i]))), i, w });
    }
  }
  return out;
}

const lerp = (y: number[], c: { i: number; w: number }) => y[c.i] + c.w * (y[c.i + 1] - y[c.i]);

/** A sampled response: dB and continuous phase (degrees) at ascending frequencies. */
export interface Samples {
  f: number[];
  db: number[];
  ph: number[];
}

export interface SweepMetrics {
  unityGainHz: number | null;
  bandwidthHz: number | null;
  loopCrossoversHz: number[];
  loopCrossoverHz: number | null;
  phaseMarginDeg: number | null;
  gainMarginDb: number | null;
}

/** A crossing found on the coarse sweep: which curve, which level, between samples i and i + 1. */
export interface Crossing {
  role: 'unity' | 'bandwidth' | 'loop' | 'phase';
  curve: 'db' | 'ph';
  level: number;
  i: number;
}

/**
 * The crossings behind every figure: |A| = 1 and |A| = |A(0)|/√2 (first
 * crossing from above), every crossing of |βA| = 1, and every passage of the
 * phase through an odd multiple of 180°.
 */
export function findCrossings(s: Samples, beta: number, dcDb: number): Crossing[] {
  const u = s.f.map(Math.log10);
  const out: Crossing[] = [];
  const ug = firstFall(u, s.db, 0);
  if (ug) out.push({ role: 'unity', curve: 'db', level: 0, i: ug.i });
  const bwLevel = dcDb - 10 * Math.log10(2);
  const bw = firstFall(u, s.db, bwLevel);
  if (bw) out.push({ role: 'bandwidth', curve: 'db', level: bwLevel, i: bw.i });
  const betaDb = 20 * Math.log10(beta);
  for (const c of crossings(s.f, s.db, -betaDb)) out.push({ role: 'loop', curve: 'db', level: -betaDb, i: c.i });
  const lo = Math.min(...s.ph);
  const hi = Math.max(...s.ph);
  for (let k = Math.ceil((lo - 180) / 360); 360 * k + 180 <= hi; k++) {
    for (const c of crossings(s.f, s.ph, 360 * k + 180)) out.push({ role: 'phase', curve: 'ph', level: 360 * k + 180, i: c.i });
  }
  return out;
}

/**
 * Figures from the crossings, each located by linear interpolation in log10 f
 * on `zoom(i)`: samples spanning [f_i, f_i+1] of the coarse sweep (the two
 * coarse samples themselves, or a dense re-run of that interval). Phase
 * margin 180° + ∠βA, the worst over the loop crossings; gain margin
 * −20·log10|βA| at the phase crossings, the worst of them.
 */
export function metricsAt(cs: Crossing[], zoom: (i: number) => Samples, beta: number): SweepMetrics {
  const betaDb = 20 * Math.log10(beta);
  const at = (c: Crossing) => {
    const z = zoom(c.i);
    const y = c.curve === 'db' ? z.db : z.ph;
    const hit = crossings(z.f, y, c.level)[0];
    if (!hit) throw new Error(`crossing of ${c.curve} = ${c.level} between ${z.f[0]} and ${z.f[z.f.length - 1]} Hz vanished on the dense sweep`);
    return { f: hit.f, db: lerp(z.db, hit), ph: lerp(z.ph, hit) };
  };
  const first = (role: Crossing['role']) => {
    const c = cs.find((x) => x.role === role);
    return c ? at(c).f : null;
  };
  const loop = cs.filter((c) => c.role === 'loop').map(at);
  const phase = cs.filter((c) => c.role === 'phase').map(at);
  return {
    unityGainHz: first('unity'),
    bandwidthHz: first('bandwidth'),
    loopCrossoversHz: loop.map((x) => x.f),
    loopCrossoverHz: loop.length ? loop[0].f : null,
    phaseMarginDeg: loop.length ? Math.min(...loop.map((x) => 180 + x.ph)) : null,
    gainMarginDb: phase.length ? Math.min(...phase.map((x) => -(x.db + betaDb))) : null,
  };
}

/** Points of the dense re-run of each interval containing a crossing. */
export const ZOOM_POINTS = 201;

/**
 * Re-runs AC on every coarse interval that holds a crossing, ZOOM_POINTS
 * linear points each, all in one deck; phases aligned to the coarse sweep's
 * continuous phase at the interval start.
 */
function runZoom(id: string, elements: string[], p: Ports, coarse: Samples, intervals: number[]): Map<number, Samples> {
  const out = new Map<number, Samples>();
  if (intervals.length === 0) return out;
  const windows = intervals.map((i): [number, number] => [coarse.f[i], coarse.f[i + 1]]);
  const { stdout, stderr } = runNetlist(deck(`${id} zoom`, elements, zoomControl(p, windows, ZOOM_POINTS)));
  intervals.forEach((i, k) => {
    const sec = section(stdout, zoomMarks(k));
    if (!sec.plot.startsWith('ac')) throw new Error(`${id}: ngspice zoomed ac ${k} failed\n${stderr}`);
    const { f, re, im } = parseAc(sec.lines);
    if (f.length !== ZOOM_POINTS) throw new Error(`${id}: zoomed ac ${k} has ${f.length} points, expected ${ZOOM_POINTS}`);
    const db = re.map((r, j) => 10 * Math.log10(r * r + im[j] * im[j]));
    const raw = unwrapPhaseDeg(re, im);
    const shift = 360 * Math.round((coarse.ph[i] - raw[0]) / 360);
    const ph = raw.map((x) => x + shift);
    if (Math.abs(db[0] - coarse.db[i]) > 1e-9 || Math.abs(ph[0] - coarse.ph[i]) > 1e-9) {
      throw new Error(`${id}: zoomed ac ${k} does not start where the coarse sweep is (${db[0]} vs ${coarse.db[i]} dB)`);
    }
    out.set(i, { f, db, ph });
  });
  return out;
}

interface Expect {
  poles: number;
  zeros: number;
  /** Sign of A(0). */
  sign: 1 | -1;
}

function expectFor(kind: TopologyId, d: AnyDesign): Expect {
  switch (kind) {
    case 'single-stage': {
      const s = d as SingleStageDesign;
      const cas = s.gm_cas !== undefined;
      const mir = s.gm_mirror !== undefined;
      return { poles: 1 + (cas ? 1 : 0) + (mir ? 1 : 0), zeros: mir ? 1 : 0, sign: 1 };
    }
    case 'common-source':
      return { poles: (d as CommonSourceDesign).rs > 0 ? 2 : 1, zeros: 1, sign: -1 };
    case 'three-stage-nested-miller':
      return { poles: 3, zeros: 2, sign: 1 };
  }
}

export function elementsFor(kind: TopologyId, d: AnyDesign): { elements: string[]; ports: Ports } {
  switch (kind) {
    case 'single-stage':
      return { elements: singleStageElements(d as SingleStageDesign), ports: PORTS };
    case 'common-source':
      return { elements: commonSourceElements(d as CommonSourceDesign), ports: CS_PORTS };
    case 'three-stage-nested-miller':
      return { elements: threeStageElements(d as ThreeStageDesign), ports: PORTS };
  }
}

/**
 * Input capacitance of the common-source stage: the source at the gate,
 * C_in = Im(I_in)/(2πf·|V|) with I_in = −i(vin) (ngspice's i(vin) flows into
 * the source's + terminal, so the current it delivers is the negative),
 * measured CIN_BELOW_POLE times below `lowestPoleRad` and the gate-driven circuit's own lowest pole.
 */
export function measureInputCapacitance(d: CommonSourceDesign, lowestPoleRad: number): { farads: number; atHz: number } {
  const els = commonSourceGateElements(d);
  const g = runTfPz(`${d.id} gate`, els, CS_GATE_PORTS);
  if (g.pzError !== null || g.poles.length !== 1) throw new Error(`${d.id}: gate-driven pz failed: ${g.pzError ?? `${g.poles.length} poles`}`);
  const wLow = Math.min(lowestPoleRad, mag(g.poles[0]));
  const atHz = wLow / (2 * Math.PI * CIN_BELOW_POLE);
  const { stdout, stderr } = runNetlist(deck(`${d.id} cin`, els, sourceCurrentControl(CS_GATE_PORTS, atHz)));
  const sec = section(stdout, MARK_IIN);
  if (!sec.plot.startsWith('ac')) throw new Error(`${d.id}: ngspice ac (input current) failed\n${stderr}`);
  const sc = parseScalars(sec.lines);
  const iSrc = complexScalar(sc.get(`i(${CS_GATE_PORTS.source})`), 'source current');
  const v = complexScalar(sc.get(`v(${CS_GATE_PORTS.input})`), 'gate voltage');
  const iIn = { re: -iSrc.re, im: -iSrc.im };
  // Admittance Y = I/V; C = Im(Y)/ω (V is 1 + 0j here, divided out all the same).
  const v2 = v.re * v.re + v.im * v.im;
  const yIm = (iIn.im * v.re - iIn.re * v.im) / v2;
  return { farads: yIm / (2 * Math.PI * atHz), atHz };
}

export interface RunOptions {
  acPointsPerDecade?: number;
}

/** Full reference run of one design. Throws on anything that makes the sweep itself untrustworthy. */
export function runTopology(kind: TopologyId, d: AnyDesign, opts: RunOptions = {}): TopologyResult {
  const { elements, ports } = elementsFor(kind, d);
  const exp = expectFor(kind, d);
  const tp = runTfPz(d.id, elements, ports);
  const { a0 } = tp;
  if (!(Math.sign(a0) === exp.sign)) throw new Error(`${d.id}: expected DC gain of sign ${exp.sign}, ngspice tf gave ${a0}`);
  const dcGainDb = 20 * Math.log10(Math.abs(a0));

  const notes: string[] = [];
  let pzFailed = false;
  if (tp.pzError !== null) {
    pzFailed = true;
    notes.push(tp.pzError);
  } else {
    if (tp.poles.length !== exp.poles) {
      pzFailed = true;
      notes.push(`ngspice pz returned ${tp.poles.length} poles, network has ${exp.poles}`);
    }
    if (tp.zeros.length !== exp.zeros) notes.push(`ngspice pz returned ${tp.zeros.length} zeros where the transfer function has ${exp.zeros}`);
    if (tp.poles.some((p) => !(p.re < 0))) notes.push('ngspice pz returned a pole not in the open left half-plane');
  }

  const ac = runAc(d.id, elements, ports, sweepFromRoots(a0, pzFailed ? [] : tp.poles, pzFailed ? [] : tp.zeros, opts.acPointsPerDecade));
  const { f, db, ph, sweep } = ac;
  const ph0 = exp.sign > 0 ? ph[0] : Math.abs(ph[0]) - 180;
  if (Math.abs(ph0) > 1) throw new Error(`${d.id}: phase at fStart is ${ph[0]}°, sweep does not start near DC`);
  if (Math.abs(db[0] - dcGainDb) > 1e-4) throw new Error(`${d.id}: first AC point ${db[0]} dB vs tf ${dcGainDb} dB: fStart not low enough`);

  let pzVsAcMaxDb: number | null = null;
  let pzVsAcMaxDeg: number | null = null;
  if (tp.pzError === null) {
    const dev = pzVsAc(a0, tp.poles, tp.zeros, f, db, ph);
    pzVsAcMaxDb = dev.maxDb;
    pzVsAcMaxDeg = dev.maxDeg;
    if (dev.maxDb > PZ_AC_TOL_DB || dev.maxDeg > PZ_AC_TOL_DEG) {
      pzFailed = true;
      notes.push(`pz roots disagree with the AC sweep: max ${dev.maxDb.toExponential(2)} dB, ${dev.maxDeg.toExponential(2)}°`);
    }
  }

  const even = (_: number, i: number) => i % 2 === 0;
  const isCs = kind === 'common-source';
  // Common-source is open loop: its sweep figures are taken at β = 1 and only |A| figures are kept.
  const beta = isCs ? 1 : (d as SingleStageDesign | ThreeStageDesign).beta;
  const coarse: Samples = { f, db, ph };
  const found = findCrossings(coarse, beta, dcGainDb).filter((c) => !isCs || c.role === 'unity' || c.role === 'bandwidth');
  const zoomed = runZoom(d.id, elements, ports, coarse, [...new Set(found.map((c) => c.i))]);
  const dense = (i: number) => zoomed.get(i)!;
  const halfDense = (i: number) => {
    const z = dense(i);
    return { f: z.f.filter(even), db: z.db.filter(even), ph: z.ph.filter(even) };
  };
  const m = metricsAt(found, dense, beta);
  const m2 = metricsAt(found, halfDense, beta);
  const interpErr: Record<string, number | null> = {
    unityGainRel: relErr(m.unityGainHz, m2.unityGainHz),
    bandwidthRel: relErr(m.bandwidthHz, m2.bandwidthHz),
  };
  const result: TopologyResult = {
    dcGain: a0,
    dcGainDb,
    unityGainHz: m.unityGainHz,
    bandwidthHz: m.bandwidthHz,
    poles: tp.poles,
    zeros: tp.zeros,
    pzFailed,
    diagnostics: {
      acPointsPerDecade: sweep.acPointsPerDecade,
      fStartHz: sweep.fStartHz,
      fStopHz: sweep.fStopHz,
      acPoints: f.length,
      sweepExtensions: ac.extensions,
      acFirstPointDb: db[0],
      acLastPointDb: db[db.length - 1],
      acLastPhaseDeg: ph[ph.length - 1],
      pzVsAcMaxDb,
      pzVsAcMaxDeg,
      interpErr,
    },
  };

  if (isCs) {
    if (pzFailed) throw new Error(`${d.id}: pz needed for the input-capacitance frequency: ${notes.join('; ')}`);
    const cin = measureInputCapacitance(d as CommonSourceDesign, Math.min(...tp.poles.map(mag)));
    result.inputCapacitanceF = cin.farads;
    result.inputCapacitanceAtHz = cin.atHz;
  } else {
    result.loopCrossoverHz = m.loopCrossoverHz;
    result.loopCrossoversHz = m.loopCrossoversHz;
    result.phaseMarginDeg = m.phaseMarginDeg;
    result.gainMarginDb = m.gainMarginDb;
    interpErr.loopCrossoverRel = relErr(m.loopCrossoverHz, m2.loopCrossoverHz);
    interpErr.phaseMarginDeg = absErr(m.phaseMarginDeg, m2.phaseMarginDeg);
    interpErr.gainMarginDb = absErr(m.gainMarginDb, m2.gainMarginDb);
  }
  if (notes.length > 0) result.pzNote = notes.join('; ');
  return result;
}
