// The closed loop in the frequency and the time domain: the signal response
// A/(1 + βA) from its poles and zeros, its −3 dB bandwidth and peaking, the
// small-signal step response (overshoot, rise time, settling time), and the
// settling of a large step through a first-order large-signal model of the
// input stage.
//
// Everything here is exact for the linear network: the step response is the
// sum of its modes by partial fractions, and every level crossing (a rise
// point, the last exit from a settling band, a peak) is located by a scan
// whose steps are bounded by the derivatives of that sum, then refined by
// regula falsi, so no crossing is skipped between samples.

import { FactoredResponse, type NetworkAnalysis } from './analyze';
import { complexLU, complexSolve, realLU, realSolve } from './linalg';
import type { Stamped } from './network';
import type { Root } from './roots';

const TWO_PI = 2 * Math.PI;

// ---------------------------------------------------------------------------
// A sum of exponential modes

/**
 * x(t) = Re Σ c_i·e^{p_i·t}, with its derivatives and a bound on each: for a
 * stable sum, |x⁽ᵏ⁾(τ)| ≤ Σ |c_i|·|p_i|^k·e^{Re p_i·t} for every τ ≥ t.
 */
export class Modes {
  /** Per mode: c·p^k for k = 0…3, real and imaginary parts, and |c|·|p|^k. */
  private readonly cr: Float64Array[];
  private readonly ci: Float64Array[];
  private readonly size: Float64Array[];
  readonly pr: Float64Array;
  readonly pi: Float64Array;

  constructor(
    readonly coef: Array<{ re: number; im: number }>,
    readonly poles: Root[],
  ) {
    const n = poles.length;
    this.pr = Float64Array.from(poles, (p) => p.re);
    this.pi = Float64Array.from(poles, (p) => p.im);
    this.cr = [];
    this.ci = [];
    this.size = [];
    for (let k = 0; k <= 3; k++) {
      this.cr.push(new Float64Array(n));
      this.ci.push(new Float64Array(n));
      this.size.push(new Float64Array(n));
    }
    for (let i = 0; i < n; i++) {
      let re = coef[i].re;
      let im = coef[i].im;
      for (let k = 0; k <= 3; k++) {
        this.cr[k][i] = re;
        this.ci[k][i] = im;
        this.size[k][i] = Math.hypot(re, im);
        const r = re * poles[i].re - im * poles[i].im;
        im = re * poles[i].im + im * poles[i].re;
        re = r;
      }
    }
  }

  /** d^k x/dt^k at t (k ≤ 3). */
  value(t: number, k = 0): number {
    const cr = this.cr[k];
    const ci = this.ci[k];
    let sum = 0;
    for (let i = 0; i < cr.length; i++) {
      const e = Math.exp(this.pr[i] * t);
      if (e === 0) continue;
      const w = this.pi[i] * t;
      sum += e * (this.pi[i] === 0 ? cr[i] : cr[i] * Math.cos(w) - ci[i] * Math.sin(w));
    }
    return sum;
  }

  /** Σ |c_i|·|p_i|^k·e^{Re p_i·t}: a bound of |d^k x/dt^k| from t on (k ≤ 3). */
  envelope(t: number, k = 0): number {
    const s = this.size[k];
    let sum = 0;
    for (let i = 0; i < s.length; i++) sum += s[i] * Math.exp(this.pr[i] * t);
    return sum;
  }

  /** Every mode decays. */
  get stable(): boolean {
    return this.poles.every((p) => p.re < 0);
  }

  /** The earliest t at which the envelope of x is at most `level` (0 when it already is). */
  envelopeBelow(level: number): number {
    if (this.envelope(0) <= level) return 0;
    let hi = 1 / Math.min(...this.poles.map((p) => -p.re));
    for (let i = 0; i < 200 && this.envelope(hi) > level; i++) hi *= 2;
    let lo = 0;
    for (let i = 0; i < 200 && hi - lo > 1e-13 * hi; i++) {
      const mid = 0.5 * (lo + hi);
      if (this.envelope(mid) > level) lo = mid;
      else hi = mid;
    }
    return hi;
  }
}

/** A level of the k-th derivative whose crossings a scan looks for. */
interface Target {
  k: 0 | 1;
  level: number;
}

/**
 * Longest step from a point where f = f0, f' = f1 over which f cannot change
 * sign, given |f''| ≤ m on the step: f(t + h) stays on the side of f0 while
 * |f0| − |f1|·h − m·h²/2 > 0 (moving towards zero) or for any h below the
 * positive root of |f0| + |f1|·h − m·h²/2 (moving away).
 */
function safeStep(f0: number, f1: number, m: number): number {
  const a = Math.abs(f0);
  const b = Math.abs(f1);
  const towards = f0 * f1 < 0;
  if (!(m > 0)) return towards ? a / b : Infinity;
  const root = Math.sqrt(b * b + 2 * m * a);
  return towards ? (2 * a) / (b + root) : (b + root) / m;
}

/**
 * Root of g on [a, b] with g(a), g(b) of opposite signs: regula falsi with
 * the Illinois modification (M. Dowell, P. Jarratt, BIT 11 (1971) 168–174).
 */
function refine(g: (t: number) => number, a: number, b: number, ga: number, gb: number): number {
  for (let it = 0; it < 200; it++) {
    const lo = Math.min(a, b);
    const hi = Math.max(a, b);
    if (hi - lo <= 1e-15 * Math.max(Math.abs(lo), Math.abs(hi)) + 1e-300) break;
    let x = b - (gb * (b - a)) / (gb - ga);
    if (!(x > lo && x < hi)) x = 0.5 * (lo + hi);
    const gx = g(x);
    if (gx === 0) return x;
    if (gx * gb < 0) {
      a = b;
      ga = gb;
    } else {
      ga /= 2;
    }
    b = x;
    gb = gx;
  }
  return Math.abs(ga) < Math.abs(gb) ? a : b;
}

