// Noise of a linear small-signal network, exactly: the output noise density is
// the sum over the (uncorrelated) sources of each source's density times the
// squared magnitude of its transfer impedance to the output,
//
//   S_out(f) = Σ_k S_k · |Z_k(j2πf)|²,   Z_k = e_outᵀ·(G + jωC)⁻¹·b_k,
//
// where b_k says into which nodes source k pushes its current. One adjoint
// solve (G + jωC)ᵀ·y = e_out per frequency gives every Z_k = yᵀ·b_k and the
// gain A = −yᵀ·(gIn + jω·cIn) at once (the adjoint network: L. O. Chua and
// P.-M. Lin, "Computer-Aided Analysis of Electronic Circuits", 1975, ch. on
// sensitivity and noise; the same identity SPICE's noise analysis rests on).
// Referred to the input by |A(jω)|²; integrated over a band by adaptive
// Gauss–Kronrod quadrature in log-frequency.
//
// Pure: plain numbers and typed arrays, no I/O.

import { complexLU, complexSolve } from './linalg';
import { GROUND, type Stamped } from './network';

/** Boltzmann constant in J/K, exact since the 2019 redefinition of the SI (BIPM, "The International System of Units", 9th ed., 2019). */
export const BOLTZMANN = 1.380649e-23;

/** Room temperature polecheck assumes when a spec states none, K. */
export const DEFAULT_TEMPERATURE = 300;

/** 4kT at a temperature in kelvin (the density factor of thermal and channel noise), J. */
export const fourKT = (temperatureK: number = DEFAULT_TEMPERATURE): number => 4 * BOLTZMANN * temperatureK;

/** One noise current, white, pushed into the network at one or more nodes (fully correlated there). */
export interface NoiseSource {
  /** As a designer names it: "gm1 (input pair, 2 devices)". */
  name: string;
  /** One-sided current density, A²/Hz. */
  psd: number;
  /** [node, weight]: a current weight·i enters each node (a two-terminal source: +1 at one end, −1 at the other). */
  into: Array<[node: string, weight: number]>;
}

/** What a topology says about its noise at given values. */
export interface NoiseModel {
  sources: NoiseSource[];
  /** The textbook white input-referred density (V²/Hz) and its formula, or why the topology has none. */
  hand: { psd: number; how: string } | { reason: string };
  /** Why the noise cannot be computed at all (a param it needs is missing); absent when it can. */
  missing?: string;
}

/** Output noise and gain at one frequency. */
export interface NoisePoint {
  /** Open-loop output noise density with the input held at AC ground, V²/Hz. */
  outPsd: number;
  /** A(j2πf), the open-loop gain v(out)/v(in). */
  gainRe: number;
  gainIm: number;
}

/** The adjoint solves of one network and its noise sources, frequency by frequency. */
export class NoiseSolver {
  private readonly n: number;
  private readonly re: Float64Array;
  private readonly im: Float64Array;
  private readonly e: Float64Array;
  private readonly zero: Float64Array;
  private readonly yr: Float64Array;
  private readonly yi: Float64Array;
  /** Per source: the unknown-node indices it feeds and their weights. */
  private readonly feeds: Array<{ psd: number; idx: Int32Array; w: Float64Array }>;

  constructor(
    private readonly st: Stamped,
    sources: readonly NoiseSource[],
  ) {
    const n = (this.n = st.n);
    this.re = new Float64Array(n * n);
    this.im = new Float64Array(n * n);
    this.e = new Float64Array(n);
    this.e[st.out] = 1;
    this.zero = new Float64Array(n);
    this.yr = new Float64Array(n);
    this.yi = new Float64Array(n);
    const index = new Map(st.nodes.map((node, i) => [node, i]));
    // Current pushed into ground or into the node held by the ideal input source goes nowhere.
    this.feeds = sources.map((s) => {
      const kept = s.into.filter(([node, w]) => node !== GROUND && index.has(node) && w !== 0);
      return { psd: s.psd, idx: Int32Array.from(kept.map(([node]) => index.get(node)!)), w: Float64Array.from(kept.map(([, w]) => w)) };
    });
  }

  /** Output density and gain at f (Hz; 0 is DC). NaN everywhere when the network is singular there. */
  at(fHz: number): NoisePoint {
    const { n, re, im, st, yr, yi } = this;
    const w = 2 * Math.PI * fHz;
    // The transposed matrix: (G + jωC)ᵀ.
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) {
        re[i * n + j] = st.G[j * n + i];
        im[i * n + j] = w * st.C[j * n + i];
      }
    }
    const lu = complexLU(re, im, n);
    if (lu.pivotRatio === 0) return { outPsd: NaN, gainRe: NaN, gainIm: NaN };
    complexSolve(lu, this.e, this.zero, yr, yi);
    let gainRe = 0;
    let gainIm = 0;
    for (let i = 0; i < n; i++) {
      // A = −yᵀ·(gIn + jω·cIn)
      const br = st.gIn[i];
      const bi = w * st.cIn[i];
      gainRe -= yr[i] * br - yi[i] * bi;
      gainIm -= yr[i] * bi + yi[i] * br;
    }
    let outPsd = 0;
    for (const f of this.feeds) {
      let zr = 0;
      let zi = 0;
      for (let k = 0; k < f.idx.length; k++) {
        zr += f.w[k] * yr[f.idx[k]];
        zi += f.w[k] * yi[f.idx[k]];
      }
      outPsd += f.psd * (zr * zr + zi * zi);
    }
    return { outPsd, gainRe, gainIm };
  }
}

