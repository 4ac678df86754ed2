// Exact small-signal analysis of a network: poles, zeros, DC gain, frequency
// response with a continuous phase, unity-gain frequency, and of the loop
// gain β·A its crossovers, phase margin, gain margin and closed-loop poles.

import { type Figure, figure, missing, unboundedMargin } from './figure';
import { complexLU, complexSolve, realLU, realSolve } from './linalg';
import { GROUND, type Network, NetworkError, type Stamped, stamp } from './network';
import { type PencilPolynomial, hurwitzStable, pencilPolynomial } from './poly';
import { type Root, SingularPencilError, findRoots, rootHz } from './roots';

const TWO_PI = 2 * Math.PI;
const DEG = 180 / Math.PI;

export interface Response {
  re: number;
  im: number;
  /** |H| in dB. */
  magDb: number;
  /** Phase in degrees, followed continuously from DC (0° for H(0) > 0, −180° for H(0) < 0). */
  phaseDeg: number;
}

export interface NetworkAnalysis {
  stamped: Stamped;
  /** Poles and zeros in rad/s, ascending magnitude. */
  poles: Root[];
  zeros: Root[];
  /** Whether Newton refinement converged for every root. */
  rootsPolished: boolean;
  /** H(0) in V/V, signed. */
  dcGain: number;
  /** H(j·2πf), with continuous phase. */
  at(fHz: number): Response;
  /** Lowest and highest frequency (Hz) worth searching. */
  searchRange: [number, number];
  /** H from its roots, when that agrees with the nodal solve; null otherwise (the loop is then swept). */
  factored: FactoredResponse | null;
  /**
   * det(G + sC) and the bordered determinant (= det(G + sC)·H(s)), expanded,
   * for networks of a few nodes: the closed loop's determinant is their sum
   * det(G + sC)·(1 + βH(s)), with no further expansion.
   */
  polynomials: { denominator: PencilPolynomial; numerator: PencilPolynomial } | null;
}

export function analyzeNetwork(net: Network): NetworkAnalysis {
  const st = stamp(net);
  const { n, G, C, gIn, cIn, out } = st;
  // Equilibrated first (rows, then columns, scaled to unit maxima), so that a
  // chain of stages at very different impedance levels is not mistaken for a
  // singular matrix by the pivot-ratio test (which then measures conditioning,
  // not units).
  const { scaled, rowScale, colScale } = equilibrate(G, n);
  const yDc = solveUnlessSingular(scaled, n, Array.from(gIn, (v, i) => -v * rowScale[i]));
  if (!yDc) throw new NetworkError('the network has a node without a DC path to ground (conductance matrix is singular)');
  const dcGain = yDc[out] * colScale[out];

  const roots = (A: Float64Array, B: Float64Array, size: number, poly: PencilPolynomial | null) => {
    try {
      return findRoots(A, B, size, poly);
    } catch (err) {
      if (err instanceof SingularPencilError) throw new NetworkError(`the network cannot be solved: ${err.message} (values outside what double precision resolves?)`);
      throw err;
    }
  };
  const denominator = pencilPolynomial(G, C, n);
  const { roots: poles, polished: polesPolished } = roots(G, C, n, denominator);
  // Zeros: roots of the bordered pencil [[G + sC, gIn + s·cIn], [e_outᵀ, 0]],
  // whose determinant is, up to sign, the numerator of H(s) (Cramer's rule).
  const m = n + 1;
  const Ga = new Float64Array(m * m);
  const Ca = new Float64Array(m * m);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      Ga[i * m + j] = G[i * n + j];
      Ca[i * m + j] = C[i * n + j];
    }
    Ga[i * m + n] = gIn[i];
    Ca[i * m + n] = cIn[i];
  }
  Ga[n * m + out] = 1;
  const numerator = pencilPolynomial(Ga, Ca, m);
  const { roots: zeros, polished: zerosPolished } = roots(Ga, Ca, m, numerator);

  const re = new Float64Array(n * n);
  const im = new Float64Array(n * n);
  const br = new Float64Array(n);
  const bi = new Float64Array(n);
  const xr = new Float64Array(n);
  const xi = new Float64Array(n);
  /** H(jω) by a nodal solve: the reference every shortcut is checked against. */
  const direct = (w: number): [number, number] => {
    for (let i = 0; i < n * n; i++) {
      re[i] = G[i];
      im[i] = w * C[i];
    }
    for (let i = 0; i < n; i++) {
      br[i] = -gIn[i];
      bi[i] = -w * cIn[i];
    }
    const lu = complexLU(re, im, n);
    complexSolve(lu, br, bi, xr, xi);
    return [xr[out], xi[out]];
  };

  let wMin = Infinity;
  let wMax = 0;
  for (const list of [poles, zeros]) {
    for (const r of list) {
      const size = Math.hypot(r.re, r.im);
      if (size > 0) {
        wMin = Math.min(wMin, size);
        wMax = Math.max(wMax, size);
      }
    }
  }
  const anyRoot = wMax > 0;
  if (!anyRoot) wMin = wMax = 1;
  const wLo = anyRoot ? wMin * 1e-3 : 1;
  const wHi = anyRoot ? wMax * 1e3 : 1e12;
  const factored = factorResponse(poles, zeros, dcGain, direct, wMin, wMax);
  // Constant part of the phase: 0 or ±π, read once near DC, when first needed.
  let phase0: number | undefined;
  const at = (fHz: number): Response => {
    if (phase0 === undefined) {
      const [r0, i0] = direct(wLo);
      const k = Math.round((Math.atan2(i0, r0) - rootsPhase(zeros, poles, wLo)) / Math.PI);
      phase0 = k % 2 === 0 ? 0 : -Math.PI;
    }
    const w = TWO_PI * fHz;
    const [hr, hi] = w === 0 ? [dcGain, 0] : direct(w);
    const base = phase0 + rootsPhase(zeros, poles, w);
    const diff = Math.atan2(hi, hr) - base;
    const wrapped = diff - TWO_PI * Math.round(diff / TWO_PI);
    return { re: hr, im: hi, magDb: 20 * Math.log10(Math.hypot(hr, hi)), phaseDeg: (base + wrapped) * DEG };
  };

  return {
    stamped: st,
    poles,
    zeros,
    rootsPolished: polesPolished && zerosPolished,
    dcGain,
    at,
    searchRange: [wLo / TWO_PI, wHi / TWO_PI],
    factored,
    polynomials: denominator && numerator ? { denominator, numerator } : null,
  };
}