/** A crossing found by a scan: its time, which target, and the sign of the slope there. */
export interface Crossing {
  t: number;
  target: number;
  rising: boolean;
}

/**
 * Every crossing of the targets' levels on [t0, t1], in time order, until
 * `visit` returns false. Each step is the shortest safe step of the targets
 * (no crossing can lie inside it), so nothing is skipped; the step is kept
 * above `minStep` (a touch of the level shorter than that may be missed),
 * which also ends the approach to a crossing, whose safe steps shrink
 * towards it.
 */
export function scanCrossings(m: Modes, targets: Target[], t0: number, t1: number, visit: (c: Crossing) => boolean): boolean {
  const minStep = Math.max(1e-12 * (t1 - t0), 1e-300);
  const count = targets.length;
  const f = (j: number, t: number): number => m.value(t, targets[j].k) - targets[j].level;
  let t = t0;
  // Two buffers, swapped: the scan runs inside every solver step.
  let prev = new Float64Array(count);
  let next = new Float64Array(count);
  for (let j = 0; j < count; j++) prev[j] = f(j, t);
  const found: Crossing[] = [];
  let guard = 0;
  while (t < t1) {
    if (guard++ > SCAN_BUDGET) return false;
    let h = Infinity;
    for (let j = 0; j < count; j++) {
      const { k } = targets[j];
      h = Math.min(h, safeStep(prev[j], m.value(t, k + 1), m.envelope(t, k + 2)));
    }
    h = Math.min(Math.max(h, minStep), t1 - t);
    const tn = t + h;
    found.length = 0;
    for (let j = 0; j < count; j++) {
      next[j] = f(j, tn);
      if (next[j] === 0) {
        // Landed exactly on the level (the approach to a crossing can): it is
        // a crossing if the value just after has changed side.
        const after = f(j, tn + minStep);
        if (after * prev[j] < 0) found.push({ t: tn, target: j, rising: after > prev[j] });
        next[j] = after || prev[j];
        continue;
      }
      if (prev[j] * next[j] >= 0) continue;
      found.push({ t: refine((x) => f(j, x), t, tn, prev[j], next[j]), target: j, rising: next[j] > prev[j] });
    }
    if (found.length > 1) found.sort((a, b) => a.t - b.t);
    for (const c of found) if (!visit(c)) return true;
    t = tn;
    const swap = prev;
    prev = next;
    next = swap;
  }
  return true;
}

/** Steps one scan may take: some ten per period of 2,000 periods of ringing. */
const SCAN_BUDGET = 30_000;
/** Periods of ringing beyond which a step response is not resolved (a loop with a Q of a hundred settles in a few hundred). */
const MAX_PERIODS = 2_000;

/**
 * A step response that rings for more periods than a scan can follow before
 * `tEnd` (a resonance of absurd Q, at values beyond any real design): the
 * frequency and Q of its worst mode, or undefined when it can be followed.
 */
export function unresolvedRinging(m: Modes, tEnd: number): { hz: number; q: number } | undefined {
  let worst: { periods: number; hz: number; q: number } | undefined;
  for (let i = 0; i < m.poles.length; i++) {
    const p = m.poles[i];
    if (p.im === 0 || !(p.re < 0)) continue;
    const c = Math.hypot(m.coef[i].re, m.coef[i].im);
    if (!(c > 0)) continue;
    // Time until this mode alone is below 10⁻¹⁵ of the step, or tEnd.
    const life = Math.min(tEnd, Math.max(0, Math.log(c / 1e-15)) / -p.re);
    const periods = (Math.abs(p.im) * life) / TWO_PI;
    if (periods > MAX_PERIODS && (!worst || periods > worst.periods)) worst = { periods, hz: Math.hypot(p.re, p.im) / TWO_PI, q: Math.hypot(p.re, p.im) / (2 * -p.re) };
  }
  return worst && { hz: worst.hz, q: worst.q };
}

// ---------------------------------------------------------------------------
// Figures of a step response e(t) = y(t)/y(∞) − 1

/**
 * Time after which |e| stays within `band`: its last crossing of ±band, 0 if
 * it never leaves the band; null when the response rings beyond what a scan
 * resolves (see unresolvedRinging).
 */
export function settlingTime(m: Modes, band: number): { t: number; crossings: number } | null {
  if (!m.stable) return { t: Infinity, crossings: 0 };
  const tEnd = m.envelopeBelow(band);
  if (tEnd === 0) return { t: 0, crossings: 0 };
  if (unresolvedRinging(m, tEnd)) return null;
  let last = 0;
  let count = 0;
  const done = scanCrossings(m, [{ k: 0, level: band }, { k: 0, level: -band }], 0, tEnd, (c) => {
    last = c.t;
    count++;
    return true;
  });
  return done ? { t: last, crossings: count } : null;
}

/** Largest value of e over t ≥ 0 (0 when the response never passes its final value) and when it occurs; null if unresolved. */
export function overshoot(m: Modes): { value: number; t: number } | null {
  let best = Math.max(0, m.value(0));
  let at = 0;
  if (!m.stable) return { value: Infinity, t: 0 };
  // Beyond where the envelope falls below the best peak so far, no later peak can exceed it.
  const tEnd = m.envelopeBelow(Math.max(best, 1e-12));
  if (tEnd === 0) return { value: best, t: at };
  if (unresolvedRinging(m, m.envelopeBelow(1e-3))) return null;
  let limit = tEnd;
  const done = scanCrossings(m, [{ k: 1, level: 0 }], 0, tEnd, (c) => {
    if (c.t > limit) return false;
    if (!c.rising) {
      const v = m.value(c.t);
      if (v > best) {
        best = v;
        at = c.t;
        limit = m.envelopeBelow(best);
      }
    }
    return c.t < limit;
  });
  return done ? { value: best, t: at } : null;
}

