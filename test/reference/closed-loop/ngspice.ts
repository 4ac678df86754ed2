// ngspice decks of the closed loop (ngspice 39, Debian package `ngspice`):
// the open-loop network of ./cases.ts with its input node driven by the loop,
//   non-inverting:  Efb in src out 0 −β        v(in) = v(src) − β·v(out)
//   inverting:      Bfb in 0 V = −(β·v(out) + (1 − β)·v(src))
// (ideal resistive feedback as seen by the amplifier's differential input),
// and ngspice's own measurements:
//   tf      the closed-loop DC gain y(∞) per volt of v(src);
//   tran    a step of v(src) (a PWL ramp of `tr`, a millionth of the rise
//           time, whose half is taken off the measured times); on
//           v(out)/y(∞), `meas tran` MAX (overshoot), WHEN 0.1 and 0.9
//           (CROSS=1: rise time) and WHEN 1 ± band (CROSS=LAST: settling);
//   ac      500 points a decade; on 20·log10|v(out)/y(∞)|, `meas ac` MAX
//           (peaking) and WHEN it falls to −3.0103 dB (bandwidth); with a
//           peak, 2001 linear points across ±10 % of it, MAX again.
// The large-step deck replaces each transconductance controlled by the
// input node, G x y in 0 g, by the behavioural current
//   B x y I = g·(i_tail/gm)·tanh(gm·v(in)/i_tail),
// so that the pair's current saturates at its tail current.

import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { spiceNum } from '../netlist';
import type { LoopCase } from './cases';

const NGSPICE = process.env.NGSPICE ?? 'ngspice';
const n = spiceNum;
const DB3 = 10 * Math.log10(2);

export interface SimPlan {
  /** Step amplitude of v(src), V. */
  step: number;
  /** Ramp time of the step, s. */
  tr: number;
  tstop: number;
  tmax: number;
  /** Settling band, a fraction of the final value. */
  band: number;
  /** AC sweep, Hz; none for a large-step deck. */
  ac?: [number, number];
  /** A linear sweep of 2001 points across a narrow window, Hz: a sharp peak is not missed between the points of the log sweep. */
  zoom?: [number, number];
}

export interface SimResult {
  /** Closed-loop DC gain from tf, V/V per volt of v(src). */
  dcGain: number;
  /** Largest v(out)/y(∞) in the transient. */
  extreme: number | null;
  t10: number | null;
  t90: number | null;
  /** Last crossings of the upper and lower edge of the band. */
  tUpper: number | null;
  tLower: number | null;
  /** Largest 20·log10|v(out)/y(∞)| over the sweep, and where it falls 3.0103 dB below DC. */
  peakDb: number | null;
  bandwidthHz: number | null;
  stderr: string;
}

function feedback(c: LoopCase): string {
  return c.gain < 0 ? `Bfb in 0 V = -(${n(c.beta)}*V(out) + ${n(1 - c.beta)}*V(src))` : `Efb in src out 0 ${n(-c.beta)}`;
}

/** The input pair's transconductances as currents limited by the tail. */
export function limitedPair(lines: string[], pair: { gm: number; tail: number }): string[] {
  return lines.map((l) => {
    const m = /^G(\S+)\s+(\S+)\s+(\S+)\s+in\s+0\s+(\S+)$/.exec(l);
    if (!m) return l;
    const g = Number(m[4]);
    const k = pair.tail / pair.gm;
    return `B${m[1]} ${m[2]} ${m[3]} I = ${n(g * k)}*tanh(V(in)/${n(k)})`;
  });
}