/**
 * Solves A·x = b by Gaussian elimination with partial pivoting (Golub & Van
 * Loan, "Matrix Computations", §3.4), or returns null when A is singular. The
 * test is on cancellation, not on the spread of the pivots: a pivot that is
 * exactly zero, or that elimination cancelled to round-off of the terms that
 * formed it, means no unique solution. A chain of gain stages has pivots
 * decades apart and a huge condition number, yet its solution is exact.
 */
function solveUnlessSingular(A: Float64Array, n: number, b: number[]): number[] | null {
  const a = A.slice();
  const size = new Float64Array(n * n);
  for (let i = 0; i < n * n; i++) size[i] = Math.abs(a[i]);
  const x = b.slice();
  for (let k = 0; k < n; k++) {
    let p = k;
    for (let i = k + 1; i < n; i++) if (Math.abs(a[i * n + k]) > Math.abs(a[p * n + k])) p = i;
    const pivot = a[p * n + k];
    if (pivot === 0 || !Number.isFinite(pivot) || Math.abs(pivot) < 1e-13 * size[p * n + k]) return null;
    if (p !== k) {
      for (let j = 0; j < n; j++) {
        [a[k * n + j], a[p * n + j]] = [a[p * n + j], a[k * n + j]];
        [size[k * n + j], size[p * n + j]] = [size[p * n + j], size[k * n + j]];
      }
      [x[k], x[p]] = [x[p], x[k]];
    }
    for (let i = k + 1; i < n; i++) {
      const l = a[i * n + k] / pivot;
      if (l === 0) continue;
      for (let j = k + 1; j < n; j++) {
        const t = l * a[k * n + j];
        a[i * n + j] -= t;
        size[i * n + j] = Math.max(size[i * n + j], Math.abs(t));
      }
      x[i] -= l * x[k];
    }
  }
  for (let i = n - 1; i >= 0; i--) {
    let sum = x[i];
    for (let j = i + 1; j < n; j++) sum -= a[i * n + j] * x[j];
    x[i] = sum / a[i * n + i];
  }
  return x.every(Number.isFinite) ? x : null;
}

/** D_r·G·D_c with row and then column maxima 1 (powers of two, so the scaling is exact). */
function equilibrate(G: Float64Array, n: number): { scaled: Float64Array; rowScale: Float64Array; colScale: Float64Array } {
  const scaled = G.slice();
  const rowScale = new Float64Array(n).fill(1);
  const colScale = new Float64Array(n).fill(1);
  const pow2 = (x: number): number => (x > 0 && Number.isFinite(x) ? 2 ** -Math.round(Math.log2(x)) : 1);
  for (let i = 0; i < n; i++) {
    let m = 0;
    for (let j = 0; j < n; j++) m = Math.max(m, Math.abs(scaled[i * n + j]));
    rowScale[i] = pow2(m);
    for (let j = 0; j < n; j++) scaled[i * n + j] *= rowScale[i];
  }
  for (let j = 0; j < n; j++) {
    let m = 0;
    for (let i = 0; i < n; i++) m = Math.max(m, Math.abs(scaled[i * n + j]));
    colScale[j] = pow2(m);
    for (let i = 0; i < n; i++) scaled[i * n + j] *= colScale[j];
  }
  return { scaled, rowScale, colScale };
}

// Phase as a sum of per-root terms arg(1 − jω/r): each is continuous in ω
// for a root off the imaginary axis, so the sum needs no unwrapping.
function rootPhase(roots: Root[], w: number): number {
  let sum = 0;
  for (const r of roots) {
    const m2 = r.re * r.re + r.im * r.im;
    if (m2 === 0) sum += Math.PI / 2;
    else sum += Math.atan2((-w * r.re) / m2, 1 - (w * r.im) / m2);
  }
  return sum;
}
const rootsPhase = (zeros: Root[], poles: Root[], w: number): number => rootPhase(zeros, w) - rootPhase(poles, w);

/**
 * H(jω) from its roots: H(s) = K·s^k·Π(1 − s/z)/Π(1 − s/p), with K real.
 * Log-magnitude and continuous phase cost a few flops per root and allocate
 * nothing, and each has a bound on its slope over any band, so a level
 * crossing can be excluded between two samples instead of searched for on a
 * dense grid.
 */
export class FactoredResponse {
  /** Per root: re, im, |r|², and +1 for a zero, −1 for a pole. */
  readonly re: Float64Array;
  readonly im: Float64Array;
  readonly m2: Float64Array;
  readonly sign: Float64Array;
  /** Zeros exactly at the origin (the factor s^k). */
  readonly originZeros: number;
  /** ln|K| and the constant phase: 0 for K > 0, −π for K < 0. */
  readonly lnGain: number;
  readonly phase0: number;
  /** Net count of finite zeros minus poles (the slope of ln|H| per ln ω far above every root). */
  readonly highSlope: number;
  /** ln ω of the smallest and largest nonzero root. */
  readonly lnMin: number;
  readonly lnMax: number;

  constructor(poles: Root[], zeros: Root[], gain: number) {
    let count = poles.length;
    for (const z of zeros) if (z.re !== 0 || z.im !== 0) count++;
    this.re = new Float64Array(count);
    this.im = new Float64Array(count);
    this.m2 = new Float64Array(count);
    this.sign = new Float64Array(count);
    let lnMin = Infinity;
    let lnMax = -Infinity;
    let i = 0;
    const put = (r: Root, sign: number): void => {
      this.re[i] = r.re;
      this.im[i] = r.im;
      this.m2[i] = r.re * r.re + r.im * r.im;
      this.sign[i] = sign;
      const ln = 0.5 * Math.log(this.m2[i]);
      if (ln < lnMin) lnMin = ln;
      if (ln > lnMax) lnMax = ln;
      i++;
    };
    for (const z of zeros) if (z.re !== 0 || z.im !== 0) put(z, 1);
    for (const p of poles) put(p, -1);
    this.originZeros = zeros.length - (count - poles.length);
    this.lnGain = Math.log(Math.abs(gain));
    this.phase0 = gain < 0 ? -Math.PI : 0;
    this.highSlope = zeros.length - poles.length;
    this.lnMin = Number.isFinite(lnMin) ? lnMin : 0;
    this.lnMax = Number.isFinite(lnMax) ? lnMax : 0;
  }