/** 10–90 % rise time: first reaching 10 % of the final value to first reaching 90 %; null if unresolved. */
export function riseTime(m: Modes): { t10: number; t90: number } | null {
  if (!m.stable) return null;
  const e0 = m.value(0);
  let t10 = e0 >= -0.9 ? 0 : NaN;
  let t90 = e0 >= -0.1 ? 0 : NaN;
  if (!Number.isNaN(t10) && !Number.isNaN(t90)) return { t10, t90 };
  const tEnd = m.envelopeBelow(0.05);
  if (unresolvedRinging(m, tEnd)) return null;
  scanCrossings(m, [{ k: 0, level: -0.9 }, { k: 0, level: -0.1 }], 0, tEnd, (c) => {
    if (c.target === 0 && c.rising && Number.isNaN(t10)) t10 = c.t;
    if (c.target === 1 && c.rising && Number.isNaN(t90)) t90 = c.t;
    return Number.isNaN(t10) || Number.isNaN(t90);
  });
  return Number.isNaN(t10) || Number.isNaN(t90) ? null : { t10, t90 };
}

// ---------------------------------------------------------------------------
// The closed-loop transfer function

export interface ClosedLoopResponse {
  beta: number;
  /** Closed-loop poles and zeros, rad/s. */
  poles: Root[];
  zeros: Root[];
  /** DC gain of the non-inverting loop A/(1 + βA), V/V, signed. */
  dcGain: number;
  /** The response A/(1 + βA) from its roots, checked against a nodal solve. */
  factored: FactoredResponse;
  /** The step response as e(t) = y(t)/y(∞) − 1, by partial fractions. */
  step: Modes;
}

/** (G − β·gIn·e_outᵀ, C − β·cIn·e_outᵀ): the nodal matrices of the loop closed by β. */
export function closedMatrices(st: Stamped, beta: number): { G: Float64Array; C: Float64Array } {
  const { n, out } = st;
  const G = st.G.slice();
  const C = st.C.slice();
  for (let i = 0; i < n; i++) {
    G[i * n + out] -= beta * st.gIn[i];
    C[i * n + out] -= beta * st.cIn[i];
  }
  return { G, C };
}

/** v(out) of the closed loop at jω (ω = 0: DC), by a nodal solve. */
function closedAt(st: Stamped, G: Float64Array, C: Float64Array, w: number): [number, number] {
  const { n } = st;
  const re = G.slice();
  const im = new Float64Array(n * n);
  for (let i = 0; i < n * n; i++) im[i] = w * C[i];
  const xr = new Float64Array(n);
  const xi = new Float64Array(n);
  const lu = complexLU(re, im, n);
  if (!(lu.pivotRatio > 0)) return [NaN, NaN];
  complexSolve(lu, Float64Array.from(st.gIn, (v) => -v), Float64Array.from(st.cIn, (v) => -w * v), xr, xi);
  return [xr[st.out], xi[st.out]];
}

/**
 * Step-response coefficients from the roots: with H(s) = H0·Π(1 − s/z)/Π(1 − s/p)
 * and simple poles, y(t)/H0 = 1 − Σ c_i·e^{p_i·t}, where
 * c_i = Π_z(1 − p_i/z)/Π_{j≠i}(1 − p_i/p_j) (the residue of H(s)/s at p_i,
 * divided by −H0; partial fractions as in any text on the Laplace transform,
 * e.g. A. V. Oppenheim, A. S. Willsky, "Signals and Systems", §9.3).
 */
export function stepModes(poles: Root[], zeros: Root[]): Modes {
  // Poles equal to round-off would divide by zero: a relative nudge of 1e-9
  // changes the response by about as much.
  const p = poles.map((r) => ({ ...r }));
  for (let i = 0; i < p.length; i++) {
    for (let j = 0; j < i; j++) {
      const size = Math.hypot(p[i].re, p[i].im);
      if (Math.hypot(p[i].re - p[j].re, p[i].im - p[j].im) <= 1e-12 * size) {
        p[i].re *= 1 + 1e-9;
        p[i].im *= 1 + 1e-9;
      }
    }
  }
  const coef = p.map((pi, i) => {
    let re = -1; // e = y/H0 − 1 = −Σ c_i·e^{p_i t}
    let im = 0;
    const mul = (ar: number, ai: number) => {
      const r = re * ar - im * ai;
      im = re * ai + im * ar;
      re = r;
    };
    const div = (ar: number, ai: number) => {
      const d = ar * ar + ai * ai;
      const r = (re * ar + im * ai) / d;
      im = (im * ar - re * ai) / d;
      re = r;
    };
    for (const z of zeros) {
      const d = z.re * z.re + z.im * z.im;
      if (d === 0) continue;
      // 1 − p/z
      mul(1 - (pi.re * z.re + pi.im * z.im) / d, -(pi.im * z.re - pi.re * z.im) / d);
    }
    for (let j = 0; j < p.length; j++) {
      if (j === i) continue;
      const q = p[j];
      const d = q.re * q.re + q.im * q.im;
      div(1 - (pi.re * q.re + pi.im * q.im) / d, -(pi.im * q.re - pi.re * q.im) / d);
    }
    return { re, im };
  });
  return new Modes(coef, p);
}

