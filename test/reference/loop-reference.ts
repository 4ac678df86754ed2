// ngspice reference figures of a loop, for many circuits at once: the open
// loop's DC gain (`tf`), poles and zeros (`pz`), an AC sweep refined around
// every crossing, and the closed loop's poles from a `pz` of the circuit whose
// input is driven by vin − β·vout through a voltage-controlled voltage source.
//
// Circuits are batched: one ngspice process per pass loads the circuits one
// after the other with `circbyline` (ngspice manual, ch. 13 "Interactive
// interpreter": circbyline, remcirc, destroy), so a few hundred circuits cost
// a handful of processes. Three passes: (1) tf + pz of the open loop and pz of
// the closed loop; (2) a log AC sweep chosen from the roots of pass 1,
// extended until |A| has fallen far below 1 or levelled off; (3) a linear AC
// run of 51 points over every sweep interval that holds a crossing (|A| = 1,
// |A| = |A(0)|/√2, |βA| = 1, ∠βA at an odd multiple of 180°), the figures
// interpolated there. Parsing helpers are those of ./ngspice.ts.
//
// Definitions (the trade's, e.g. R. C. Dorf, R. H. Bishop, "Modern Control
// Systems", ch. 9, and G. F. Franklin, J. D. Powell, A. Emami-Naeini,
// "Feedback Control of Dynamic Systems", §6.3–6.4):
// - phase margin: at each |βA| = 1 crossing, 180° + ∠βA taken within ±180°;
//   the smallest over the crossings;
// - gain factors: at each frequency where βA is real and negative (DC included
//   when A(0) < 0), 1/|βA| is the factor of the loop gain that puts a closed-loop
//   pole on the jω axis; factors above 1 are gain-increase margins, below 1
//   gain-reduction margins (a conditionally stable loop);
// - stability: a closed-loop pole with Re ≥ 0 makes the loop unstable. The
//   pole count is checked against the Nyquist criterion Z = P + N on the same
//   AC sweep (N: clockwise encirclements of −1, counted as crossings of the
//   negative real axis left of −1, twice for ω > 0 by symmetry, once at DC).

import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { type Complex, parseAc, parsePz, parseScalars, runNetlist, unwrapPhaseDeg } from './ngspice';
import { spiceNum } from './netlist';
import type { Ports } from './topologies/netlist';
import { pzVsAc } from './topologies/ngspice';

export interface LoopJob {
  id: string;
  /** Element lines of the open loop; the source line is `vin <input> 0 dc 0 ac 1`. */
  elements: string[];
  ports: Ports;
  beta: number;
}

export interface PhaseCrossing {
  fHz: number;
  /** 20·log10|βA| there. */
  loopDb: number;
  /** +1: ∠βA decreasing through it (a clockwise pass left of −1 when |βA| > 1), −1 increasing. */
  direction: 1 | -1;
}

export interface LoopReference {
  id: string;
  /** A(0), V/V, signed (ngspice tf). */
  dcGain: number;
  dcGainDb: number;
  /** Open loop, rad/s, by magnitude; empty when ngspice's pz failed. */
  poles: Complex[];
  zeros: Complex[];
  openPzOk: boolean;
  /**
   * Closed loop, rad/s; null when ngspice's pz failed or returned fewer poles
   * than the open loop has (the closed loop of a strictly proper A has as many).
   */
  closedPoles: Complex[] | null;
  /** Closed-loop poles with Re ≥ 0 (ngspice pz), or from the Nyquist count when pz failed. */
  rhpClosed: number;
  stable: boolean;
  /** Z = P + N from the sweep (null when the open loop's pz failed: P unknown). */
  nyquistRhp: number | null;
  /** The closed-loop pz and the Nyquist count agree (true when only one of them is available). */
  consistent: boolean;
  /** Smallest |Re p|/|p| of the closed-loop poles: near 0 the verdict is a knife edge. */
  edge: number;
  unityGainHz: number | null;
  /** First crossing of |A| = |A(0)|/√2. */
  bandwidthHz: number | null;
  crossovers: Array<{ fHz: number; marginDeg: number }>;
  /** Worst over the crossovers, whatever the stability; null without a crossover. */
  phaseMarginDeg: number | null;
  phaseCrossings: PhaseCrossing[];
  /** Smallest gain-increase margin (dB); null when no phase crossing has |βA| < 1. */
  gainIncreaseDb: number | null;
  /** Smallest gain-reduction margin (dB, ≥ 0); null when no phase crossing has |βA| ≥ 1. */
  gainReductionDb: number | null;
  sweep: { fStartHz: number; fStopHz: number; perDecade: number };
}