  /** ln|H(jω)|. */
  lnMag(w: number): number {
    let sum = this.lnGain + (this.originZeros ? this.originZeros * Math.log(w) : 0);
    const { re, im, m2, sign } = this;
    for (let i = 0; i < re.length; i++) {
      // |1 − jω/r|² = (a² + (b − ω)²)/|r|² = 1 + ω(ω − 2b)/|r|²; log1p keeps
      // the low-frequency end exact, the direct form the resonant notch.
      const x = (w * (w - 2 * im[i])) / m2[i];
      const u = im[i] - w;
      const t = x > -0.5 ? Math.log1p(x) : Math.log((re[i] * re[i] + u * u) / m2[i]);
      sum += 0.5 * sign[i] * t;
    }
    return sum;
  }

  /** ∠H(jω) in radians, continuous from DC. */
  phase(w: number): number {
    let sum = this.phase0 + (this.originZeros * Math.PI) / 2;
    const { re, im, m2, sign } = this;
    for (let i = 0; i < re.length; i++) sum += sign[i] * Math.atan2((-w * re[i]) / m2[i], 1 - (w * im[i]) / m2[i]);
    return sum;
  }

  /** An upper bound of |d ln|H| / d ln ω| over [w0, w1]. */
  magSlopeBound(w0: number, w1: number): number {
    let bound = this.originZeros;
    const { re, im, m2 } = this;
    for (let i = 0; i < re.length; i++) {
      const a = Math.abs(re[i]);
      const b = im[i];
      if (b === 0) {
        // ω²/(a² + ω²), increasing in ω.
        bound += (w1 * w1) / (m2[i] + w1 * w1);
        continue;
      }
      // ω(ω − b)/(a² + (ω − b)²): at most 1 + |b|/2a and ω/2a; far from ω = b,
      // at most ω·d/(a² + d²) with d the distance to b.
      let t = Math.min(1 + Math.abs(b) / (2 * a), w1 / (2 * a));
      const d = b >= w0 && b <= w1 ? 0 : Math.min(Math.abs(w0 - b), Math.abs(w1 - b));
      if (d >= a) t = Math.min(t, (w1 * d) / (a * a + d * d));
      bound += t;
    }
    return bound;
  }

  /** An upper bound of |d∠H / d ln ω| over [w0, w1]. */
  phaseSlopeBound(w0: number, w1: number): number {
    let bound = 0;
    const { re, im } = this;
    for (let i = 0; i < re.length; i++) {
      const a = Math.abs(re[i]);
      const b = im[i];
      // ω·a/(a² + (ω − b)²)
      if (b === 0) {
        // Peaks at 1/2 at ω = a; monotone on either side.
        bound += w1 < a ? (w1 * a) / (a * a + w1 * w1) : w0 > a ? (w0 * a) / (a * a + w0 * w0) : 0.5;
        continue;
      }
      const d = b >= w0 && b <= w1 ? 0 : Math.min(Math.abs(w0 - b), Math.abs(w1 - b));
      bound += Math.min(Math.abs(b) / a + 0.5, (w1 * a) / (a * a + d * d));
    }
    return bound;
  }

  /** ln ω of the places where the response turns: each root's magnitude, a resonance's half-power points. */
  breaks(): number[] {
    const out: number[] = [];
    const { re, im, m2 } = this;
    for (let i = 0; i < re.length; i++) {
      const w = Math.sqrt(m2[i]);
      out.push(Math.log(w));
      if (im[i] !== 0) {
        const a = Math.abs(re[i]);
        out.push(Math.log(Math.max(w - a, w / 2)), Math.log(w + a));
      }
    }
    return out;
  }
}

/**
 * The factored form of H, or null when it does not reproduce the nodal solve
 * (a root lost or spurious, an ill-conditioned network): the caller then
 * sweeps the nodal response instead.
 */
function factorResponse(poles: Root[], zeros: Root[], dcGain: number, direct: (w: number) => [number, number], wMin: number, wMax: number): FactoredResponse | null {
  const origin = zeros.filter((z) => z.re === 0 && z.im === 0).length;
  let gain = dcGain;
  const wRef = Math.sqrt(wMin * wMax);
  if (origin > 0 || dcGain === 0) {
    const unit = new FactoredResponse(poles, zeros, 1);
    const [hr, hi] = direct(wRef);
    const mag = Math.exp(Math.log(Math.hypot(hr, hi)) - unit.lnMag(wRef));
    const rel = Math.atan2(hi, hr) - unit.phase(wRef);
    const cos = Math.cos(rel);
    // K is real: the phase left over must be 0 or π.
    if (!(Math.abs(Math.sin(rel)) < 1e-7) || !(mag > 0) || !Number.isFinite(mag)) return null;
    gain = cos > 0 ? mag : -mag;
  }
  if (!(gain !== 0) || !Number.isFinite(gain)) return null;
  const f = new FactoredResponse(poles, zeros, gain);
  // Two checks: between the roots, and above the highest one, where a lost or
  // spurious root would show most.
  if (!agrees(f, direct, wRef) || !agrees(f, direct, wMax * 2.9)) return null;
  return f;
}

/** The factored form against the nodal solve at one frequency. */
function agrees(f: FactoredResponse, direct: (w: number) => [number, number], w: number): boolean {
  const [hr, hi] = direct(w);
  const lnMag = Math.log(Math.hypot(hr, hi));
  if (!Number.isFinite(lnMag)) return false;
  const dPhase = Math.atan2(hi, hr) - f.phase(w);
  const wrapped = dPhase - TWO_PI * Math.round(dPhase / TWO_PI);
  return Math.abs(lnMag - f.lnMag(w)) <= 1e-7 && Math.abs(wrapped) <= 1e-7;
}