/**
 * The closed loop of `a` with feedback factor β, from its closed-loop poles
 * (analyzeLoop's, the roots of det(G − β·gIn·e_outᵀ + s(C − β·cIn·e_outᵀ))).
 * Its zeros are those of A(s): the bordered pencil of the closed loop,
 * [[G + sC − β·b·e_outᵀ, b], [e_outᵀ, 0]] with b = gIn + s·cIn, becomes the
 * bordered pencil of A(s) when β·e_outᵀ times its last column is added to the
 * others, which leaves its determinant unchanged. A string says why there is
 * no response to speak of.
 */
export function closedLoopResponse(a: NetworkAnalysis, beta: number, poles: Root[]): ClosedLoopResponse | string {
  const st = a.stamped;
  const { G, C } = closedMatrices(st, beta);
  const [dc] = closedAt(st, G, C, 0);
  if (!Number.isFinite(dc) || dc === 0) return 'the closed loop has no DC gain (a zero at the origin, or a singular loop)';
  if (poles.length === 0) return 'the closed-loop poles could not be computed';
  if (poles.some((p) => !(p.re < 0))) return 'the closed loop is not stable';
  const zeros = a.zeros.filter((z) => z.re !== 0 || z.im !== 0);
  if (zeros.length !== a.zeros.length) return 'the closed loop has a zero at the origin';
  const factored = new FactoredResponse(poles, zeros, dc);
  // The factored form must reproduce the nodal solve, between the roots and above them.
  let wMin = Infinity;
  let wMax = 0;
  for (const r of [...poles, ...zeros]) {
    const w = Math.hypot(r.re, r.im);
    wMin = Math.min(wMin, w);
    wMax = Math.max(wMax, w);
  }
  for (const w of [Math.sqrt(wMin * wMax), wMax * 2.9, wMin * 0.37]) {
    const [hr, hi] = closedAt(st, G, C, w);
    const dLn = Math.log(Math.hypot(hr, hi)) - factored.lnMag(w);
    const dPh = Math.atan2(hi, hr) - factored.phase(w);
    const wrapped = dPh - TWO_PI * Math.round(dPh / TWO_PI);
    if (!(Math.abs(dLn) <= 1e-6 && Math.abs(wrapped) <= 1e-6)) return 'the closed-loop response could not be factored reliably from its poles and zeros (values beyond what double precision resolves?)';
  }
  return { beta, poles, zeros, dcGain: dc, factored, step: stepModes(poles, zeros) };
}

// ---------------------------------------------------------------------------
// Frequency-domain figures of a factored response

/** First ω (rad/s) where ln|H| falls through `level`, searched with the slope bound; null if it never does. */
export function firstFall(f: FactoredResponse, level: number): number | null {
  const g = (x: number): number => f.lnMag(Math.exp(x)) - level;
  let lo = f.lnMin - 3 * Math.LN10;
  let hi = f.lnMax + 3 * Math.LN10;
  if (f.highSlope < 0) for (let i = 0; i < 20 && g(hi) > 0; i++) hi += g(hi) / -f.highSlope + 2;
  // Below every root the response is flat: a level within round-off of DC is met far down.
  if (!(g(lo) > 0)) {
    lo -= 20 * Math.LN10;
    if (!(g(lo) > 0)) return null;
  }
  const grid = [lo, ...f.breaks().filter((x) => x > lo && x < hi), hi].sort((x, y) => x - y);
  // Called with g0 > 0 only: the first fall is the first change of sign.
  const search = (x0: number, g0: number, x1: number, g1: number, depth: number): number | null => {
    if (g1 > 0) {
      if (g0 + g1 > f.magSlopeBound(Math.exp(x0), Math.exp(x1)) * (x1 - x0) || depth >= 60) return null;
    } else if (depth >= 60 || x1 - x0 < 1e-12) {
      return g1 === 0 ? x1 : refine(g, x0, x1, g0, g1);
    }
    const xm = 0.5 * (x0 + x1);
    const gm = g(xm);
    if (!(gm > 0)) return search(x0, g0, xm, gm, depth + 1);
    return search(x0, g0, xm, gm, depth + 1) ?? search(xm, gm, x1, g1, depth + 1);
  };
  let g0 = g(grid[0]);
  for (let i = 1; i < grid.length; i++) {
    const g1 = g(grid[i]);
    const r = search(grid[i - 1], g0, grid[i], g1, 0);
    if (r !== null) return Math.exp(r);
    if (!(g1 > 0)) return null; // cannot happen: a fall would have been found
    g0 = g1;
  }
  return null;
}

/** d ln|H(jω)|/d ln ω from the roots: Σ ±ω(ω − b)/(a² + (ω − b)²) over the roots a + jb (+ for zeros). */
export function magSlope(f: FactoredResponse, w: number): number {
  let sum = f.originZeros;
  const { re, im, sign } = f;
  for (let i = 0; i < re.length; i++) {
    const u = w - im[i];
    sum += (sign[i] * w * u) / (re[i] * re[i] + u * u);
  }
  return sum;
}

/**
 * Largest ln|H(jω)| over ω ≥ 0 and where it is: the maxima are where the
 * slope d ln|H|/d ln ω falls through zero. The slope is sampled at 40 points
 * a decade and at every root's break points (a resonance's half-power points
 * among them, so no peak lies between two samples), each fall through zero
 * refined by regula falsi; the DC value counts too. Null when the response
 * overflows (values beyond what double precision resolves).
 */
