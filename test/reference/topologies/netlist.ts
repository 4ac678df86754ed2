// ngspice netlists of the single-stage OTA, common-source and three-stage
// nested-Miller small-signal circuits, written from the design parameters
// (not converted from the engine's network). VCCS lines follow the SPICE
// convention: `G a b cp cn gm` pushes gm·(v(cp) − v(cn)) out of node a,
// through the source, into node b.
//
// single-stage: the signal passes the cascode node first (if present); behind it, with a
// mirror, half goes to the output directly and half through the mirror node:
//   cascode:             Gd xa 0 in 0 {gm}; Rcas xa 0 {1/gm_cas}; Ccas xa 0; then from v(xa) (inverted)
//                        Gc out 0 xa 0 {gm_cas or gm_cas/2}; with the mirror also Gcm m 0 xa 0 {gm_cas/2}
//   no cascode:          Gd 0 out in 0 {gm or gm/2}; with the mirror also Gm1 0 m in 0 {gm/2}
//   mirror:              Rm m 0 {1/gm_mirror}; Cm m 0; Gm2 0 out m 0 {gm_mirror}
//   output:              Rout, Cout = cout + cl, RL (if present) from out to ground
// common-source:  RS in g (gate = in when rs = 0); CGS g 0; CGD g d; G1 d 0 g 0 {gm}; RO, CD = cdb + cl, RL at d
// three-stage:    G1 n1 0 in 0 (inverting); G2 0 n2 n1 0 (non-inverting); G3 out 0 n2 0 (inverting);
//                 R/C of each node to ground (C3 = c3 + cl, RL at out); CC1 n1 out; CC2 n2 out

import { MARK, spiceNum, type AcSweep } from '../netlist';
import type { CommonSourceDesign, SingleStageDesign, ThreeStageDesign } from './designs';

/** What the analyses of a deck refer to: the driving source, its node and the output node. */
export interface Ports {
  source: string;
  input: string;
  output: string;
}

export const PORTS = { source: 'vin', input: 'in', output: 'out' } as const satisfies Ports;
export const CS_PORTS = { source: 'vin', input: 'in', output: 'd' } as const satisfies Ports;
/** Common-source stage with the ac source right at the gate, for the input capacitance. */
export const CS_GATE_PORTS = { source: 'vin', input: 'g', output: 'd' } as const satisfies Ports;

function positive(name: string, x: number | undefined): number {
  if (x === undefined || !(x > 0) || !Number.isFinite(x)) throw new Error(`${name} must be a finite positive number, got ${x}`);
  return x;
}
function nonNegative(name: string, x: number): number {
  if (!(x >= 0) || !Number.isFinite(x)) throw new Error(`${name} must be a finite number >= 0, got ${x}`);
  return x;
}
const n = spiceNum;

/** A capacitor line, or nothing for exactly 0 F (ngspice accepts 0 F, but an absent element is the cleaner statement). */
function cap(name: string, a: string, b: string, c: number): string[] {
  return nonNegative(name, c) > 0 ? [`${name} ${a} ${b} ${n(c)}`] : [];
}

export function singleStageElements(d: SingleStageDesign): string[] {
  const cas = d.gm_cas !== undefined || d.c_cas !== undefined;
  const mir = d.gm_mirror !== undefined || d.c_mirror !== undefined;
  const gm = positive('gm', d.gm);
  const gDirect = mir ? gm / 2 : gm;
  const lines = ['vin in 0 dc 0 ac 1'];
  if (cas) {
    const gc = positive('gm_cas', d.gm_cas);
    lines.push(`Gd xa 0 in 0 ${n(gm)}`, `Rcas xa 0 ${n(1 / gc)}`, `Ccas xa 0 ${n(positive('c_cas', d.c_cas))}`, `Gc out 0 xa 0 ${n(mir ? gc / 2 : gc)}`);
    if (mir) lines.push(`Gcm m 0 xa 0 ${n(gc / 2)}`);
  } else {
    lines.push(`Gd 0 out in 0 ${n(gDirect)}`);
    if (mir) lines.push(`Gm1 0 m in 0 ${n(gm / 2)}`);
  }
  if (mir) {
    const gmm = positive('gm_mirror', d.gm_mirror);
    lines.push(`Rm m 0 ${n(1 / gmm)}`, `Cm m 0 ${n(positive('c_mirror', d.c_mirror))}`, `Gm2 0 out m 0 ${n(gmm)}`);
  }
  lines.push(`Rout out 0 ${n(positive('rout', d.rout))}`, `Cout out 0 ${n(positive('cout + cl', nonNegative('cout', d.cout) + nonNegative('cl', d.cl)))}`);
  if (d.rl !== undefined) lines.push(`RL out 0 ${n(positive('rl', d.rl))}`);
  return lines;
}

/** The drain side (G1, RO, CD, RL) and both gate capacitors, shared by the two decks. */
function csCore(d: CommonSourceDesign, g: string): string[] {
  const lines = [
    ...cap('CGS', g, '0', d.cgs),
    `CGD ${g} d ${n(positive('cgd', d.cgd))}`,
    `G1 d 0 ${g} 0 ${n(positive('gm', d.gm))}`,
    `RO d 0 ${n(positive('rout', d.rout))}`,
    ...cap('CD', 'd', '0', nonNegative('cdb', d.cdb) + nonNegative('cl', d.cl)),
  ];
  if (d.rl !== undefined) lines.push(`RL d 0 ${n(positive('rl', d.rl))}`);
  return lines;
}