/** A log-spaced frequency grid (plus points around every root) with the response at each point. */
interface Sweep {
  f: number[];
  magDb: number[];
  phaseDeg: number[];
}

function sweep(a: NetworkAnalysis, lo: number, hi: number, extra: number[]): Sweep {
  const perDecade = 32;
  const decades = Math.log10(hi / lo);
  const count = Math.max(2, Math.ceil(decades * perDecade));
  const f: number[] = [];
  for (let i = 0; i <= count; i++) f.push(lo * 10 ** ((decades * i) / count));
  for (const x of extra) if (x > lo && x < hi) f.push(x * 0.999, x, x * 1.001);
  f.sort((x, y) => x - y);
  const magDb: number[] = [];
  const phaseDeg: number[] = [];
  for (const x of f) {
    const r = a.at(x);
    // A response that cannot be evaluated (round-off swamps an ill-conditioned
    // network) has no crossings to speak of: say so instead of reporting noise.
    if (Number.isNaN(r.magDb) || Number.isNaN(r.phaseDeg)) {
      throw new NetworkError('the frequency response cannot be evaluated at these values: the network is too ill-conditioned for double precision');
    }
    magDb.push(r.magDb);
    phaseDeg.push(r.phaseDeg);
  }
  return { f, magDb, phaseDeg };
}

/**
 * Root of g(x) in [a, b], bracketed by ga, gb of opposite signs: regula falsi
 * with the Illinois modification, which keeps the bracket of bisection and
 * converges superlinearly (M. Dowell, P. Jarratt, "A modified regula falsi
 * method for computing the root of an equation", BIT 11 (1971) 168–174).
 */
function refine(g: (x: number) => number, a: number, b: number, ga: number, gb: number): number {
  // Invariant: ga and gb have opposite signs; a and b need not be ordered.
  for (let it = 0; it < 100; it++) {
    const lo = Math.min(a, b);
    const hi = Math.max(a, b);
    if (hi - lo <= 1e-14 * Math.max(1, Math.abs(lo))) break;
    let x = b - (gb * (b - a)) / (gb - ga);
    if (!(x > lo && x < hi)) x = 0.5 * (lo + hi);
    const gx = g(x);
    if (gx === 0) return x;
    if (gx * gb < 0) {
      a = b;
      ga = gb;
    } else {
      ga /= 2; // Illinois: the retained end's value is halved
    }
    b = x;
    gb = gx;
  }
  return b;
}

/**
 * Frequencies (Hz) where g(f) = values − target changes sign on the sweep,
 * each refined in log f on the exact response.
 */
function signChanges(s: Sweep, values: number[], target: number, g: (fHz: number) => number): number[] {
  const gx = (x: number): number => g(Math.exp(x)) - target;
  const found: number[] = [];
  let last = -1;
  for (let i = 0; i < s.f.length; i++) {
    const gi = values[i] - target;
    if (!(Math.abs(gi) >= NOISE_DB)) continue;
    if (last >= 0) {
      const gl = values[last] - target;
      if (gl * gi < 0) found.push(Math.exp(refine(gx, Math.log(s.f[last]), Math.log(s.f[i]), gl, gi)));
    }
    last = i;
  }
  return found;
}

// Values within round-off of a level (a response that only touches it, or
// sits on it over a band) carry no sign; a crossing is a change of sign
// between two values clear of that noise.
const NOISE_DB = 1e-7;
const NOISE_NEPER = NOISE_DB / (20 / Math.LN10);
const NOISE_SIN = 1e-9;
/** Samples one level search may take before it gives up on the bounds (a few hundred is usual for a resonant network). */
const SAMPLE_BUDGET = 20000;

/**
 * Every x (= ln ω) where g changes sign, on a continuous g whose slope is
 * bounded on any band by `bound`: starting from the break points, a band
 * whose ends are on the same side of the level and farther from it than the
 * slope can travel holds no crossing; any other band is halved. So no
 * crossing is missed between samples, however narrow a resonance, and a
 * smooth response costs a few samples per root.
 */
function crossingsOf(g: (x: number) => number, bound: (w0: number, w1: number) => number, grid: number[], noise: number): number[] | null {
  const sx: number[] = [];
  const sg: number[] = [];
  let spoilt = false;
  const fill = (x0: number, g0: number, x1: number, g1: number, depth: number): void => {
    const clear0 = Math.abs(g0) >= noise;
    const clear1 = Math.abs(g1) >= noise;
    if (clear0 && clear1 && g0 * g1 < 0) return; // a crossing is bracketed
    if (depth >= 48 || x1 - x0 < 1e-10 || spoilt) return;
    // A response that is not a number, or a search that keeps halving, is not
    // one the bounds describe: the caller sweeps the nodal response instead.
    if (Number.isNaN(g0) || Number.isNaN(g1) || sx.length > SAMPLE_BUDGET) {
      spoilt = true;
      return;
    }
    if (g0 * g1 > 0 && Math.abs(g0) + Math.abs(g1) > bound(Math.exp(x0), Math.exp(x1)) * (x1 - x0)) return;
    const xm = 0.5 * (x0 + x1);
    const gm = g(xm);
    fill(x0, g0, xm, gm, depth + 1);
    sx.push(xm);
    sg.push(gm);
    fill(xm, gm, x1, g1, depth + 1);
  };
  let g0 = g(grid[0]);
  sx.push(grid[0]);
  sg.push(g0);
  for (let i = 1; i < grid.length; i++) {
    const g1 = g(grid[i]);
    fill(grid[i - 1], g0, grid[i], g1, 0);
    sx.push(grid[i]);
    sg.push(g1);
    g0 = g1;
  }
  if (spoilt) return null;
  const found: number[] = [];
  let last = -1;
  for (let i = 0; i < sx.length; i++) {
    if (!(Math.abs(sg[i]) >= noise)) continue;
    if (last >= 0 && sg[last] * sg[i] < 0) found.push(refine(g, sx[last], sx[i], sg[last], sg[i]));
    last = i;
  }
  return found;
}