export function peakMagnitude(f: FactoredResponse): { lnMag: number; w: number } | null {
  const lo = f.lnMin - 3 * Math.LN10;
  const hi = f.lnMax + 3 * Math.LN10;
  const perDecade = 40;
  const count = Math.max(2, Math.ceil(((hi - lo) / Math.LN10) * perDecade));
  const grid: number[] = [];
  for (let i = 0; i <= count; i++) grid.push(lo + ((hi - lo) * i) / count);
  for (const x of f.breaks()) if (x > lo && x < hi) grid.push(x);
  grid.sort((x, y) => x - y);
  const slope = (x: number) => magSlope(f, Math.exp(x));
  let best = f.lnGain;
  let at = -Infinity;
  const consider = (x: number) => {
    const g = f.lnMag(Math.exp(x));
    if (g > best) {
      best = g;
      at = x;
    }
  };
  let d0 = slope(grid[0]);
  if (!Number.isFinite(d0)) return null;
  for (let i = 1; i < grid.length; i++) {
    const d1 = slope(grid[i]);
    if (!Number.isFinite(d1)) return null;
    if (d0 > 0 && d1 <= 0) consider(d1 === 0 ? grid[i] : refine(slope, grid[i - 1], grid[i], d0, d1));
    d0 = d1;
  }
  // Rising to the top of the search: the response levels off above every root.
  if (d0 > 0) consider(grid[grid.length - 1]);
  if (!Number.isFinite(best)) return null;
  return { lnMag: best, w: at === -Infinity ? 0 : Math.exp(at) };
}

// ---------------------------------------------------------------------------
// Modal decomposition of the closed loop: its free response from any state

/**
 * Right and left null vectors of G + s·C at each closed-loop pole s (inverse
 * iteration on the nearly singular matrix; J. H. Wilkinson, "The Algebraic
 * Eigenvalue Problem", ch. 9), so that a deviation d from equilibrium of
 * C·ẋ = −G·x decays as Σ α_i·v_i·e^{s_i·t} with α_i = w_iᵀ·C·d / w_iᵀ·C·v_i
 * (distinct poles make the w_i and v_i C-biorthogonal: w_iᵀ(G + s_i C)v_j = 0
 * and w_iᵀ(G + s_j C)v_j = 0 give (s_i − s_j)·w_iᵀ·C·v_j = 0). Only C·d
 * enters, so a state whose algebraic nodes are not yet consistent projects
 * as the consistent one would.
 */
export class ModalBasis {
  private readonly vr: Float64Array[] = [];
  private readonly vi: Float64Array[] = [];
  /** wᵀC, and its product with v. */
  private readonly wcr: Float64Array[] = [];
  private readonly wci: Float64Array[] = [];
  private readonly normr: number[] = [];
  private readonly normi: number[] = [];

  private constructor(
    readonly n: number,
    readonly poles: Root[],
    private readonly C: Float64Array,
  ) {}

  /** Null for a defective or ill-conditioned set of modes (poles too close to separate). */
  static of(G: Float64Array, C: Float64Array, n: number, poles: Root[]): ModalBasis | null {
    const basis = new ModalBasis(n, poles, C);
    for (const s of poles) {
      const size = Math.hypot(s.re, s.im);
      // Off the pole by a hair, so that the factorisation has no exactly zero pivot.
      const sr = s.re + 1e-11 * size;
      const si = s.im + 1e-11 * size;
      const v = nullVector(G, C, n, sr, si, false);
      const w = nullVector(G, C, n, sr, si, true);
      if (!v || !w) return null;
      // wᵀC (a row), then wᵀCv.
      const wcr = new Float64Array(n);
      const wci = new Float64Array(n);
      for (let j = 0; j < n; j++) {
        let r = 0;
        let im = 0;
        for (let i = 0; i < n; i++) {
          r += w[0][i] * C[i * n + j];
          im += w[1][i] * C[i * n + j];
        }
        wcr[j] = r;
        wci[j] = im;
      }
      let nr = 0;
      let ni = 0;
      let scale = 0;
      for (let j = 0; j < n; j++) {
        nr += wcr[j] * v[0][j] - wci[j] * v[1][j];
        ni += wcr[j] * v[1][j] + wci[j] * v[0][j];
        scale += Math.hypot(wcr[j], wci[j]) * Math.hypot(v[0][j], v[1][j]);
      }
      if (!(Math.hypot(nr, ni) > 1e-10 * scale)) return null;
      basis.vr.push(v[0]);
      basis.vi.push(v[1]);
      basis.wcr.push(wcr);
      basis.wci.push(wci);
      basis.normr.push(nr);
      basis.normi.push(ni);
    }
    return basis;
  }

  /** Mode amplitudes α_i of the deviation d (real). */
  amplitudes(d: ArrayLike<number>): Array<{ re: number; im: number }> {
    return this.poles.map((_, i) => {
      let r = 0;
      let im = 0;
      for (let j = 0; j < this.n; j++) {
        r += this.wcr[i][j] * d[j];
        im += this.wci[i][j] * d[j];
      }
      const nr = this.normr[i];
      const ni = this.normi[i];
      const m = nr * nr + ni * ni;
      return { re: (r * nr + im * ni) / m, im: (im * nr - r * ni) / m };
    });
  }

  /** The free response of node `node` from deviation d, divided by `scale`, as a sum of modes. */
  response(d: ArrayLike<number>, node: number, scale: number): Modes {
    const alpha = this.amplitudes(d);
    const coef = alpha.map((a, i) => ({
      re: (a.re * this.vr[i][node] - a.im * this.vi[i][node]) / scale,
      im: (a.re * this.vi[i][node] + a.im * this.vr[i][node]) / scale,
    }));
    return new Modes(coef, this.poles);
  }

