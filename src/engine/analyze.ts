// Exact small-signal analysis of a network: poles, zeros, DC gain, frequency
// response with a continuous phase, unity-gain frequency, and of the loop
// gain β·A its crossovers, phase margin, gain margin and closed-loop poles.

import { type Figure, figure, missing } from './figure';
import { complexLU, complexSolve, realLU, realSolve } from './linalg';
import { GROUND, type Network, NetworkError, type Stamped, stamp } from './network';
import { type Root, SingularPencilError, pencilRoots, rootHz } from './roots';

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
}

export function analyzeNetwork(net: Network): NetworkAnalysis {
  const st = stamp(net);
  const { n, G, C, gIn, cIn, out } = st;
  const luDc = realLU(G.slice(), n);
  if (!luDc || luDc.pivotRatio < 1e-15) {
    throw new NetworkError('the network has a node without a DC path to ground (conductance matrix is singular)');
  }
  const xDc = realSolve(luDc, n, gIn.map((v) => -v));
  const dcGain = xDc[out];

  const roots = (A: Float64Array, B: Float64Array, size: number) => {
    try {
      return pencilRoots(A, B, size);
    } catch (err) {
      if (err instanceof SingularPencilError) throw new NetworkError(`the network cannot be solved: ${err.message} (values outside what double precision resolves?)`);
      throw err;
    }
  };
  const { roots: poles, polished: polesPolished } = roots(G, C, n);
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
  const { roots: zeros, polished: zerosPolished } = roots(Ga, Ca, m);

  const re = new Float64Array(n * n);
  const im = new Float64Array(n * n);
  const br = new Float64Array(n);
  const bi = new Float64Array(n);
  const xr = new Float64Array(n);
  const xi = new Float64Array(n);
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

  // Phase as a sum of per-root terms arg(1 − jω/r): each is continuous in ω
  // for a root off the imaginary axis, so the sum needs no unwrapping.
  const rootPhase = (roots: Root[], w: number): number => {
    let sum = 0;
    for (const r of roots) {
      const m2 = r.re * r.re + r.im * r.im;
      if (m2 === 0) sum += Math.PI / 2;
      else sum += Math.atan2((-w * r.re) / m2, 1 - (w * r.im) / m2);
    }
    return sum;
  };
  const factored = (w: number): number => rootPhase(zeros, w) - rootPhase(poles, w);

  const mags = [...poles, ...zeros].map((r) => Math.hypot(r.re, r.im)).filter((v) => v > 0);
  const wLo = mags.length ? Math.min(...mags) * 1e-3 : 1;
  const wHi = mags.length ? Math.max(...mags) * 1e3 : 1e12;
  const [r0, i0] = direct(wLo);
  // Constant part of the phase: 0 or ±π, read once near DC.
  const k = Math.round((Math.atan2(i0, r0) - factored(wLo)) / Math.PI);
  const phase0 = k % 2 === 0 ? 0 : -Math.PI;

  const at = (fHz: number): Response => {
    const w = TWO_PI * fHz;
    const [hr, hi] = w === 0 ? [dcGain, 0] : direct(w);
    const base = phase0 + factored(w);
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
  };
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
 * Root of g(e^x) − target in [a, b] (x = ln f), bracketed by ga, gb of
 * opposite signs: regula falsi with the Illinois modification, which keeps
 * the bracket of bisection and converges superlinearly.
 */
function refine(g: (fHz: number) => number, target: number, a: number, b: number, ga: number, gb: number): number {
  // Invariant: ga and gb have opposite signs; a and b need not be ordered.
  for (let it = 0; it < 100; it++) {
    const lo = Math.min(a, b);
    const hi = Math.max(a, b);
    if (hi - lo <= 1e-14 * Math.max(1, Math.abs(lo))) break;
    let x = b - (gb * (b - a)) / (gb - ga);
    if (!(x > lo && x < hi)) x = 0.5 * (lo + hi);
    const gx = g(Math.exp(x)) - target;
    if (gx === 0) return Math.exp(x);
    if (gx * gb < 0) {
      a = b;
      ga = gb;
    } else {
      ga /= 2; // Illinois: the retained end's value is halved
    }
    b = x;
    gb = gx;
  }
  return Math.exp(b);
}

/**
 * Frequencies (Hz) where g(f) = values − target changes sign on the sweep,
 * each refined by bisection in log f on the exact response.
 */
function signChanges(s: Sweep, values: number[], target: number, g: (fHz: number) => number): number[] {
  // Values within round-off of the level (a response that only touches it, or
  // sits on it over a band) carry no sign; a crossing is a change of sign
  // between two values clear of that noise.
  const NOISE = 1e-7;
  const found: number[] = [];
  let last = -1;
  for (let i = 0; i < s.f.length; i++) {
    const gi = values[i] - target;
    if (!(Math.abs(gi) >= NOISE)) continue;
    if (last >= 0) {
      const gl = values[last] - target;
      if (gl * gi < 0) found.push(refine(g, target, Math.log(s.f[last]), Math.log(s.f[i]), gl, gi));
    }
    last = i;
  }
  return found;
}

export interface LoopAnalysis {
  beta: number;
  /** −3 dB frequency of A(jω) relative to its DC value. */
  bandwidth: Figure;
  /** Unity-gain frequency of A(jω) itself. */
  unityGain: Figure;
  /** Frequencies where |β·A| = 1. */
  crossoversHz: number[];
  phaseMargin: Figure;
  gainMargin: Figure;
  /** Poles of the closed loop A/(1 + βA), rad/s. */
  closedLoopPoles: Root[];
  stable: boolean;
}

const fmtHz = (f: number): string => `${f.toPrecision(4)} Hz`;
/** Two decimals without a negative zero (`-0.00`). */
const fixed2 = (x: number): string => (!Number.isFinite(x) ? 'none: zero gain' : Math.abs(x) < 0.005 ? '0.00' : x.toFixed(2));

export function analyzeLoop(a: NetworkAnalysis, beta: number): LoopAnalysis {
  const [lo0, hi0] = a.searchRange;
  const loopDb = 20 * Math.log10(beta);
  // Extend the search upward until the loop gain is well below unity.
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

  // Unity-gain frequency of A: the first crossing of 0 dB from above.
  const unityCrossings = signChanges(s, s.magDb, 0, mag);
  let unityGain: Figure;
  if (a.at(lo).magDb <= 0 && unityCrossings.length === 0) {
    unityGain = missing('Hz', 'frequency-search', '|A(jω)| = 1 searched on the exact response', `|A| stays below 1 (DC gain ${fixed2(a.at(lo).magDb)} dB): no unity-gain frequency`);
  } else if (unityCrossings.length === 0) {
    unityGain = missing('Hz', 'frequency-search', '|A(jω)| = 1 searched on the exact response', '|A| stays above 1 at every frequency searched');
  } else {
    const notes = unityCrossings.length > 1 ? [`|A| crosses 1 at ${unityCrossings.length} frequencies (${unityCrossings.map(fmtHz).join(', ')}); the first is reported`] : undefined;
    unityGain = figure(unityCrossings[0], 'Hz', 'frequency-search', '|A(j2πf)| = 1 solved by bisection on the exact nodal response', notes);
  }

  const dcDb = 20 * Math.log10(Math.abs(a.dcGain));
  const bwHow = '|A(j2πf)| = |A(0)|/√2 solved by bisection on the exact nodal response';
  const bwCrossings = Number.isFinite(dcDb) ? signChanges(s, s.magDb, dcDb - 10 * Math.log10(2), mag) : [];
  const bandwidth = bwCrossings.length
    ? figure(bwCrossings[0], 'Hz', 'frequency-search', bwHow, bwCrossings.length > 1 ? [`|A| crosses the −3 dB level ${bwCrossings.length} times; the first is reported`] : undefined)
    : missing('Hz', 'frequency-search', bwHow, Number.isFinite(dcDb) ? '|A| never falls 3 dB below its DC value' : 'the DC gain is zero');
  const loopMag = (f: number): number => a.at(f).magDb + loopDb;
  const crossoversHz = signChanges(s, s.magDb, -loopDb, mag);
  const pmHow = 'PM = 180° + ∠βA(j2πf_c) at |βA(j2πf_c)| = 1, phase followed continuously from DC';
  let phaseMargin: Figure;
  if (crossoversHz.length === 0) {
    const dc = loopMag(lo);
    phaseMargin = dc < 0
      ? missing('deg', 'frequency-search', pmHow, `|βA| stays below 1 (loop gain at DC ${fixed2(dc)} dB): no crossover, so no phase margin`)
      : missing('deg', 'frequency-search', pmHow, '|βA| stays above 1 at every frequency searched: no crossover');
  } else {
    const margins = crossoversHz.map((f) => 180 + a.at(f).phaseDeg);
    let worst = 0;
    for (let i = 1; i < margins.length; i++) if (margins[i] < margins[worst]) worst = i;
    const notes = crossoversHz.length > 1
      ? [`|βA| crosses 1 at ${crossoversHz.length} frequencies (${crossoversHz.map((f, i) => `${fmtHz(f)}: ${margins[i].toFixed(1)}°`).join(', ')}); the worst margin is reported`]
      : [];
    phaseMargin = figure(margins[worst], 'deg', 'frequency-search', `${pmHow}; f_c = ${fmtHz(crossoversHz[worst])}`, notes);
  }

  // Gain margin: where the continuous phase reaches −180° (or −540°, …).
  const gmHow = 'GM = −20·log10|βA(j2πf_180)| where ∠βA = −180°';
  const phaseCrossings: number[] = [];
  for (const target of [-180, -540, 180]) {
    phaseCrossings.push(...signChanges(s, s.phaseDeg, target, phase));
  }
  let gainMargin: Figure;
  if (phaseCrossings.length === 0) {
    gainMargin = missing('dB', 'frequency-search', gmHow, 'the phase of βA never reaches −180°: the gain margin is unbounded');
  } else {
    const gms = phaseCrossings.map((f) => -loopMag(f));
    let worst = 0;
    for (let i = 1; i < gms.length; i++) if (gms[i] < gms[worst]) worst = i;
    const notes = phaseCrossings.length > 1
      ? [`the phase reaches −180° at ${phaseCrossings.length} frequencies; the worst margin is reported`]
      : [];
    gainMargin = figure(gms[worst], 'dB', 'frequency-search', `${gmHow}; f_180 = ${fmtHz(phaseCrossings[worst])}`, notes);
  }

  // Closed loop with the input driven by vin − β·vout:
  // (G − β·gIn·e_outᵀ + s(C − β·cIn·e_outᵀ))·V = −(gIn + s·cIn)·vin.
  const { n, G, C, gIn, cIn, out } = a.stamped;
  const Gc = G.slice();
  const Cc = C.slice();
  for (let i = 0; i < n; i++) {
    Gc[i * n + out] -= beta * gIn[i];
    Cc[i * n + out] -= beta * cIn[i];
  }
  let closedLoopPoles: Root[] = [];
  try {
    closedLoopPoles = pencilRoots(Gc, Cc, n).roots;
  } catch {
    closedLoopPoles = [];
  }
  const stable = closedLoopPoles.every((p) => p.re < 1e-12 * Math.hypot(p.re, p.im));
  if (!stable && phaseMargin.value !== null) {
    phaseMargin.notes = [...(phaseMargin.notes ?? []), 'the closed loop has a pole in the right half-plane: the loop is unstable'];
  }
  return { beta, bandwidth, unityGain, crossoversHz, phaseMargin, gainMargin, closedLoopPoles, stable };
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