export type Stability = 'stable' | 'unstable' | 'unknown';

export interface LoopAnalysis {
  beta: number;
  /** −3 dB frequency of A(jω) relative to its DC value. */
  bandwidth: Figure;
  /** Unity-gain frequency of A(jω) itself. */
  unityGain: Figure;
  /** Frequencies where |β·A| = 1. */
  crossoversHz: number[];
  /** 180° + ∠βA at each crossover, within ±180° (the margin each would give a stable loop). */
  crossoverMarginsDeg: number[];
  /** Frequencies where β·A(jω) is real and negative (∠βA ≡ −180°), with 20·log10|βA| there; ω = 0 included when βA(0) < 0. */
  phaseCrossings: Array<{ fHz: number; loopDb: number }>;
  phaseMargin: Figure;
  gainMargin: Figure;
  /** Poles of the closed loop A/(1 + βA), rad/s (empty when they could not be computed). */
  closedLoopPoles: Root[];
  /** From the closed-loop poles; 'unknown' when they could not be computed. */
  stability: Stability;
  /** stability === 'stable'. */
  stable: boolean;
}

const fmtHz = (f: number): string => `${f.toPrecision(4)} Hz`;
/** Two decimals without a negative zero (`-0.00`). */
const fixed2 = (x: number): string => (!Number.isFinite(x) ? 'none: zero gain' : Math.abs(x) < 0.005 ? '0.00' : x.toFixed(2));
/** An angle into (−180°, 180°]. */
export const wrapDeg = (x: number): number => x - 360 * Math.ceil((x - 180) / 360);

const UNITY_HOW = '|A(jω)| = 1 searched on the exact response';
const BW_HOW = '|A(j2πf)| = |A(0)|/√2 solved on the exact response';
const PM_HOW = 'PM = 180° + ∠βA(j2πf_c) at |βA(j2πf_c)| = 1, the angle taken within ±180°';
const GM_HOW = 'GM = −20·log10|βA(j2πf_180)| where ∠βA = −180° and |βA| < 1 (the gain-increase margin)';

function unityFigure(crossings: number[], dcDb: number, how: string): Figure {
  if (dcDb <= 0 && crossings.length === 0) return missing('Hz', 'frequency-search', UNITY_HOW, `|A| stays below 1 (DC gain ${fixed2(dcDb)} dB): no unity-gain frequency`);
  if (crossings.length === 0) return missing('Hz', 'frequency-search', UNITY_HOW, '|A| stays above 1 at every frequency searched');
  const notes = crossings.length > 1 ? [`|A| crosses 1 at ${crossings.length} frequencies (${crossings.map(fmtHz).join(', ')}); the first is reported`] : undefined;
  return figure(crossings[0], 'Hz', 'frequency-search', how, notes);
}

function bandwidthFigure(crossings: number[], dcDb: number): Figure {
  return crossings.length
    ? figure(crossings[0], 'Hz', 'frequency-search', BW_HOW, crossings.length > 1 ? [`|A| crosses the −3 dB level ${crossings.length} times; the first is reported`] : undefined)
    : missing('Hz', 'frequency-search', BW_HOW, Number.isFinite(dcDb) ? '|A| never falls 3 dB below its DC value' : 'the DC gain is zero');
}

const polesText = (poles: Root[]): string =>
  poles.map((p) => `${(Math.hypot(p.re, p.im) / TWO_PI).toPrecision(4)} Hz${p.im !== 0 ? ` (Re ${(p.re / TWO_PI).toPrecision(3)} Hz)` : ''}`).join(', ');

/**
 * Phase and gain margins as the trade defines them, valid only for a loop
 * whose closed-loop poles are all in the left half-plane:
 * - phase margin: at each crossover |βA| = 1, 180° + ∠βA taken within ±180°
 *   (the angle by which βA misses −1); the smallest over all crossovers;
 * - gain margin: at each frequency where βA is real and negative, the gain
 *   factor 1/|βA| that puts a closed-loop pole on the jω axis. Factors above 1
 *   are gain-increase margins and the smallest is the gain margin; factors
 *   below 1 (|βA| > 1 there) are gain-reduction margins of a conditionally
 *   stable loop, reported as a note. Unbounded only when no gain increase
 *   reaches −1 and the loop is stable.
 * An unstable or undecided closed loop has no margins: the figures say why.
 */
function phaseMarginFigure(crossings: Array<{ fHz: number; phaseDeg: number }>, loopDcDb: number, stability: Stability, closedLoopPoles: () => Root[]): Figure {
  if (crossings.length === 0) {
    const none = loopDcDb < 0
      ? missing('deg', 'frequency-search', PM_HOW, `|βA| stays below 1 (loop gain at DC ${fixed2(loopDcDb)} dB): no crossover, so no phase margin`)
      : missing('deg', 'frequency-search', PM_HOW, '|βA| stays above 1 at every frequency searched: no crossover');
    return stability === 'stable' ? none : withoutMargin(none, stability, closedLoopPoles, '°');
  }
  const margins = crossings.map((c) => wrapDeg(180 + c.phaseDeg));
  let worst = 0;
  for (let i = 1; i < margins.length; i++) if (margins[i] < margins[worst]) worst = i;
  const notes = crossings.length > 1 ? [`|βA| crosses 1 at ${crossings.length} frequencies (${crossings.map((c, i) => `${fmtHz(c.fHz)}: ${margins[i].toFixed(1)}°`).join(', ')}); the worst margin is reported`] : undefined;
  const fc = crossings[worst].fHz;
  const pm = lazyHow(figure(margins[worst], 'deg', 'frequency-search', PM_HOW, notes), () => `${PM_HOW}; f_c = ${fmtHz(fc)}`);
  return stability === 'stable' ? pm : withoutMargin(pm, stability, closedLoopPoles, '°');
}