  /** |C·(Σ α_i v_i − d)| relative to |C·d|: how well the modes reproduce the state. */
  residual(d: ArrayLike<number>): number {
    const alpha = this.amplitudes(d);
    const n = this.n;
    const x = new Float64Array(n);
    for (let i = 0; i < alpha.length; i++) for (let j = 0; j < n; j++) x[j] += alpha[i].re * this.vr[i][j] - alpha[i].im * this.vi[i][j];
    let num = 0;
    let den = 0;
    for (let i = 0; i < n; i++) {
      let a = 0;
      let b = 0;
      for (let j = 0; j < n; j++) {
        a += this.C[i * n + j] * (x[j] - d[j]);
        b += this.C[i * n + j] * d[j];
      }
      num += a * a;
      den += b * b;
    }
    return den === 0 ? 0 : Math.sqrt(num / den);
  }
}

/** A null vector of G + s·C (or of its transpose), by two steps of inverse iteration; null if it does not settle. */
function nullVector(G: Float64Array, C: Float64Array, n: number, sr: number, si: number, transpose: boolean): [Float64Array, Float64Array] | null {
  const re = new Float64Array(n * n);
  const im = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const k = transpose ? j * n + i : i * n + j;
      re[i * n + j] = G[k] + sr * C[k];
      im[i * n + j] = si * C[k];
    }
  }
  const lu = complexLU(re, im, n);
  if (!(lu.pivotRatio > 0)) return null;
  let xr = new Float64Array(n).fill(1);
  let xi = new Float64Array(n);
  for (let i = 0; i < n; i++) xi[i] = 0.5 + 0.01 * i; // not orthogonal to any null vector in practice
  for (let it = 0; it < 3; it++) {
    const yr = new Float64Array(n);
    const yi = new Float64Array(n);
    complexSolve(lu, xr, xi, yr, yi);
    let norm = 0;
    for (let i = 0; i < n; i++) norm = Math.max(norm, Math.hypot(yr[i], yi[i]));
    if (!(norm > 0) || !Number.isFinite(norm)) return null;
    for (let i = 0; i < n; i++) {
      yr[i] /= norm;
      yi[i] /= norm;
    }
    xr = yr;
    xi = yi;
  }
  return [xr, xi];
}

// ---------------------------------------------------------------------------
// Settling of a large step: the input pair saturates at its tail current

export interface InputPair {
  /** Small-signal transconductance of the pair, S. */
  gm: number;
  /** Tail current, A: the most the pair can steer into its load. */
  tail: number;
}

export interface LargeStepSettling {
  /** Time to stay within the band of the final value, s. */
  settlingTime: number;
  /** Last time the pair was beyond its linear range (|gm·v_id| > i_tail), s; 0 if it never was. */
  slewingUntil: number;
  /** Largest |gm·v_id|/i_tail: how far the pair was driven (> 1: it slewed). */
  peakDrive: number;
  /** From here on the response is the exact linear one (gm·|v_id| below LINEAR_DRIVE·i_tail for good). */
  linearFrom: number;
  /** Accepted and rejected integration steps. */
  steps: number;
  rejected: number;
}

const GAMMA = 2 - Math.SQRT2;
/** d = γ/2 = (1 − γ)/(2 − γ): both stages of TR-BDF2 share the iteration matrix M − d·h·J. */
const D = GAMMA / 2;
const BDF_A = 1 / (GAMMA * (2 - GAMMA));
const BDF_B = ((1 - GAMMA) * (1 - GAMMA)) / (GAMMA * (2 - GAMMA));
/** Local error constant of TR-BDF2: one step from the exact solution misses it by LTE_C·h³·y''' (R. E. Bank et al., 1985; checked in test/engine/closed-loop.test.ts). */
export const LTE_C = (3 * GAMMA * GAMMA - 4 * GAMMA + 2) / (12 * (2 - GAMMA));
/** Largest Q of a closed-loop pair the large-signal estimate integrates through (Q = 20: about 3° of phase margin). */
const MAX_LARGE_Q = 20;
/** Drive below which the pair is taken as linear: tanh(x)/x = 1 − x²/3 + …, 3·10⁻⁴ off at x = 0.03. */
const LINEAR_DRIVE = 0.03;

/**
 * Settling after a step of the loop's input that moves the output by
 * `outputStep` volts, with the input pair's current limited by its tail:
 * the pair's small-signal current gm·v_id becomes i_tail·tanh(gm·v_id/i_tail),
 * the shape of a bipolar pair's transfer (P. R. Gray, P. J. Hurst,
 * S. H. Lewis, R. G. Meyer, "Analysis and Design of Analog Integrated
 * Circuits", ch. 3, the emitter-coupled pair; a MOS pair saturates more
 * abruptly), every other element linear. So C·ẏ = −G·y − gIn·f(v_id),
 * f(v) = (i_tail/gm)·tanh(gm·v/i_tail), v_id = u − β·y_out, integrated by
 * TR-BDF2 (R. E. Bank, W. M. Coughran, W. Fichtner, E. H. Grosse, D. J. Rose,
 * R. K. Smith, "Transient simulation of silicon devices and circuits", IEEE
 * Trans. CAD 4 (1985) 436–451; the error estimate filtered through
 * (M − d·h·J)⁻¹ as in M. E. Hosea, L. F. Shampine, "Analysis and
 * implementation of TR-BDF2", Appl. Numer. Math. 20 (1996) 21–37), which
 * takes a singular C (nodes without capacitance) in its stride; relative
 * error per step 10⁻⁵ of each node's swing. Once gm·|v_id| stays below
 * 0.03·i_tail for good (bounded by the modes of the remaining deviation;
 * tanh(x)/x is then within 3·10⁻⁴ of 1), the rest is the exact linear response from that
 * state, and the last exit from the band is found on it by the same scan as
 * the small-signal settling. The input's own capacitive coupling (cIn) is
 * not part of this model.
 */
