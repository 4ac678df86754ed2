// ngspice netlist of the two-stage Miller small-signal network (see TwoStageDesign).
//
//   in ──G1(gm1)──▶ n1 ──G2(gm2)──▶ out
//   n1:  R1 ∥ C1 to ground          out: R2 ∥ C2 ∥ CL ∥ RL to ground
//   Miller branch n1 ─CC─ out, or n1 ─CC─ nz ─RZ─ out when rz is given.
//
// G1/G2 follow the SPICE VCCS convention (current leaves the first node), so
// each stage inverts and A(0) = gm1·r1·gm2·(r2∥rl) > 0.

import type { TwoStageDesign } from './designs';

export interface AcSweep {
  acPointsPerDecade: number;
  fStartHz: number;
  fStopHz: number;
}

/** Markers delimiting each analysis' printout on stdout (parsed by ngspice.ts). */
export const MARK = {
  tf: ['@@TF_BEGIN', '@@TF_END'],
  pz: ['@@PZ_BEGIN', '@@PZ_END'],
  ac: ['@@AC_BEGIN', '@@AC_END'],
} as const;

/** 17 significant digits: every double round-trips through the netlist text. */
export function spiceNum(x: number): string {
  if (!Number.isFinite(x)) throw new Error(`non-finite value in netlist: ${x}`);
  return x.toExponential(16);
}

function positive(name: string, x: number): number {
  if (!(x > 0) || !Number.isFinite(x)) throw new Error(`${name} must be a finite positive number, got ${x}`);
  return x;
}

/** Element lines only (no title, no analyses): the network itself. */
export function twoStageElements(d: TwoStageDesign): string[] {
  const lines = [
    'vin in 0 dc 0 ac 1',
    `G1 n1 0 in 0 ${spiceNum(positive('gm1', d.gm1))}`,
    `R1 n1 0 ${spiceNum(positive('r1', d.r1))}`,
    `C1 n1 0 ${spiceNum(positive('c1', d.c1))}`,
    `G2 out 0 n1 0 ${spiceNum(positive('gm2', d.gm2))}`,
    `R2 out 0 ${spiceNum(positive('r2', d.r2))}`,
    `C2 out 0 ${spiceNum(positive('c2', d.c2))}`,
  ];
  if (d.cl < 0 || !Number.isFinite(d.cl)) throw new Error(`cl must be >= 0, got ${d.cl}`);
  if (d.cl > 0) lines.push(`CL out 0 ${spiceNum(d.cl)}`);
  if (d.rl !== undefined) lines.push(`RL out 0 ${spiceNum(positive('rl', d.rl))}`);
  if (d.rz !== undefined) {
    lines.push(`CC n1 nz ${spiceNum(positive('cc', d.cc))}`);
    lines.push(`RZ nz out ${spiceNum(positive('rz', d.rz))}`);
  } else {
    lines.push(`CC n1 out ${spiceNum(positive('cc', d.cc))}`);
  }
  return lines;
}

/**
 * Batch-mode .control block: .tf (exact DC gain), pole-zero and AC analyses of
 * v(out)/v(in) driven by `vin`, each printed between markers with 17 digits.
 *
 * The analyses are issued as .control commands (`tf v(out) vin`,
 * `pz in 0 out 0 vol pz`, `ac dec N f1 f2`, same syntax as the dot cards)
 * rather than dot cards with `run`: a failing pz then cannot abort the AC
 * analysis, and `quit` stops ngspice -b from re-running dot cards afterwards.
 */
export function analysisControl(sweep: AcSweep): string[] {
  const { acPointsPerDecade: n, fStartHz, fStopHz } = sweep;
  if (!Number.isInteger(n) || n < 1) throw new Error(`acPointsPerDecade must be a positive integer, got ${n}`);
  positive('fStartHz', fStartHz);
  if (!(fStopHz > fStartHz)) throw new Error(`fStopHz (${fStopHz}) must exceed fStartHz (${fStartHz})`);
  return [
    '.control',
    'option numdgt=17',
    // One header, no page breaks, wide lines: keeps the printout trivially parseable.
    'set nobreak',
    'set width=400',
    `echo ${MARK.tf[0]}`,
    'tf v(out) vin',
    'echo @@PLOT $curplot',
    'print all',
    `echo ${MARK.tf[1]}`,
    `echo ${MARK.pz[0]}`,
    'pz in 0 out 0 vol pz',
    // With a single vector `print all` labels it "all" instead of "pole(1)": a second vector avoids that.
    'let pzend = 0',
    // After a failed pz the current plot is still the previous one: recorded so the parser can tell.
    'echo @@PLOT $curplot',
    'print all',
    `echo ${MARK.pz[1]}`,
    `echo ${MARK.ac[0]}`,
    `ac dec ${n} ${spiceNum(fStartHz)} ${spiceNum(fStopHz)}`,
    'echo @@PLOT $curplot',
    'print v(out)',
    `echo ${MARK.ac[1]}`,
    'quit',
    '.endc',
  ];
}

/** Complete deck for one design: title, elements, analyses. */
export function twoStageNetlist(d: TwoStageDesign, analysis: AcSweep): string {
  const title = `* polecheck two-stage Miller reference ${d.id.replace(/[^\w.+-]/g, '_')}`;
  return [title, ...twoStageElements(d), ...analysisControl(analysis), '.end', ''].join('\n');
}