const TWO_PI = 2 * Math.PI;
const mag = (r: Complex) => Math.hypot(r.re, r.im);
const n = spiceNum;
/** Wrapped into (−180°, 180°]. */
export const wrapDeg = (x: number): number => x - 360 * Math.ceil((x - 180) / 360);

const HEADER = ['.control', 'option numdgt=17', 'set nobreak', 'set width=400'];

/** The circuit as `circbyline` lines. */
const load = (title: string, elements: string[]): string[] => [`circbyline * ${title.replace(/[^\w.+-]/g, '_')}`, ...elements.map((l) => `circbyline ${l}`), 'circbyline .end'];

/** The closed loop: the amplifier input driven by v(x) − β·v(out), x by the ac source. */
export function closedLoopElements(job: LoopJob, beta = job.beta): string[] {
  const src = job.elements.find((l) => /^vin\s/i.test(l));
  if (!src) throw new Error(`${job.id}: no vin line`);
  return [`vin xfb 0 dc 0 ac 1`, `Efb ${job.ports.input} xfb ${job.ports.output} 0 ${n(-beta)}`, ...job.elements.filter((l) => l !== src)];
}

/** `ngspice -b` on a deck, without blocking: several batches run side by side (as ./ngspice.ts runNetlist, asynchronous). */
function runDeck(netlist: string, timeoutMs = 120_000): Promise<{ stdout: string; stderr: string }> {
  const dir = mkdtempSync(join(tmpdir(), 'polecheck-loops-'));
  const file = join(dir, 'deck.cir');
  writeFileSync(file, netlist);
  return new Promise((resolve, reject) => {
    const child = spawn(process.env.NGSPICE ?? 'ngspice', ['-b', file], { cwd: dir });
    const out: Buffer[] = [];
    const err: Buffer[] = [];
    const timer = setTimeout(() => child.kill('SIGKILL'), timeoutMs);
    child.stdout.on('data', (b: Buffer) => out.push(b));
    child.stderr.on('data', (b: Buffer) => err.push(b));
    child.on('error', (e) => {
      clearTimeout(timer);
      rmSync(dir, { recursive: true, force: true });
      reject(new Error(`ngspice failed to run: ${e.message}`));
    });
    child.on('close', (code) => {
      clearTimeout(timer);
      rmSync(dir, { recursive: true, force: true });
      const stdout = Buffer.concat(out).toString('utf8');
      const stderr = Buffer.concat(err).toString('utf8');
      if (code !== 0) reject(new Error(`ngspice exited with status ${code}: ${stderr.slice(0, 2000)}`));
      else resolve({ stdout, stderr });
    });
  });
}

/** stdout cut into marked sections: name → { plot, lines }. */
function sections(stdout: string): Map<string, { plot: string; lines: string[] }> {
  const out = new Map<string, { plot: string; lines: string[] }>();
  let name: string | null = null;
  let cur: { plot: string; lines: string[] } | null = null;
  for (const line of stdout.split(/\r?\n/)) {
    const t = line.trim();
    const b = /^@@(\S+)_BEGIN$/.exec(t);
    if (b) {
      name = b[1];
      cur = { plot: '', lines: [] };
      continue;
    }
    if (name && t === `@@${name}_END`) {
      out.set(name, cur!);
      name = null;
      cur = null;
      continue;
    }
    if (cur) {
      if (t.startsWith('@@PLOT ')) cur.plot = t.slice(7).trim();
      else cur.lines.push(line);
    }
  }
  return out;
}

const marked = (name: string, body: string[]): string[] => [`echo @@${name}_BEGIN`, ...body, 'echo @@PLOT $curplot', `echo @@${name}_END`, 'destroy all'];

interface Pass1 {
  a0: number;
  poles: Complex[];
  zeros: Complex[];
  openPzOk: boolean;
  closed: Complex[] | null;
}

