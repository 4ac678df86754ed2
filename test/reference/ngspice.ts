// Runs ngspice (batch mode) on the two-stage Miller netlist and extracts the
// reference quantities the engine is tested against.
//
// Verified unit: ngspice `.pz` prints poles/zeros in rad/s (not Hz). A plain
// RC low-pass (R = 1.2345678901234567 kΩ, C = 1 nF) gives pole(1) =
// -8.1000000729e5 = -1/(RC) exactly; see ngspice-harness.test.ts.

import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { TwoStageDesign } from './designs';
import { MARK, twoStageNetlist, type AcSweep } from './netlist';

export interface Complex {
  re: number;
  im: number;
}

export interface NgspiceDiagnostics {
  acPointsPerDecade: number;
  fStartHz: number;
  fStopHz: number;
  acPoints: number;
  /** 20log10|A| of the first AC point; must agree with the .tf DC gain. */
  acFirstPointDb: number;
  /** 20log10|A| at fStopHz: far below 0 dB means the sweep reached past every crossing. */
  acLastPointDb: number;
  /** Continuous phase of A at fStopHz, degrees. */
  acLastPhaseDeg: number;
  /** Max |ΔdB| and |Δphase| between the AC sweep and K·Π(1−s/z)/Π(1−s/p) built from the pz output; null if pz failed. */
  pzVsAcMaxDb: number | null;
  pzVsAcMaxDeg: number | null;
  /**
   * Estimated error of the linear-in-log-f interpolation, from Richardson
   * extrapolation against the same sweep at half density: |q(h) − q(2h)| / 3.
   * Frequencies as relative errors, angles in degrees, gains in dB.
   */
  interpErr: {
    unityGainRel: number | null;
    loopCrossoverRel: number | null;
    phaseMarginDeg: number | null;
    gainMarginDb: number | null;
  };
}

export interface NgspiceResult {
  /** 20log10 A(0), from ngspice `.tf` (exact DC solution); cross-checked against the first AC point. */
  dcGainDb: number;
  unityGainHz: number | null;
  loopCrossoverHz: number | null;
  phaseMarginDeg: number | null;
  gainMarginDb: number | null;
  /** rad/s */
  poles: Complex[];
  /** rad/s */
  zeros: Complex[];
  /** true if ngspice's pz errored, returned the wrong number of poles, or disagrees with its own AC sweep. */
  pzFailed: boolean;
  /** Why pzFailed is set, or remarks about the pz output (e.g. a zero pushed to infinity). */
  pzNote?: string;
  diagnostics: NgspiceDiagnostics;
}

export interface RunOutput {
  stdout: string;
  stderr: string;
}

const NGSPICE = process.env.NGSPICE ?? 'ngspice';
const DEFAULT_POINTS_PER_DECADE = 1000;
/** Tolerances for declaring ngspice's pz consistent with its AC sweep (far tighter than the 0.1 % pole bar). */
const PZ_AC_TOL_DB = 1e-4;
const PZ_AC_TOL_DEG = 1e-3;

let versionCache: string | null | undefined;

function probeVersion(): string | null {
  if (versionCache !== undefined) return versionCache;
  const r = spawnSync(NGSPICE, ['--version'], { encoding: 'utf8', timeout: 10_000 });
  const m = r.status === 0 ? /ngspice-(\S+)/.exec(r.stdout ?? '') : null;
  versionCache = m ? m[1] : null;
  return versionCache;
}

export function ngspiceAvailable(): boolean {
  return probeVersion() !== null;
}

/** Version string as reported by `ngspice --version`, e.g. "39". Throws if ngspice is not installed. */
export function ngspiceVersion(): string {
  const v = probeVersion();
  if (v === null) throw new Error(`ngspice not found (tried "${NGSPICE}"): apt-get install -y ngspice`);
  return v;
}