export function largeStepSettling(st: Stamped, beta: number, poles: Root[], pair: InputPair, outputStep: number, band: number): LargeStepSettling | string {
  const { n, out } = st;
  if (st.cIn.some((c) => c !== 0)) return 'the input couples capacitively into the network, which the large-signal model leaves out';
  const { G: Gc, C } = closedMatrices(st, beta);
  const G = st.G;
  const gIn = st.gIn;
  // Equilibrium per volt of input, and the input step u that moves the output by outputStep.
  const luC = realLU(Gc.slice(), n);
  if (!luC) return 'the closed loop has no DC solution';
  const perVolt = realSolve(luC, n, Float64Array.from(gIn, (v) => -v));
  if (!(Math.abs(perVolt[out]) > 0)) return 'the closed loop has no DC gain';
  const u = outputStep / Math.abs(perVolt[out]);
  const yFinal = perVolt.map((v) => v * u);
  const target = yFinal[out];
  // A loop that rings with a Q above MAX_LARGE_Q (a phase margin of a few
  // degrees) would be integrated through hundreds of periods of slewing and
  // ringing: no real design, and not worth the time.
  for (const p of poles) {
    const q = Math.hypot(p.re, p.im) / (2 * -p.re);
    if (p.im !== 0 && q > MAX_LARGE_Q) return `the closed loop rings at ${(Math.hypot(p.re, p.im) / TWO_PI).toPrecision(3)} Hz with Q = ${q.toPrecision(3)}, beyond what the large-signal estimate integrates through (Q ≤ ${MAX_LARGE_Q})`;
  }
  const basis = ModalBasis.of(Gc, C, n, poles);
  if (!basis) return 'the closed-loop modes are too close to separate';
  const k = pair.tail / pair.gm;
  const drive = (y: ArrayLike<number>) => (u - beta * y[out]) / k;
  // The settled state itself must leave the pair linear: v_id = u/(1 + βA0) at the end.
  const settledDrive = Math.abs(drive(yFinal));
  if (!(settledDrive < LINEAR_DRIVE)) {
    return `even settled, the step keeps the input pair ${settledDrive >= 1 ? 'beyond' : 'outside'} its linear range (gm·v_id = ${settledDrive.toPrecision(2)}·i_tail at the final value): the loop gain is too low for a step this large, and the first-order large-signal model gives no settling time`;
  }
  const F = (y: Float64Array, into: Float64Array): void => {
    const cur = k * Math.tanh(drive(y));
    for (let i = 0; i < n; i++) {
      let s = 0;
      for (let j = 0; j < n; j++) s += G[i * n + j] * y[j];
      into[i] = -s - gIn[i] * cur;
    }
  };
  const A = new Float64Array(n * n);
  /** LU of M − c·J(y), J = −G + β·f'(v_id)·gIn·e_outᵀ. */
  const iteration = (y: Float64Array, c: number): ReturnType<typeof realLU> => {
    const th = Math.tanh(drive(y));
    const slope = 1 - th * th;
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) A[i * n + j] = C[i * n + j] + c * G[i * n + j];
      A[i * n + out] -= c * beta * slope * gIn[i];
    }
    return realLU(A, n);
  };
  // Error weights: each node against the larger of its final value and the largest it has reached.
  const scale = Float64Array.from(yFinal, (v) => Math.abs(v));
  const RTOL = 1e-5;
  const floor = 1e-9 * Math.abs(target);
  const norm = (v: ArrayLike<number>) => {
    let m = 0;
    for (let i = 0; i < n; i++) m = Math.max(m, Math.abs(v[i]) / (RTOL * Math.max(scale[i], floor)));
    return m;
  };
  const fWork = new Float64Array(n);
  const rWork = new Float64Array(n);
  const dy = new Float64Array(n);
  /**
   * Solves M(y − a) − c·F(y) − extra = 0 from y (overwritten) by Newton's
   * method with the matrix of its first iterate (the nonlinearity is one
   * tanh: a few iterations settle it); returns that LU, or null.
   */
  const solveStage = (y: Float64Array, aVec: Float64Array, c: number, extra: Float64Array | null): ReturnType<typeof realLU> => {
    const lu = iteration(y, c);
    if (!lu) return null;
    for (let it = 0; it < 10; it++) {
      F(y, fWork);
      for (let i = 0; i < n; i++) {
        let s = 0;
        for (let j = 0; j < n; j++) s += C[i * n + j] * (y[j] - aVec[j]);
        rWork[i] = c * fWork[i] + (extra ? extra[i] : 0) - s;
      }
      realSolve(lu, n, rWork, dy);
      let finite = true;
      for (let i = 0; i < n; i++) {
        y[i] += dy[i];
        finite &&= Number.isFinite(dy[i]);
      }
      if (!finite) return null;
      if (norm(dy) < 1e-3) return lu;
    }
    return null;
  };

  // The time scale of the loop: its slowest and fastest closed-loop poles.
  const slowest = Math.min(...poles.map((p) => -p.re));
  const fastest = Math.max(...poles.map((p) => Math.hypot(p.re, p.im)));
  // Start: the state at rest, then one implicit Euler step far shorter than any
  // time constant, which makes the nodes without capacitance consistent.
  let t = 1e-6 / fastest;
  const y = new Float64Array(n);
  if (!solveStage(y, new Float64Array(n), t, null) || !solveStage(y, new Float64Array(n), t, null)) return 'the first large-signal step did not converge';
  let h = 1e-3 / fastest;
  let steps = 0;
  let rejected = 0;
  let peakDrive = Math.abs(drive(y));
  let slewingUntil = peakDrive > 1 ? t : 0;
  let lastExit = 0;
  const lo = target - band * Math.abs(target);
  const hi = target + band * Math.abs(target);
  const fN = new Float64Array(n);
  const fG = new Float64Array(n);
  const f1 = new Float64Array(n);
  const yG = new Float64Array(n);
  const y1 = new Float64Array(n);
  const extra = new Float64Array(n);
  const aVec = new Float64Array(n);
  const est = new Float64Array(n);
  const d = new Float64Array(n);
  F(y, fN);
  // Far beyond any sensible settling: a slew over the whole step at the pair's
  // own current into the largest capacitance, plus many of the slowest time constants.
  let cMax = 0;
  for (let i = 0; i < n * n; i++) cMax = Math.max(cMax, Math.abs(C[i]));
  const horizon = 10 * ((cMax * Math.abs(outputStep)) / pair.tail) * (1 + 1 / beta) + (200 - Math.log(band)) / slowest;
  let checkAt = 0;
  while (t < horizon) {
    if (steps + rejected > 8_000) return 'the large-signal integration did not finish in 8,000 steps';
    // TR stage: M(y_γ − y_n) = (γh/2)·(F(y_n) + F(y_γ)).
    yG.set(y);
    for (let i = 0; i < n; i++) extra[i] = D * h * fN[i];
    if (!solveStage(yG, y, D * h, extra)) {
      h /= 4;
      rejected++;
      continue;
    }
    // BDF2 stage: M(y_{n+1} − a·y_γ + b·y_n) = d·h·F(y_{n+1}), started from the extrapolation.
    for (let i = 0; i < n; i++) {
      aVec[i] = BDF_A * yG[i] - BDF_B * y[i];
      y1[i] = yG[i] + (yG[i] - y[i]) * ((1 - GAMMA) / GAMMA);
    }
    const lu1 = solveStage(y1, aVec, D * h, null);
    if (!lu1) {
      h /= 4;
      rejected++;
      continue;
    }
    F(yG, fG);
    F(y1, f1);
    for (let i = 0; i < n; i++) est[i] = LTE_C * 2 * h * (fN[i] / GAMMA - fG[i] / (GAMMA * (1 - GAMMA)) + f1[i] / (1 - GAMMA));
    const err = norm(realSolve(lu1, n, est, dy));
    if (!(err <= 1)) {
      h *= Math.max(0.1, 0.9 * Math.cbrt(1 / (Number.isFinite(err) ? err : 1e9)));
      rejected++;
      continue;
    }
    // Accepted: band exits on the quadratic through the three points, slewing, peak drive.
    const t0 = t;
    const tG = t + GAMMA * h;
    const t1 = t + h;
    lastExit = Math.max(lastExit, lastCrossing(t0, tG, t1, y[out], yG[out], y1[out], lo, hi));
    const d0 = Math.abs(drive(y));
    const dG = Math.abs(drive(yG));
    const d1 = Math.abs(drive(y1));
    peakDrive = Math.max(peakDrive, dG, d1);
    if (d1 > 1) slewingUntil = t1;
    else if (dG > 1) slewingUntil = tG + ((dG - 1) / (dG - d1)) * (t1 - tG);
    else if (d0 > 1) slewingUntil = t0 + ((d0 - 1) / (d0 - dG)) * (tG - t0);
    for (let i = 0; i < n; i++) scale[i] = Math.max(scale[i], Math.abs(y1[i]), Math.abs(yG[i]));
    y.set(y1);
    t = t1;
    fN.set(f1);
    steps++;
    h *= Math.min(4, 0.9 * Math.cbrt(1 / Math.max(err, 1e-9)));
    // Back in the linear range for good? The deviation's modes bound v_id from here on.
    if (d1 < LINEAR_DRIVE && steps >= checkAt) {
      checkAt = steps + 8;
      for (let i = 0; i < n; i++) d[i] = y[i] - yFinal[i];
      const tail = basis.response(d, out, Math.abs(target));
      const vidFinal = u - beta * target;
      if ((Math.abs(vidFinal) + beta * Math.abs(target) * tail.envelope(0)) / k < LINEAR_DRIVE && basis.residual(d) < 1e-6) {
        const lin = settlingTime(tail, band);
        if (!lin) return 'the linear settling after the slewing rings for more periods than polecheck resolves';
        const settling = lin.crossings > 0 ? t + lin.t : lastExit;
        return { settlingTime: settling, slewingUntil, peakDrive, linearFrom: t, steps, rejected };
      }
    }
  }
  return 'the large-signal response did not return to its linear range in the time it should have settled';
}