function gainMarginFigure(phaseCrossings: Array<{ fHz: number; loopDb: number }>, stability: Stability, closedLoopPoles: () => Root[]): Figure {
  const increase = phaseCrossings.filter((c) => c.loopDb < 0);
  const reduction = phaseCrossings.filter((c) => c.loopDb >= 0);
  const notes: string[] = [];
  if (reduction.length) {
    let r = reduction[0];
    for (const c of reduction) if (c.loopDb < r.loopDb) r = c;
    notes.push(`conditionally stable: reducing the loop gain by ${r.loopDb.toFixed(1)} dB puts a closed-loop pole on the jω axis at ${r.fHz === 0 ? 'DC' : fmtHz(r.fHz)} (the gain-reduction margin)`);
  }
  let gm: Figure;
  if (increase.length === 0) {
    const reason = phaseCrossings.length === 0
      ? 'the phase of βA never reaches −180°: the gain margin is unbounded'
      : 'βA reaches −180° only where |βA| > 1: no increase of the loop gain makes the loop unstable, the gain margin is unbounded';
    gm = unboundedMargin('dB', 'frequency-search', GM_HOW, reason, notes);
  } else {
    let worst = increase[0];
    for (const c of increase) if (c.loopDb > worst.loopDb) worst = c;
    if (increase.length > 1) notes.push(`the phase reaches −180° at ${increase.length} frequencies where |βA| < 1; the worst margin is reported`);
    gm = figure(-worst.loopDb, 'dB', 'frequency-search', `${GM_HOW}; f_180 = ${worst.fHz === 0 ? 'DC' : fmtHz(worst.fHz)}`, notes);
  }
  return stability === 'stable' ? gm : withoutMargin(gm, stability, closedLoopPoles, ' dB');
}

/** The figure with its derivation text written when first read. */
function lazyHow(f: Figure, how: () => string): Figure {
  let text: string | undefined;
  Object.defineProperty(f, 'how', { get: () => (text ??= how()), enumerable: true, configurable: true });
  return f;
}

/** A margin of a loop that is not known to be stable: no value, and why. */
function withoutMargin(f: Figure, stability: Stability, closedLoopPoles: () => Root[], unit: string): Figure {
  const why = stability === 'unstable'
    ? `the closed loop is unstable (closed-loop poles in the right half-plane: ${polesText(closedLoopPoles().filter((p) => !(p.re < 1e-12 * Math.hypot(p.re, p.im))))}), so it has no margin`
    : 'the closed-loop poles could not be computed, so the stability of the loop and its margins are not known';
  const would = f.value !== null ? [`the margin read off the open loop would be ${f.value.toFixed(1)}${unit}, which means nothing for an unstable loop`] : [];
  const out = missing(f.unit, f.method, f.how, why, [...would, ...(f.notes ?? [])]);
  if (f.value !== null) out.openLoop = f.value;
  return out;
}

/** D(s) + β·N(s), with the cancellation the sum adds. */
function combine(d: PencilPolynomial, num: PencilPolynomial, beta: number): PencilPolynomial {
  let len = Math.max(d.coef.length, num.coef.length);
  const coef = new Float64Array(len);
  const scale = new Float64Array(len);
  for (let k = 0; k < len; k++) {
    coef[k] = (d.coef[k] ?? 0) + beta * (num.coef[k] ?? 0);
    scale[k] = (d.scale[k] ?? 0) + beta * (num.scale[k] ?? 0);
  }
  while (len > 0 && coef[len - 1] === 0 && scale[len - 1] === 0) len--;
  const kept = new Float64Array(len);
  for (let k = 0; k < len; k++) kept[k] = scale[k] === 0 ? 1 : Math.abs(coef[k]) / scale[k];
  return { coef: coef.slice(0, len), kept, scale: scale.slice(0, len) };
}

/** Closed loop with the input driven by vin − β·vout. */
/**
 * The closed loop's stability without its poles, where the Routh array of
 * D(s) + β·N(s) decides it safely (a small network whose expansion kept its
 * digits); undefined where the poles are needed to decide.
 */
function quickStability(a: NetworkAnalysis, beta: number): Stability | undefined {
  if (!a.polynomials) return undefined;
  const p = combine(a.polynomials.denominator, a.polynomials.numerator, beta);
  let kept = 1;
  for (let k = 0; k < p.kept.length; k++) kept = Math.min(kept, p.kept[k]);
  if (kept < 1e-3) return undefined;
  const stable = hurwitzStable(p.coef);
  return stable === null ? undefined : stable ? 'stable' : 'unstable';
}

function closedLoop(a: NetworkAnalysis, beta: number): { poles: Root[]; stability: Stability } {
  // (G − β·gIn·e_outᵀ + s(C − β·cIn·e_outᵀ))·V = −(gIn + s·cIn)·vin.
  const { n, G, C, gIn, cIn, out } = a.stamped;
  const Gc = G.slice();
  const Cc = C.slice();
  for (let i = 0; i < n; i++) {
    Gc[i * n + out] -= beta * gIn[i];
    Cc[i * n + out] -= beta * cIn[i];
  }
  let poles: Root[];
  try {
    poles = findRoots(Gc, Cc, n, a.polynomials ? combine(a.polynomials.denominator, a.polynomials.numerator, beta) : undefined).roots;
  } catch {
    return { poles: [], stability: 'unknown' };
  }
  if (poles.some((p) => !Number.isFinite(p.re) || !Number.isFinite(p.im))) return { poles: [], stability: 'unknown' };
  const stable = poles.every((p) => p.re < 1e-12 * Math.hypot(p.re, p.im));
  return { poles, stability: stable ? 'stable' : 'unstable' };
}

export function analyzeLoop(a: NetworkAnalysis, beta: number): LoopAnalysis {
  return a.factored ? new FactoredLoop(a, a.factored, beta) : sweptLoop(a, beta);
}

/**
 * The loop from the factored response: each figure is computed when first
 * asked for, so a solver that needs the phase margin pays for nothing else.
 */