/** Source (with rs) driving the stage: v(d)/v(in). With rs = 0 the gate node is the input node. */
export function commonSourceElements(d: CommonSourceDesign): string[] {
  const rs = nonNegative('rs', d.rs);
  if (rs === 0) return ['vin in 0 dc 0 ac 1', ...csCore(d, 'in')];
  return ['vin in 0 dc 0 ac 1', `RS in g ${n(rs)}`, ...csCore(d, 'g')];
}

/** The ac source right at the gate (rs bypassed): its current gives the input admittance. */
export function commonSourceGateElements(d: CommonSourceDesign): string[] {
  return ['vin g 0 dc 0 ac 1', ...csCore(d, 'g')];
}

export function threeStageElements(d: ThreeStageDesign): string[] {
  const lines = [
    'vin in 0 dc 0 ac 1',
    `G1 n1 0 in 0 ${n(positive('gm1', d.gm1))}`,
    `R1 n1 0 ${n(positive('r1', d.r1))}`,
    ...cap('C1', 'n1', '0', d.c1),
    `G2 0 n2 n1 0 ${n(positive('gm2', d.gm2))}`,
    `R2 n2 0 ${n(positive('r2', d.r2))}`,
    ...cap('C2', 'n2', '0', d.c2),
    `G3 out 0 n2 0 ${n(positive('gm3', d.gm3))}`,
    `R3 out 0 ${n(positive('r3', d.r3))}`,
    ...cap('C3', 'out', '0', nonNegative('c3', d.c3) + nonNegative('cl', d.cl)),
  ];
  if (d.rl !== undefined) lines.push(`RL out 0 ${n(positive('rl', d.rl))}`);
  lines.push(`CC1 n1 out ${n(positive('cc1', d.cc1))}`, `CC2 n2 out ${n(positive('cc2', d.cc2))}`);
  return lines;
}

const HEADER = ['.control', 'option numdgt=17', 'set nobreak', 'set width=400'];

/**
 * Control block for the DC gain (`tf`) and the pole-zero analysis of
 * v(output)/v(input), each printed between the markers of ../netlist.ts.
 * Issued as .control commands so a failing pz cannot abort the rest.
 */
export function tfPzControl(p: Ports): string[] {
  return [
    ...HEADER,
    `echo ${MARK.tf[0]}`,
    `tf v(${p.output}) ${p.source}`,
    'echo @@PLOT $curplot',
    'print all',
    `echo ${MARK.tf[1]}`,
    `echo ${MARK.pz[0]}`,
    `pz ${p.input} 0 ${p.output} 0 vol pz`,
    // A second vector, so that a lone pole is printed as pole(1) and not as "all".
    'let pzend = 0',
    'echo @@PLOT $curplot',
    'print all',
    `echo ${MARK.pz[1]}`,
    'quit',
    '.endc',
  ];
}

/** Control block for a log AC sweep of v(output), printed between the AC markers. */
export function acControl(p: Ports, sweep: AcSweep): string[] {
  const { acPointsPerDecade: k, fStartHz, fStopHz } = sweep;
  if (!Number.isInteger(k) || k < 1) throw new Error(`acPointsPerDecade must be a positive integer, got ${k}`);
  if (!(fStartHz > 0) || !(fStopHz > fStartHz)) throw new Error(`bad sweep ${fStartHz}…${fStopHz} Hz`);
  return [
    ...HEADER,
    `echo ${MARK.ac[0]}`,
    `ac dec ${k} ${n(fStartHz)} ${n(fStopHz)}`,
    'echo @@PLOT $curplot',
    `print v(${p.output})`,
    `echo ${MARK.ac[1]}`,
    'quit',
    '.endc',
  ];
}

/** Markers of the k-th zoomed AC run. */
export const zoomMarks = (k: number) => [`@@Z${k}_BEGIN`, `@@Z${k}_END`] as const;

/** Control block: one linear AC run of `points` points per window, each printed between its markers. */
export function zoomControl(p: Ports, windows: [number, number][], points: number): string[] {
  const lines = [...HEADER];
  windows.forEach(([f0, f1], k) => {
    if (!(f0 > 0) || !(f1 > f0)) throw new Error(`bad zoom window ${f0}…${f1} Hz`);
    const [b, e] = zoomMarks(k);
    lines.push(`echo ${b}`, `ac lin ${points} ${n(f0)} ${n(f1)}`, 'echo @@PLOT $curplot', `print v(${p.output})`, `echo ${e}`);
  });
  return [...lines, 'quit', '.endc'];
}

/** Markers of the single-frequency source-current measurement. */
export const MARK_IIN = ['@@IIN_BEGIN', '@@IIN_END'] as const;

/** Control block: AC at one frequency, printing the current through the source. */
export function sourceCurrentControl(p: Ports, fHz: number): string[] {
  if (!(fHz > 0) || !Number.isFinite(fHz)) throw new Error(`bad frequency ${fHz}`);
  return [
    ...HEADER,
    `echo ${MARK_IIN[0]}`,
    `ac lin 1 ${n(fHz)} ${n(fHz)}`,
    'echo @@PLOT $curplot',
    `print i(${p.source}) v(${p.input})`,
    `echo ${MARK_IIN[1]}`,
    'quit',
    '.endc',
  ];
}

export function deck(title: string, elements: string[], control: string[]): string {
  return [`* polecheck reference ${title.replace(/[^\w.+-]/g, '_')}`, ...elements, ...control, '.end', ''].join('\n');
}