/** Closed-loop poles of `job` at several feedback factors β (one process); null where ngspice's pz failed. */
export function closedLoopPoles(job: LoopJob, betas: number[]): Array<Complex[] | null> {
  const lines = [...HEADER];
  betas.forEach((b, k) => {
    lines.push(...load(`${job.id} closed ${k}`, closedLoopElements(job, b)));
    lines.push(...marked(`C${k}`, [`pz xfb 0 ${job.ports.output} 0 vol pol`, 'let pzend = 0', 'print all']), 'remcirc');
  });
  lines.push('quit', '.endc');
  const { stdout } = runNetlist(['* polecheck closed-loop gain sweep', ...lines, '.end', ''].join('\n'));
  const s = sections(stdout);
  return betas.map((_, k) => {
    const sec = s.get(`C${k}`);
    return sec && sec.plot.startsWith('pz') ? parsePz(sec.lines).poles : null;
  });
}

async function pass1(jobs: LoopJob[]): Promise<Pass1[]> {
  const lines = [...HEADER];
  jobs.forEach((job, k) => {
    const p = job.ports;
    lines.push(...load(`${job.id} open`, job.elements));
    lines.push(...marked(`T${k}`, [`tf v(${p.output}) ${p.source}`, 'print all']));
    lines.push(...marked(`P${k}`, [`pz ${p.input} 0 ${p.output} 0 vol pz`, 'let pzend = 0', 'print all']), 'remcirc');
    lines.push(...load(`${job.id} closed`, closedLoopElements(job)));
    lines.push(...marked(`C${k}`, [`pz xfb 0 ${p.output} 0 vol pol`, 'let pzend = 0', 'print all']), 'remcirc');
  });
  lines.push('quit', '.endc');
  const { stdout, stderr } = await runDeck(['* polecheck loop reference, pass 1', ...lines, '.end', ''].join('\n'));
  const s = sections(stdout);
  return jobs.map((job, k) => {
    const tf = s.get(`T${k}`);
    const a0 = Number(tf ? parseScalars(tf.lines).get('transfer_function') : NaN);
    if (!tf || !tf.plot.startsWith('tf') || !Number.isFinite(a0)) throw new Error(`${job.id}: ngspice tf failed\n${stderr.slice(0, 2000)}`);
    const pz = s.get(`P${k}`);
    const openPzOk = !!pz && pz.plot.startsWith('pz');
    const roots = openPzOk ? parsePz(pz!.lines) : { poles: [], zeros: [] };
    const cl = s.get(`C${k}`);
    const closed = cl && cl.plot.startsWith('pz') ? parsePz(cl.lines).poles : null;
    const byMag = (a: Complex, b: Complex) => mag(a) - mag(b) || b.im - a.im;
    return { a0, poles: roots.poles.sort(byMag), zeros: roots.zeros.sort(byMag), openPzOk: openPzOk && roots.poles.length > 0, closed };
  });
}

interface Sweep {
  fStartHz: number;
  fStopHz: number;
  perDecade: number;
}

const decadeFloor = (x: number) => Math.pow(10, Math.floor(Math.log10(x)));
const decadeCeil = (x: number) => Math.pow(10, Math.ceil(Math.log10(x)));

/** Two decades below the lowest root, two above the highest and above |A0|·|p1| (extended later if |A| has not fallen off); denser for sharp resonances. */
function sweepOf(p: Pass1): Sweep {
  const roots = [...p.poles, ...p.zeros].map(mag).filter((x) => x > 0);
  if (!p.openPzOk || roots.length === 0) return { fStartHz: 1e-4, fStopHz: 1e14, perDecade: 200 };
  const pm = p.poles.map(mag);
  const lo = Math.min(...roots);
  const hi = Math.max(...pm, Math.abs(p.a0) * Math.min(...pm), ...p.zeros.map(mag).filter((z) => z < 1e4 * Math.max(...pm)));
  // Q of the sharpest complex root: the phase turns by 180° over about 1/Q of its frequency.
  const q = Math.max(1, ...[...p.poles, ...p.zeros].filter((r) => r.im !== 0).map((r) => mag(r) / (2 * Math.abs(r.re) || 1e-300)));
  return { fStartHz: decadeFloor((1e-2 * lo) / TWO_PI), fStopHz: decadeCeil((1e2 * hi) / TWO_PI), perDecade: Math.min(4000, Math.max(40, Math.ceil(30 * q))) };
}

interface Samples {
  f: number[];
  re: number[];
  im: number[];
  db: number[];
  ph: number[];
}