type Memo = 'unity' | 'bw' | 'cross' | 'phaseX' | 'pm' | 'gm' | 'closed';
const SWEPT_FIELD = { unity: 'unityGain', bw: 'bandwidth', cross: 'crossoversHz', phaseX: 'phaseCrossings', pm: 'phaseMargin', gm: 'gainMargin', closed: 'closedLoopPoles' } as const;

/** Thrown by a search on the factored form that the slope bounds cannot settle. */
class SweepInstead extends Error {}

class FactoredLoop implements LoopAnalysis {
  private cache: Partial<Record<Memo, unknown>> = {};

  constructor(
    private readonly a: NetworkAnalysis,
    private readonly f: FactoredResponse,
    readonly beta: number,
  ) {}

  private swept: LoopAnalysis | undefined;

  private memo<T>(key: Memo, make: () => T): T {
    if (!(key in this.cache)) {
      try {
        this.cache[key] = make();
      } catch (err) {
        if (!(err instanceof SweepInstead)) throw err;
        this.swept ??= sweptLoop(this.a, this.beta);
        this.cache[key] = this.swept[SWEPT_FIELD[key]];
      }
    }
    return this.cache[key] as T;
  }

  private levels = new Map<number, number[]>();

  /** Every frequency (Hz) where ln|A| crosses `level` (the unity gain of A and the crossover at β = 1 share one search). */
  private levelHz(level: number): number[] {
    let hit = this.levels.get(level);
    if (!hit) this.levels.set(level, (hit = this.searchLevel(level)));
    return hit;
  }

  private searchLevel(level: number): number[] {
    const f = this.f;
    const span = 3 * Math.LN10;
    let lo = f.lnMin - span;
    let hi = f.lnMax + span;
    const g = (x: number): number => f.lnMag(Math.exp(x)) - level;
    // Below every root the response is flat (or rises as ω^k with zeros at the
    // origin): a level within round-off of the DC gain is crossed far down.
    if (f.originZeros > 0) {
      for (let i = 0; i < 6 && g(lo) > 0; i++) lo -= g(lo) / f.originZeros + 2;
    } else {
      const dc = Math.abs(f.lnGain - level);
      if (dc < 1e-2) lo = Math.max(f.lnMin - 40, f.lnMin + 0.5 * Math.log(Math.max(dc, 1e-300)) - 3);
    }
    // Above every root ln|H| follows its asymptote of slope (zeros − poles).
    if (f.highSlope !== 0) {
      for (let i = 0; i < 6 && g(hi) * f.highSlope < 0; i++) hi += Math.abs(g(hi)) / Math.abs(f.highSlope) + 2;
    }
    const grid = [lo, ...f.breaks().filter((x) => x > lo && x < hi), hi].sort((x, y) => x - y);
    const found = crossingsOf(g, (w0, w1) => f.magSlopeBound(w0, w1), grid, NOISE_NEPER);
    if (!found) throw new SweepInstead();
    return found.map((x) => Math.exp(x) / TWO_PI);
  }

  get unityGain(): Figure {
    return this.memo('unity', () => unityFigure(this.levelHz(0), 20 * Math.log10(Math.abs(this.a.dcGain)), '|A(j2πf)| = 1 solved on the exact response (factored from its poles and zeros)'));
  }

  get bandwidth(): Figure {
    return this.memo('bw', () => {
      const dcDb = 20 * Math.log10(Math.abs(this.a.dcGain));
      return bandwidthFigure(Number.isFinite(dcDb) ? this.levelHz(this.f.lnGain - 0.5 * Math.LN2) : [], dcDb);
    });
  }

  get crossoversHz(): number[] {
    return this.memo('cross', () => this.levelHz(-Math.log(this.beta)));
  }

  get crossoverMarginsDeg(): number[] {
    return this.crossoversHz.map((fHz) => wrapDeg(180 + this.f.phase(TWO_PI * fHz) * DEG));
  }

  get phaseCrossings(): Array<{ fHz: number; loopDb: number }> {
    return this.memo('phaseX', () => {
      const f = this.f;
      const out: Array<{ fHz: number; loopDb: number }> = [];
      const toDb = 20 / Math.LN10;
      const lnBeta = Math.log(this.beta);
      // βA(0) real and negative: the first candidate is DC itself.
      if (f.originZeros === 0 && f.phase0 !== 0) out.push({ fHz: 0, loopDb: (f.lnGain + lnBeta) * toDb });
      const span = 3 * Math.LN10;
      const lo = f.lnMin - span;
      const hi = f.lnMax + span;
      const grid = [lo, ...f.breaks(), hi].sort((x, y) => x - y);
      // Zeros of sin∠βA are where βA is real; keep those where it is negative.
      const sin = (x: number): number => Math.sin(f.phase(Math.exp(x)));
      const found = crossingsOf(sin, (w0, w1) => f.phaseSlopeBound(w0, w1), grid, NOISE_SIN);
      if (!found) throw new SweepInstead();
      for (const x of found) {
        const w = Math.exp(x);
        if (Math.cos(f.phase(w)) < 0) out.push({ fHz: w / TWO_PI, loopDb: (f.lnMag(w) + lnBeta) * toDb });
      }
      return out;
    });
  }

  private get closed(): { poles: Root[]; stability: Stability } {
    return this.memo('closed', () => closedLoop(this.a, this.beta));
  }

  get closedLoopPoles(): Root[] {
    return this.closed.poles;
  }

  private quick: Stability | undefined | null = null;

  get stability(): Stability {
    // The Routh array decides most loops without computing their poles.
    if (this.quick === null) this.quick = quickStability(this.a, this.beta);
    return this.quick ?? this.closed.stability;
  }

  get stable(): boolean {
    return this.stability === 'stable';
  }

  get phaseMargin(): Figure {
    return this.memo('pm', () => {
      const crossings = this.crossoversHz.map((fHz) => ({ fHz, phaseDeg: this.f.phase(TWO_PI * fHz) * DEG }));
      return phaseMarginFigure(crossings, (this.f.lnGain + Math.log(this.beta)) * (20 / Math.LN10), this.stability, () => this.closedLoopPoles);
    });
  }