// Gauss–Kronrod 7–15 rule: the 15 Kronrod nodes on [−1, 1] (the 7 Gauss
// nodes among them, at odd positions) and their weights, as tabulated in
// R. Piessens, E. de Doncker-Kapenga, C. W. Überhuber, D. K. Kahaner,
// "QUADPACK: A Subroutine Package for Automatic Integration", Springer 1983
// (public domain), routine qk15. test/engine/noise.test.ts checks that the
// rules integrate polynomials of degree 23 and 13 exactly.
const XGK = [0.991455371120812639206854697526329, 0.949107912342758524526189684047851, 0.864864423359769072789712788640926, 0.741531185599394439863864773280788, 0.586087235467691130294144845693013, 0.405845151377397166906606412076961, 0.207784955007898467600689403773245, 0];
const WGK = [0.02293532201052922496373200805897, 0.063092092629978553290700663189204, 0.10479001032225018383987632254152, 0.140653259715525918745189590510238, 0.16900472663926790282658342659855, 0.190350578064785409913256402421014, 0.204432940075298892414161999234649, 0.209482141084727828012999174891714];
const WG = [0.129484966168869693270611432679082, 0.27970539148927666790146777142378, 0.381830050505118944950369775488975, 0.417959183673469387755102040816327];

/** ∫ h over [a, b] by the 15-point Kronrod rule, and |K15 − G7| as its error estimate. */
export function gaussKronrod15(h: (x: number) => number, a: number, b: number): { value: number; error: number } {
  const c = (a + b) / 2;
  const r = (b - a) / 2;
  const fc = h(c);
  let k = fc * WGK[7];
  let g = fc * WG[3];
  for (let j = 0; j < 7; j++) {
    const d = r * XGK[j];
    const s = h(c - d) + h(c + d);
    k += WGK[j] * s;
    if (j % 2 === 1) g += WG[(j - 1) / 2] * s;
  }
  return { value: k * r, error: Math.abs((k - g) * r) };
}

export interface Integral {
  value: number;
  /** Sum of the intervals' error estimates. */
  error: number;
  converged: boolean;
  evaluations: number;
}

/**
 * Work bound of one integral: 128 intervals, 1,920 evaluations. A smooth
 * density meets the tolerance in a few dozen; only values at the edges of
 * double precision, whose rounding noise no rule resolves, reach the bound,
 * and the figure then says it did not converge.
 */
const MAX_INTERVALS = 128;
/** Longest first piece between break frequencies, in ln f: three decades. */
const MAX_PIECE = 3 * Math.LN10;

/**
 * ∫ g(f) df over [f1, f2] (0 < f1 < f2 < ∞), in log-frequency (∫ g(eᵘ)·eᵘ du),
 * adaptively: the range is cut at every break frequency (poles, zeros) inside
 * it and into pieces of at most three decades, then the interval with the largest
 * error estimate is halved until the estimates sum below relTol of the total
 * (10⁻⁶: the claims' tolerances are 10 %, the ngspice bar 1 %).
 */
export function integrateLogFrequency(g: (fHz: number) => number, f1: number, f2: number, breaks: readonly number[] = [], relTol = 1e-6): Integral {
  const u1 = Math.log(f1);
  const u2 = Math.log(f2);
  if (!(Number.isFinite(u1) && Number.isFinite(u2) && u2 > u1)) return { value: NaN, error: NaN, converged: false, evaluations: 0 };
  const cuts = [u1, ...breaks.filter((b) => b > f1 && b < f2).map(Math.log), u2].sort((x, y) => x - y);
  const h = (u: number): number => {
    const f = Math.exp(u);
    return g(f) * f;
  };
  let evaluations = 0;
  const rule = (a: number, b: number) => {
    evaluations += 15;
    return { a, b, ...gaussKronrod15(h, a, b) };
  };
  const parts: Array<{ a: number; b: number; value: number; error: number }> = [];
  for (let i = 0; i + 1 < cuts.length; i++) {
    const [a, b] = [cuts[i], cuts[i + 1]];
    if (!(b > a)) continue;
    const pieces = Math.min(MAX_INTERVALS, Math.max(1, Math.ceil((b - a) / MAX_PIECE)));
    for (let j = 0; j < pieces; j++) parts.push(rule(a + ((b - a) * j) / pieces, a + ((b - a) * (j + 1)) / pieces));
  }
  const total = () => parts.reduce((s, p) => s + p.value, 0);
  const errors = () => parts.reduce((s, p) => s + p.error, 0);
  // Rounding noise in the density (values at the edges of double precision) keeps the estimates
  // from falling: after as many halvings as there are first pieces (32 at least) without a
  // tenfold gain, more work buys nothing.
  const STALL = Math.max(32, parts.length);
  let best = Infinity;
  let stalled = 0;
  while (parts.length < MAX_INTERVALS) {
    const value = total();
    const error = errors();
    if (!Number.isFinite(value)) break;
    if (error <= relTol * Math.abs(value)) return { value, error, converged: true, evaluations };
    if (error < best / 10) {
      best = error;
      stalled = 0;
    } else if (++stalled >= STALL) break;
    let worst = 0;
    for (let i = 1; i < parts.length; i++) if (parts[i].error > parts[worst].error) worst = i;
    const p = parts[worst];
    const mid = (p.a + p.b) / 2;
    parts.splice(worst, 1, rule(p.a, mid), rule(mid, p.b));
  }
  const value = total();
  return { value, error: errors(), converged: Number.isFinite(value) && errors() <= relTol * Math.abs(value), evaluations };
}