function samplesOf(lines: string[]): Samples {
  const { f, re, im } = parseAc(lines);
  const db = re.map((r, i) => 10 * Math.log10(r * r + im[i] * im[i]));
  return { f, re, im, db, ph: unwrapPhaseDeg(re, im) };
}

async function acPass(jobs: LoopJob[], sweeps: Sweep[]): Promise<Samples[]> {
  const lines = [...HEADER];
  jobs.forEach((job, k) => {
    const s = sweeps[k];
    lines.push(...load(`${job.id} ac`, job.elements));
    lines.push(...marked(`A${k}`, [`ac dec ${s.perDecade} ${n(s.fStartHz)} ${n(s.fStopHz)}`, `print v(${job.ports.output})`]), 'remcirc');
  });
  lines.push('quit', '.endc');
  const { stdout, stderr } = await runDeck(['* polecheck loop reference, AC', ...lines, '.end', ''].join('\n'));
  const sec = sections(stdout);
  return jobs.map((job, k) => {
    const a = sec.get(`A${k}`);
    if (!a || !a.plot.startsWith('ac')) throw new Error(`${job.id}: ngspice ac failed\n${stderr.slice(0, 2000)}`);
    const s = samplesOf(a.lines);
    if (s.f.length < 10) throw new Error(`${job.id}: ${s.f.length} AC points`);
    return s;
  });
}

interface Bracket {
  role: 'unity' | 'bandwidth' | 'loop' | 'phase';
  curve: 'db' | 'ph';
  level: number;
  i: number;
}

/** Every sign change of y − t between samples i and i + 1. */
function brackets(y: number[], t: number): number[] {
  const out: number[] = [];
  for (let i = 0; i + 1 < y.length; i++) {
    const a = y[i] - t;
    const b = y[i + 1] - t;
    if (a === 0 || a * b < 0) out.push(i);
  }
  return out;
}

function bracketsOf(s: Samples, beta: number, dcDb: number): Bracket[] {
  const out: Bracket[] = [];
  for (const i of brackets(s.db, 0)) out.push({ role: 'unity', curve: 'db', level: 0, i });
  const bw = dcDb - 10 * Math.log10(2);
  for (const i of brackets(s.db, bw)) out.push({ role: 'bandwidth', curve: 'db', level: bw, i });
  const loopLevel = -20 * Math.log10(beta);
  for (const i of brackets(s.db, loopLevel)) out.push({ role: 'loop', curve: 'db', level: loopLevel, i });
  const lo = Math.min(...s.ph);
  const hi = Math.max(...s.ph);
  for (let k = Math.ceil((lo - 180) / 360); 360 * k + 180 <= hi; k++) for (const i of brackets(s.ph, 360 * k + 180)) out.push({ role: 'phase', curve: 'ph', level: 360 * k + 180, i });
  return out;
}

const ZOOM_POINTS = 51;

async function zoomPass(jobs: LoopJob[], coarse: Samples[], wanted: number[][]): Promise<Array<Map<number, Samples>>> {
  const lines = [...HEADER];
  jobs.forEach((job, k) => {
    if (!wanted[k].length) return;
    lines.push(...load(`${job.id} zoom`, job.elements));
    wanted[k].forEach((i, w) => {
      lines.push(...marked(`Z${k}x${w}`, [`ac lin ${ZOOM_POINTS} ${n(coarse[k].f[i])} ${n(coarse[k].f[i + 1])}`, `print v(${job.ports.output})`]));
    });
    lines.push('remcirc');
  });
  lines.push('quit', '.endc');
  const out = jobs.map(() => new Map<number, Samples>());
  if (wanted.every((w) => !w.length)) return out;
  const { stdout, stderr } = await runDeck(['* polecheck loop reference, zoom', ...lines, '.end', ''].join('\n'));
  const sec = sections(stdout);
  jobs.forEach((job, k) => {
    wanted[k].forEach((i, w) => {
      const a = sec.get(`Z${k}x${w}`);
      if (!a || !a.plot.startsWith('ac')) throw new Error(`${job.id}: ngspice zoomed ac failed\n${stderr.slice(0, 2000)}`);
      const z = samplesOf(a.lines);
      if (z.f.length !== ZOOM_POINTS) throw new Error(`${job.id}: zoomed ac has ${z.f.length} points`);
      // The same continuous phase as the coarse sweep.
      const shift = 360 * Math.round((coarse[k].ph[i] - z.ph[0]) / 360);
      z.ph = z.ph.map((x) => x + shift);
      if (Math.abs(z.db[0] - coarse[k].db[i]) > 1e-9 || Math.abs(z.ph[0] - coarse[k].ph[i]) > 1e-9) throw new Error(`${job.id}: zoomed ac does not start on the coarse sweep`);
      out[k].set(i, z);
    });
  });
  return out;
}