  get gainMargin(): Figure {
    return this.memo('gm', () => gainMarginFigure(this.phaseCrossings, this.stability, () => this.closedLoopPoles));
  }
}

/**
 * The loop by sweeping the nodal response, for networks whose factored form
 * does not reproduce the nodal solve (round-off swamps a root, a root is
 * lost): a log grid plus points around every root, sign changes refined on the
 * exact response.
 */
function sweptLoop(a: NetworkAnalysis, beta: number): LoopAnalysis {
  const [lo0, hi0] = a.searchRange;
  const loopDb = 20 * Math.log10(beta);
  // Extend the search upward until the gain is well below unity, or stops
  // falling (a response that levels off above every pole crosses nothing more).
  const extend = (offsetDb: number): number => {
    let f = hi0;
    let prev = a.at(f).magDb;
    for (let i = 0; i < 30 && prev + offsetDb > -20; i++) {
      const next = a.at(f * 10).magDb;
      if (next > prev - 0.1) break;
      f *= 10;
      prev = next;
    }
    return f;
  };
  const hi = extend(loopDb);
  const hiA = Math.max(hi, extend(0));
  // Extend the search downward while the gain near DC is within a decibel of a
  // level it must cross (a gain just above 1 crosses far below every pole).
  const extendDown = (offsetDb: number): number => {
    let f = lo0;
    for (let i = 0; i < 12 && Math.abs(a.at(f).magDb + offsetDb) < 1; i++) f /= 10;
    return f;
  };
  const lo = Math.min(extendDown(0), extendDown(loopDb));
  // Besides each root's own frequency, a resonant pair's half-power points,
  // so that a narrow peak cannot cross unity between two grid points unseen.
  const rootFreqs: number[] = [];
  for (const r of [...a.poles, ...a.zeros]) {
    const f = rootHz(r);
    if (!(f > 0)) continue;
    rootFreqs.push(f);
    if (r.im !== 0) {
      const halfBandwidth = Math.abs(r.re) / (2 * Math.PI);
      rootFreqs.push(Math.max(f - halfBandwidth, f / 2), f + halfBandwidth);
    }
  }
  const s = sweep(a, lo, Math.max(hi, hiA), rootFreqs);
  const mag = (f: number): number => a.at(f).magDb;
  const phase = (f: number): number => a.at(f).phaseDeg;

  const unityGain = unityFigure(signChanges(s, s.magDb, 0, mag), a.at(lo).magDb, '|A(j2πf)| = 1 solved on the exact nodal response');
  const dcDb = 20 * Math.log10(Math.abs(a.dcGain));
  const bandwidth = bandwidthFigure(Number.isFinite(dcDb) ? signChanges(s, s.magDb, dcDb - 10 * Math.log10(2), mag) : [], dcDb);
  const crossoversHz = signChanges(s, s.magDb, -loopDb, mag);
  const phaseCrossings: Array<{ fHz: number; loopDb: number }> = [];
  if (a.dcGain < 0) phaseCrossings.push({ fHz: 0, loopDb: dcDb + loopDb });
  const lowest = Math.min(...s.phaseDeg);
  const highest = Math.max(...s.phaseDeg);
  for (let target = -180 + 360 * Math.floor((lowest + 180) / 360); target <= highest; target += 360) {
    for (const f of signChanges(s, s.phaseDeg, target, phase)) phaseCrossings.push({ fHz: f, loopDb: mag(f) + loopDb });
  }
  phaseCrossings.sort((x, y) => x.fHz - y.fHz);
  const closed = closedLoop(a, beta);
  const phaseMargin = phaseMarginFigure(crossoversHz.map((fHz) => ({ fHz, phaseDeg: phase(fHz) })), a.at(lo).magDb + loopDb, closed.stability, () => closed.poles);
  const gainMargin = gainMarginFigure(phaseCrossings, closed.stability, () => closed.poles);
  const crossoverMarginsDeg = crossoversHz.map((fHz) => wrapDeg(180 + phase(fHz)));
  return { beta, bandwidth, unityGain, crossoversHz, crossoverMarginsDeg, phaseCrossings, phaseMargin, gainMargin, closedLoopPoles: closed.poles, stability: closed.stability, stable: closed.stability === 'stable' };
}

/**
 * Admittance seen by the input source at one frequency: the current it
 * delivers into the network per volt (re, im in siemens).
 */
export function inputAdmittance(net: Network, fHz: number): { re: number; im: number } {
  const st = stamp(net);
  const { n, G, C, gIn, cIn } = st;
  const w = TWO_PI * fHz;
  const re = new Float64Array(n * n);
  const im = new Float64Array(n * n);
  for (let i = 0; i < n * n; i++) {
    re[i] = G[i];
    im[i] = w * C[i];
  }
  const xr = new Float64Array(n);
  const xi = new Float64Array(n);
  complexSolve(complexLU(re, im, n), gIn.map((v) => -v), cIn.map((v) => -w * v), xr, xi);
  const v = (node: string): [number, number] => {
    if (node === GROUND) return [0, 0];
    if (node === net.input) return [1, 0];
    const k = st.nodes.indexOf(node);
    return [xr[k], xi[k]];
  };
  // Currents leaving the input node through each element it touches.
  let ir = 0;
  let ii = 0;
  for (const e of net.elements) {
    if (e.kind === 'vccs') {
      const [pr, pi] = v(e.ctrlP);
      const [qr, qi] = v(e.ctrlN);
      const sign = (e.a === net.input ? 1 : 0) - (e.b === net.input ? 1 : 0);
      ir += sign * e.gm * (pr - qr);
      ii += sign * e.gm * (pi - qi);
      continue;
    }
    if (e.a !== net.input && e.b !== net.input) continue;
    const other = e.a === net.input ? e.b : e.a;
    const [or, oi] = v(other);
    const dr = 1 - or;
    const di = -oi;
    if (e.kind === 'conductance') {
      ir += e.siemens * dr;
      ii += e.siemens * di;
    } else {
      // j·ω·C·(Δv)
      ir += -w * e.farads * di;
      ii += w * e.farads * dr;
    }
  }
  return { re: ir, im: ii };
}