/** Runs `ngspice -b` on a netlist written to a private temp dir; returns raw stdout/stderr. */
export function runNetlist(netlist: string, timeoutMs = 30_000): RunOutput {
  const dir = mkdtempSync(join(tmpdir(), 'polecheck-ngspice-'));
  try {
    const file = join(dir, 'deck.cir');
    writeFileSync(file, netlist);
    const r = spawnSync(NGSPICE, ['-b', file], {
      cwd: dir,
      encoding: 'utf8',
      timeout: timeoutMs,
      maxBuffer: 256 * 1024 * 1024,
    });
    if (r.error) throw new Error(`ngspice failed to run: ${r.error.message}`);
    if (r.status !== 0) throw new Error(`ngspice exited with status ${r.status}: ${r.stderr}`);
    return { stdout: r.stdout, stderr: r.stderr };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** Text between two marker lines, plus the plot name echoed right after the analysis. */
export function section(stdout: string, [begin, end]: readonly [string, string]): { plot: string; lines: string[] } {
  const all = stdout.split(/\r?\n/);
  const b = all.findIndex((l) => l.trim() === begin);
  const e = all.findIndex((l, i) => i > b && l.trim() === end);
  if (b < 0 || e < 0) throw new Error(`ngspice output lacks ${begin}…${end}`);
  const lines = all.slice(b + 1, e);
  const plotLine = lines.find((l) => l.startsWith('@@PLOT '));
  return { plot: plotLine ? plotLine.slice(7).trim() : '', lines };
}

function num(s: string): number {
  const x = Number(s);
  if (!Number.isFinite(x)) throw new Error(`cannot parse ngspice number "${s}"`);
  return x;
}

/** `name = value` lines of a `print all` on a scalar plot. */
export function parseScalars(lines: string[]): Map<string, string> {
  const m = new Map<string, string>();
  for (const l of lines) {
    const r = /^\s*(\S+)\s*=\s*(.+?)\s*$/.exec(l);
    if (r) m.set(r[1], r[2]);
  }
  return m;
}

/** pole(k)/zero(k) lines of a pz plot, in rad/s as printed by ngspice. */
export function parsePz(lines: string[]): { poles: Complex[]; zeros: Complex[] } {
  const poles: Complex[] = [];
  const zeros: Complex[] = [];
  for (const l of lines) {
    const r = /^\s*(pole|zero)\((\d+)\)\s*=\s*([^,\s]+)\s*,\s*(\S+)\s*$/.exec(l);
    if (!r) continue;
    (r[1] === 'pole' ? poles : zeros).push({ re: num(r[3]), im: num(r[4]) });
  }
  return { poles, zeros };
}

/** Rows "index<TAB>freq<TAB>re,<TAB>im" of `print v(x)` on an AC plot. */
export function parseAc(lines: string[]): { f: number[]; re: number[]; im: number[] } {
  const f: number[] = [];
  const re: number[] = [];
  const im: number[] = [];
  for (const l of lines) {
    const r = /^(\d+)\s+(\S+)\s+([^,\s]+),\s*(\S+)\s*$/.exec(l);
    if (!r) continue;
    if (Number(r[1]) !== f.length) throw new Error(`AC row index ${r[1]} out of sequence`);
    f.push(num(r[2]));
    re.push(num(r[3]));
    im.push(num(r[4]));
  }
  return { f, re, im };
}

/** Phase in degrees, unwrapped from the first point (steps are tiny on a dense sweep, so |Δ|<180° is unambiguous). */
export function unwrapPhaseDeg(re: number[], im: number[]): number[] {
  const out: number[] = [];
  let prevRaw = 0;
  for (let i = 0; i < re.length; i++) {
    const raw = (Math.atan2(im[i], re[i]) * 180) / Math.PI;
    if (i === 0) out.push(raw);
    else {
      let d = raw - prevRaw;
      d -= 360 * Math.round(d / 360);
      out.push(out[i - 1] + d);
    }
    prevRaw = raw;
  }
  return out;
}

/** First i with y[i] ≥ t > y[i+1] (crossing from above), interpolated linearly in x; null if none. */
export function firstFall(x: number[], y: number[], t: number): { x: number; i: number; w: number } | null {
  for (let i = 0; i + 1 < y.length; i++) {
    if (y[i] >= t && y[i + 1] < t) {
      const w = (y[i] - t) / (y[i] - y[i + 1]);
      return { x: x[i] + w * (x[i + 1] - x[i]), i, w };
    }
  }
  return null;
}

interface Metrics {
  unityGainHz: number | null;
  loopCrossoverHz: number | null;
  phaseMarginDeg: number | null;
  gainMarginDb: number | null;
}

/** Crossings from a sampled response: dB and phase interpolated linearly in log10 f. */
export function metricsFromSweep(f: number[], db: number[], ph: number[], beta: number): Metrics {
  const u = f.map(Math.log10);
  const lerp = (y: number[], c: { i: number; w: number }) => y[c.i] + c.w * (y[c.i + 1] - y[c.i]);
  const betaDb = 20 * Math.log10(beta);
  const ug = firstFall(u, db, 0);
  const lc = firstFall(u, db, -betaDb);
  const pc = firstFall(u, ph, -180);
  return {
    unityGainHz: ug ? Math.pow(10, ug.x) : null,
    loopCrossoverHz: lc ? Math.pow(10, lc.x) : null,
    phaseMarginDeg: lc ? 180 + lerp(ph, lc) : null,
    gainMarginDb: pc ? -(lerp(db, pc) + betaDb) : null,
  };
}

/** Output-node total conductance, capacitance (rl and cl optional). */
function outputNode(d: TwoStageDesign): { go: number; co: number } {
  return { go: 1 / d.r2 + (d.rl !== undefined ? 1 / d.rl : 0), co: d.c2 + d.cl };
}

/**
 * Sweep limits that bracket every pole with ≥ 4 decades below and ≥ 2 above:
 *  - lowest pole ≥ 1/b1 (b1 = s-coefficient of the normalised denominator = Σ 1/|p| for real poles),
 *  - every pole ≤ ‖C⁻¹G‖∞ (poles are the eigenvalues of −C⁻¹G of the nodal equations (G + sC)v = b),
 *  - the Miller zero gm2/(cc(1 − gm2·rz)) when it is within 4 decades of that bound.
 */
export function sweepFor(d: TwoStageDesign, acPointsPerDecade = DEFAULT_POINTS_PER_DECADE): AcSweep {
  const { go, co } = outputNode(d);
  const ro = 1 / go;
  const g1 = 1 / d.r1;
  const rz = d.rz ?? 0;
  const b1 = d.r1 * d.c1 + ro * co + d.cc * (d.r1 + ro + d.gm2 * d.r1 * ro) + d.cc * rz;
  let rho: number;
  if (d.rz === undefined) {
    // nodes (n1, out): C = [[c1+cc, −cc], [−cc, co+cc]], G = [[g1, 0], [gm2, go]]
    const det = d.c1 * co + d.cc * (d.c1 + co);
    const row1 = (co + d.cc) * g1 + d.cc * d.gm2 + d.cc * go;
    const row2 = d.cc * g1 + (d.c1 + d.cc) * d.gm2 + (d.c1 + d.cc) * go;
    rho = Math.max(Math.abs(row1), Math.abs(row2)) / det;
  } else {
    // nodes (n1, nz, out): C⁻¹ of [[c1+cc, −cc], [−cc, cc]] is [[cc, cc], [cc, c1+cc]]/(c1·cc)
    const gz = 1 / d.rz;
    const k = 1 / (d.c1 * d.cc);
    const row1 = k * (d.cc * g1 + d.cc * gz + d.cc * gz); // |cc·G_n1| + |cc·G_nz|
    const row2 = k * (d.cc * g1 + (d.c1 + d.cc) * gz + (d.c1 + d.cc) * gz);
    const row3 = (d.gm2 + gz + go + gz) / co;
    rho = Math.max(row1, row2, row3);
  }
  const zeroMag = Math.abs(d.gm2 / (d.cc * (1 - d.gm2 * rz)));
  const top = Math.max(rho, Number.isFinite(zeroMag) && zeroMag < 1e4 * rho ? zeroMag : 0);
  const fStartHz = Math.pow(10, Math.floor(Math.log10(1e-4 / (2 * Math.PI * b1))));
  const fStopHz = Math.pow(10, Math.ceil(Math.log10((100 * top) / (2 * Math.PI))));
  return { acPointsPerDecade, fStartHz, fStopHz };
}

/** log-domain value of Π(1 − s/r) at s = jω: [ln|·|, arg]. */
export function logFactor(roots: Complex[], w: number): [number, number] {
  let lm = 0;
  let ar = 0;
  for (const r of roots) {
    // 1 − jω/r = 1 − jω·conj(r)/|r|²
    const m2 = r.re * r.re + r.im * r.im;
    const re = 1 - (w * r.im) / m2;
    const im = -(w * r.re) / m2;
    lm += 0.5 * Math.log(re * re + im * im);
    ar += Math.atan2(im, re);
  }
  return [lm, ar];
}

/** Max deviation between the AC sweep and the response rebuilt from pz roots and the DC gain. */
function pzVsAc(
  k: number,
  poles: Complex[],
  zeros: Complex[],
  f: number[],
  db: number[],
  ph: number[],
): { maxDb: number; maxDeg: number } {
  let maxDb = 0;
  let maxDeg = 0;
  for (let i = 0; i < f.length; i++) {
    const w = 2 * Math.PI * f[i];
    const [zl, za] = logFactor(zeros, w);
    const [pl, pa] = logFactor(poles, w);
    const mDb = 20 * Math.log10(Math.abs(k)) + (20 / Math.LN10) * (zl - pl);
    let dDeg = ((za - pa) * 180) / Math.PI - ph[i];
    dDeg -= 360 * Math.round(dDeg / 360);
    maxDb = Math.max(maxDb, Math.abs(mDb - db[i]));
    maxDeg = Math.max(maxDeg, Math.abs(dDeg));
  }
  return { maxDb, maxDeg };
}

function relDiff(a: number | null, b: number | null): number | null {
  return a === null || b === null ? null : Math.abs(a - b) / Math.abs(a) / 3;
}
function absDiff(a: number | null, b: number | null): number | null {
  return a === null || b === null ? null : Math.abs(a - b) / 3;
}

/** Full reference run for one design: .tf, .pz and a dense AC sweep in one ngspice process. */
export function runTwoStage(d: TwoStageDesign, opts: { acPointsPerDecade?: number } = {}): NgspiceResult {
  const sweep = sweepFor(d, opts.acPointsPerDecade ?? DEFAULT_POINTS_PER_DECADE);
  const { stdout, stderr } = runNetlist(twoStageNetlist(d, sweep));

  // DC gain from the transfer-function analysis.
  const tf = section(stdout, MARK.tf);
  const tfv = parseScalars(tf.lines).get('transfer_function');
  if (!tf.plot.startsWith('tf') || tfv === undefined) throw new Error(`${d.id}: ngspice tf failed\n${stderr}`);
  const a0 = num(tfv);
  if (!(a0 > 0)) throw new Error(`${d.id}: expected positive DC gain, ngspice tf gave ${a0}`);
  const dcGainDb = 20 * Math.log10(a0);

  // AC sweep.
  const acSec = section(stdout, MARK.ac);
  if (!acSec.plot.startsWith('ac')) throw new Error(`${d.id}: ngspice ac failed\n${stderr}`);
  const ac = parseAc(acSec.lines);
  const expectPoints = Math.round(Math.log10(sweep.fStopHz / sweep.fStartHz) * sweep.acPointsPerDecade) + 1;
  if (Math.abs(ac.f.length - expectPoints) > 1) {
    throw new Error(`${d.id}: expected ~${expectPoints} AC points, parsed ${ac.f.length}`);
  }
  const db = ac.re.map((r, i) => 10 * Math.log10(r * r + ac.im[i] * ac.im[i]));
  const ph = unwrapPhaseDeg(ac.re, ac.im);
  if (Math.abs(ph[0]) > 1) throw new Error(`${d.id}: phase at fStart is ${ph[0]}°, sweep does not start near DC`);
  if (Math.abs(db[0] - dcGainDb) > 1e-4) {
    throw new Error(`${d.id}: first AC point ${db[0]} dB vs tf ${dcGainDb} dB: fStart not low enough`);
  }

  const m = metricsFromSweep(ac.f, db, ph, d.beta);
  // Same sweep at half density (every other point) for the Richardson error estimate.
  const even = (_: number, i: number) => i % 2 === 0;
  const m2 = metricsFromSweep(ac.f.filter(even), db.filter(even), ph.filter(even), d.beta);

  // Pole-zero analysis, checked against the AC sweep of the same deck.
  const pzSec = section(stdout, MARK.pz);
  let poles: Complex[] = [];
  let zeros: Complex[] = [];
  let pzFailed = false;
  const notes: string[] = [];
  let pzVsAcMaxDb: number | null = null;
  let pzVsAcMaxDeg: number | null = null;
  if (!pzSec.plot.startsWith('pz')) {
    pzFailed = true;
    const err = stderr.split('\n').filter((l) => l.trim() !== '').join(' | ');
    notes.push(`ngspice pz produced no pz plot${err ? `: ${err}` : ''}`);
  } else {
    ({ poles, zeros } = parsePz(pzSec.lines));
    const expectPoles = d.rz === undefined ? 2 : 3;
    if (poles.length !== expectPoles) {
      pzFailed = true;
      notes.push(`ngspice pz returned ${poles.length} poles, network has ${expectPoles}`);
    }
    // rz = 1/gm2 cancels the s-term of the numerator gm2 − s·cc(1 − gm2·rz): zero at infinity.
    const expectZeros = d.rz !== undefined && d.rz === 1 / d.gm2 ? 0 : 1;
    if (zeros.length !== expectZeros) {
      notes.push(`ngspice pz returned ${zeros.length} zeros where the transfer function has ${expectZeros}`);
    }
    if (poles.some((p) => !(p.re < 0))) {
      pzFailed = true;
      notes.push('ngspice pz returned a pole not in the open left half-plane');
    }
    const dev = pzVsAc(a0, poles, zeros, ac.f, db, ph);
    pzVsAcMaxDb = dev.maxDb;
    pzVsAcMaxDeg = dev.maxDeg;
    if (dev.maxDb > PZ_AC_TOL_DB || dev.maxDeg > PZ_AC_TOL_DEG) {
      pzFailed = true;
      notes.push(
        `pz roots disagree with the AC sweep: max ${dev.maxDb.toExponential(2)} dB, ${dev.maxDeg.toExponential(2)}°`,
      );
    }
  }

  const result: NgspiceResult = {
    dcGainDb,
    ...m,
    poles,
    zeros,
    pzFailed,
    diagnostics: {
      acPointsPerDecade: sweep.acPointsPerDecade,
      fStartHz: sweep.fStartHz,
      fStopHz: sweep.fStopHz,
      acPoints: ac.f.length,
      acFirstPointDb: db[0],
      acLastPointDb: db[db.length - 1],
      acLastPhaseDeg: ph[ph.length - 1],
      pzVsAcMaxDb,
      pzVsAcMaxDeg,
      interpErr: {
        unityGainRel: relDiff(m.unityGainHz, m2.unityGainHz),
        loopCrossoverRel: relDiff(m.loopCrossoverHz, m2.loopCrossoverHz),
        phaseMarginDeg: absDiff(m.phaseMarginDeg, m2.phaseMarginDeg),
        gainMarginDb: absDiff(m.gainMarginDb, m2.gainMarginDb),
      },
    },
  };
  if (notes.length > 0) result.pzNote = notes.join('; ');
  return result;
}

/** Debian package version, when ngspice came from apt (recorded next to the upstream version). */
export function debianPackageVersion(): string | null {
  const r = spawnSync('dpkg-query', ['-W', '-f=${Version}', 'ngspice'], { encoding: 'utf8', timeout: 5000 });
  return r.status === 0 && r.stdout.trim() !== '' ? r.stdout.trim() : null;
}