/** The crossing of `curve` = level inside a zoomed interval, interpolated linearly in log f. */
function locate(z: Samples, b: Bracket): { fHz: number; db: number; ph: number } {
  const y = b.curve === 'db' ? z.db : z.ph;
  for (let i = 0; i + 1 < y.length; i++) {
    const a = y[i] - b.level;
    const c = y[i + 1] - b.level;
    if (a === 0 || a * c < 0) {
      const w = a === 0 ? 0 : a / (a - c);
      const u = Math.log10(z.f[i]) + w * (Math.log10(z.f[i + 1]) - Math.log10(z.f[i]));
      return { fHz: Math.pow(10, u), db: z.db[i] + w * (z.db[i + 1] - z.db[i]), ph: z.ph[i] + w * (z.ph[i + 1] - z.ph[i]) };
    }
  }
  // The coarse samples bracket it, the dense run does not (a touch within round-off): take the nearer end.
  const i = Math.abs(y[0] - b.level) < Math.abs(y[y.length - 1] - b.level) ? 0 : y.length - 1;
  return { fHz: z.f[i], db: z.db[i], ph: z.ph[i] };
}

/**
 * Reference figures of every job: batches of `batch` jobs, three ngspice
 * processes each, at most `parallel` processes at a time.
 */
export async function runLoops(jobs: LoopJob[], opts: { batch?: number; parallel?: number } = {}): Promise<Map<string, LoopReference>> {
  const batch = opts.batch ?? 40;
  const parts: LoopJob[][] = [];
  for (let b = 0; b < jobs.length; b += batch) parts.push(jobs.slice(b, b + batch));
  const out = new Map<string, LoopReference>();
  let next = 0;
  const worker = async () => {
    while (next < parts.length) for (const r of await runBatch(parts[next++])) out.set(r.id, r);
  };
  await Promise.all(Array.from({ length: Math.min(opts.parallel ?? 2, parts.length) }, worker));
  return out;
}

async function runBatch(jobs: LoopJob[]): Promise<LoopReference[]> {
  const p1 = await pass1(jobs);
  const sweeps = p1.map(sweepOf);
  const coarse = await acPass(jobs, sweeps);
  // Extend upward until |A| is far below every loop crossing (β ≤ 1 here, or β·k) or has levelled off.
  for (let round = 0; round < 4; round++) {
    const redo = jobs.map((job, k) => {
      const s = coarse[k];
      const last = s.db[s.db.length - 1];
      const before = s.db[Math.max(0, s.db.length - 1 - sweeps[k].perDecade)];
      return !(last + 20 * Math.log10(Math.max(job.beta, 1)) < -40 || Math.abs(last - before) < 1e-3);
    });
    if (!redo.some(Boolean)) break;
    const idx = redo.map((r, k) => (r ? k : -1)).filter((k) => k >= 0);
    for (const k of idx) sweeps[k] = { ...sweeps[k], fStopHz: sweeps[k].fStopHz * 100 };
    const again = await acPass(idx.map((k) => jobs[k]), idx.map((k) => sweeps[k]));
    idx.forEach((k, j) => (coarse[k] = again[j]));
  }
  const found = jobs.map((job, k) => bracketsOf(coarse[k], job.beta, 20 * Math.log10(Math.abs(p1[k].a0))));
  const zooms = await zoomPass(jobs, coarse, found.map((bs) => [...new Set(bs.map((x) => x.i))]));
  return jobs.map((job, k) => figures(job, p1[k], coarse[k], sweeps[k], found[k], zooms[k]));
}