/** The last time in (t0, t2] where the quadratic through (t0, y0), (t1, y1), (t2, y2) takes level lo or hi; 0 if none. */
function lastCrossing(t0: number, t1: number, t2: number, y0: number, y1: number, y2: number, lo: number, hi: number): number {
  // Newton form in s = t − t0: y(s) = y0 + d01·s + c2·s·(s − s1) = y0 + b·s + c2·s².
  const s1 = t1 - t0;
  const s2 = t2 - t0;
  const d01 = (y1 - y0) / s1;
  const d12 = (y2 - y1) / (s2 - s1);
  const c2 = (d12 - d01) / s2;
  const b = d01 - c2 * s1;
  let last = 0;
  const take = (r: number) => {
    if (r > 0 && r <= s2) last = Math.max(last, t0 + r);
  };
  for (const level of [lo, hi]) {
    const c = y0 - level;
    if (Math.abs(c2) * s2 * s2 < 1e-14 * (Math.abs(b) * s2 + Math.abs(c))) {
      if (b !== 0) take(-c / b);
      continue;
    }
    const disc = b * b - 4 * c2 * c;
    if (disc < 0) continue;
    const q = -0.5 * (b + Math.sign(b || 1) * Math.sqrt(disc));
    take(q / c2);
    if (q !== 0) take(c / q);
  }
  return last;
}