export function deck(c: LoopCase, elements: string[], plan: SimPlan): string {
  const lines = [
    `* polecheck closed-loop reference ${c.id}`,
    `vs src 0 dc 0 ac 1 pwl(0 0 ${n(plan.tr)} ${n(plan.step)})`,
    feedback(c),
    ...elements,
    '.options reltol=1e-9 abstol=1e-20 vntol=1e-15 chgtol=1e-26 trtol=1',
    '.control',
    'set nobreak',
    'set width=400',
    'option numdgt=17',
    'tf v(out) vs',
    'print transfer_function',
    `tran ${n(plan.tmax)} ${n(plan.tstop)} 0 ${n(plan.tmax)}`,
    // The output over its final value, so that every level is a plain number.
    `let vn = v(out)/(tf1.transfer_function*${n(plan.step)})`,
    'meas tran extreme MAX vn',
    'meas tran t10 WHEN vn=0.1 CROSS=1',
    'meas tran t90 WHEN vn=0.9 CROSS=1',
    `meas tran tupper WHEN vn=${n(1 + plan.band)} CROSS=LAST`,
    `meas tran tlower WHEN vn=${n(1 - plan.band)} CROSS=LAST`,
    ...(plan.ac
      ? [`ac dec 500 ${n(plan.ac[0])} ${n(plan.ac[1])}`, 'let gdb = db(v(out)/tf1.transfer_function)', 'meas ac peak MAX gdb', `meas ac bw WHEN gdb=${n(-DB3)} FALL=1`]
      : []),
    ...(plan.zoom ? [`ac lin 2001 ${n(plan.zoom[0])} ${n(plan.zoom[1])}`, 'let zdb = db(v(out)/tf1.transfer_function)', 'meas ac zpeak MAX zdb'] : []),
    'quit',
    '.endc',
    '.end',
    '',
  ];
  return lines.join('\n');
}

/** `name = value` lines of meas (a failed meas prints none). */
function measured(stdout: string): Map<string, number> {
  const m = new Map<string, number>();
  for (const l of stdout.split(/\r?\n/)) {
    const r = /^(\w+)\s*=\s*([-+0-9.eE]+)/.exec(l.trim());
    if (r && Number.isFinite(Number(r[2]))) m.set(r[1].toLowerCase(), Number(r[2]));
  }
  return m;
}

export function parse(stdout: string, stderr: string): SimResult {
  const dc = /^transfer_function\s*=\s*(\S+)/m.exec(stdout);
  if (!dc || !Number.isFinite(Number(dc[1]))) throw new Error(`ngspice tf failed:\n${stderr}\n${stdout.slice(0, 2000)}`);
  const m = measured(stdout);
  const get = (k: string) => m.get(k) ?? null;
  return {
    dcGain: Number(dc[1]),
    extreme: get('extreme'),
    t10: get('t10'),
    t90: get('t90'),
    tUpper: get('tupper'),
    tLower: get('tlower'),
    peakDb: get('peak') === null ? null : Math.max(get('peak')!, get('zpeak') ?? -Infinity),
    bandwidthHz: get('bw'),
    stderr,
  };
}

/** Runs `ngspice -b` on a deck without blocking; resolves with its output. */
export function runDeck(text: string, timeoutMs = 60_000): Promise<{ stdout: string; stderr: string }> {
  const dir = mkdtempSync(join(tmpdir(), 'polecheck-loop-'));
  const file = join(dir, 'deck.cir');
  writeFileSync(file, text);
  return new Promise((resolve, reject) => {
    const child = spawn(NGSPICE, ['-b', file], { cwd: dir });
    let stdout = '';
    let stderr = '';
    const timer = setTimeout(() => child.kill('SIGKILL'), timeoutMs);
    child.stdout.on('data', (d) => (stdout += d));
    child.stderr.on('data', (d) => (stderr += d));
    child.on('error', (err) => {
      clearTimeout(timer);
      rmSync(dir, { recursive: true, force: true });
      reject(err);
    });
    child.on('close', (code) => {
      clearTimeout(timer);
      rmSync(dir, { recursive: true, force: true });
      if (code !== 0) reject(new Error(`ngspice exited with ${code}: ${stderr}`));
      else resolve({ stdout, stderr });
    });
  });
}

/** Runs the jobs at most `width` at a time (the test machines share two cores). */
export async function pool<T>(jobs: Array<() => Promise<T>>, width = 2): Promise<T[]> {
  const out: T[] = new Array(jobs.length);
  let next = 0;
  const worker = async () => {
    while (next < jobs.length) {
      const i = next++;
      out[i] = await jobs[i]();
    }
  };
  await Promise.all(Array.from({ length: Math.min(width, jobs.length) }, worker));
  return out;
}