function figures(job: LoopJob, p: Pass1, s: Samples, sweep: Sweep, found: Bracket[], zoom: Map<number, Samples>): LoopReference {
  const at = (b: Bracket) => locate(zoom.get(b.i)!, b);
  const first = (role: Bracket['role']) => {
    const b = found.filter((x) => x.role === role).sort((x, y) => x.i - y.i)[0];
    return b ? at(b).fHz : null;
  };
  const betaDb = 20 * Math.log10(job.beta);
  const crossovers = found.filter((b) => b.role === 'loop').map((b) => {
    const c = at(b);
    return { fHz: c.fHz, marginDeg: wrapDeg(180 + c.ph) };
  });
  const phaseCrossings: PhaseCrossing[] = [];
  if (p.a0 < 0) {
    // βA(0) is real and negative: DC is a phase crossing; its direction from the sign of Im(A) just above DC.
    phaseCrossings.push({ fHz: 0, loopDb: 20 * Math.log10(Math.abs(p.a0)) + betaDb, direction: s.im[0] > 0 ? 1 : -1 });
  }
  for (const b of found.filter((x) => x.role === 'phase')) {
    const c = at(b);
    phaseCrossings.push({ fHz: c.fHz, loopDb: c.db + betaDb, direction: s.ph[b.i + 1] < s.ph[b.i] ? 1 : -1 });
  }
  phaseCrossings.sort((x, y) => x.fHz - y.fHz);
  const increase = phaseCrossings.filter((c) => c.loopDb < 0);
  const reduction = phaseCrossings.filter((c) => c.loopDb >= 0);
  // Nyquist: Z = P + N, N = 2·Σ(ω > 0) + (DC) of the clockwise passes left of −1.
  let nCw = 0;
  for (const c of reduction) nCw += c.fHz === 0 ? c.direction : 2 * c.direction;
  // The open loop's roots rebuild the sweep (./topologies/ngspice.ts pzVsAc), or they are not trusted.
  const dev = p.openPzOk ? pzVsAc(p.a0, p.poles, p.zeros, s.f, s.db, s.ph) : null;
  const openPzOk = dev !== null && dev.maxDb < 1e-3 && dev.maxDeg < 1e-2;
  const openRhp = p.poles.filter((x) => x.re >= 0).length;
  const nyquistRhp = openPzOk ? openRhp + nCw : null;
  // ngspice's pz sometimes returns only some of the roots: a closed loop with fewer poles than the open loop is not trusted.
  const closed = p.closed && p.closed.length > 0 && (!openPzOk || p.closed.length === p.poles.length) ? p.closed : null;
  const rhpClosed = closed ? closed.filter((x) => x.re >= 0).length : nyquistRhp ?? NaN;
  if (Number.isNaN(rhpClosed)) throw new Error(`${job.id}: neither the closed-loop pz nor the open-loop pz of ngspice gave an answer`);
  return {
    id: job.id,
    dcGain: p.a0,
    dcGainDb: 20 * Math.log10(Math.abs(p.a0)),
    poles: p.poles,
    zeros: p.zeros,
    openPzOk,
    closedPoles: closed,
    rhpClosed,
    stable: rhpClosed === 0,
    nyquistRhp,
    consistent: closed === null || nyquistRhp === null || nyquistRhp === rhpClosed,
    edge: closed && closed.length ? Math.min(...closed.map((x) => Math.abs(x.re) / mag(x))) : Infinity,
    unityGainHz: first('unity'),
    bandwidthHz: first('bandwidth'),
    crossovers,
    phaseMarginDeg: crossovers.length ? Math.min(...crossovers.map((c) => c.marginDeg)) : null,
    phaseCrossings,
    gainIncreaseDb: increase.length ? Math.min(...increase.map((c) => -c.loopDb)) : null,
    gainReductionDb: reduction.length ? Math.min(...reduction.map((c) => c.loopDb)) : null,
    sweep: { fStartHz: sweep.fStartHz, fStopHz: sweep.fStopHz, perDecade: sweep.perDecade },
  };
}

/**
 * Right-half-plane closed-loop poles with the loop gain multiplied by k, by the
 * Nyquist count on the reference's own sweep: Z = P + N, N from the phase
 * crossings where k·|βA| ≥ 1. Null when the open loop's P is not known.
 */
export function nyquistAtGain(ref: LoopReference, k: number): number | null {
  if (!ref.openPzOk) return null;
  let n = 0;
  for (const c of ref.phaseCrossings) if (c.loopDb + 20 * Math.log10(k) >= 0) n += c.fHz === 0 ? c.direction : 2 * c.direction;
  return ref.poles.filter((x) => x.re >= 0).length + n;
}

/** Frequency in Hz of a root in rad/s. */
export const rootHz = (r: Complex): number => mag(r) / TWO_PI;
