// Closed-form transfer functions of the three reference circuits, derived by
// hand from nodal analysis of the netlists in ./netlist.ts (independent of
// both ngspice and the polecheck engine). Used by harness.test.ts to check
// that the ngspice harness measures what it claims to.

import type { CommonSourceDesign, SingleStageDesign, ThreeStageDesign } from './designs';

export type C = [number, number];
export const cadd = (a: C, b: C): C => [a[0] + b[0], a[1] + b[1]];
export const csub = (a: C, b: C): C => [a[0] - b[0], a[1] - b[1]];
export const cmul = (a: C, b: C): C => [a[0] * b[0] - a[1] * b[1], a[0] * b[1] + a[1] * b[0]];
export const cdiv = (a: C, b: C): C => {
  const m = b[0] * b[0] + b[1] * b[1];
  return [(a[0] * b[0] + a[1] * b[1]) / m, (a[1] * b[0] - a[0] * b[1]) / m];
};
const re = (x: number): C => [x, 0];
const jw = (fHz: number): C => [0, 2 * Math.PI * fHz];

/** Real polynomials, ascending coefficients. */
type Poly = number[];
const padd = (a: Poly, b: Poly): Poly => Array.from({ length: Math.max(a.length, b.length) }, (_, i) => (a[i] ?? 0) + (b[i] ?? 0));
const pscale = (a: Poly, k: number): Poly => a.map((x) => x * k);
const pmul = (a: Poly, b: Poly): Poly => {
  const out = new Array<number>(a.length + b.length - 1).fill(0);
  a.forEach((x, i) => b.forEach((y, j) => (out[i + j] += x * y)));
  return out;
};
export function peval(p: Poly, s: C): C {
  let acc: C = re(0);
  for (let i = p.length - 1; i >= 0; i--) acc = cadd(cmul(acc, s), re(p[i]));
  return acc;
}

const parallel = (r: number, rl: number | undefined) => (rl === undefined ? r : (r * rl) / (r + rl));

// ---- single-stage ------------------------------------------------------------

/**
 * KCL at xa: (gm_cas + s·c_cas)·v(xa) = −gm·vin; the cascode passes gm_cas·(−v(xa)), i.e.
 * gm/(1 + s·τc) with τc = c_cas/gm_cas (gm itself without a cascode). With the mirror, half of it
 * reaches out directly and half through m, KCL at m: (gm_mirror + s·c_mirror)·v(m) = i/2, the
 * mirror delivering (i/2)/(1 + s·τm). KCL at out: (1/rout' + s·(cout + cl))·v(out) = the sum.
 */
export function singleStageA(d: SingleStageDesign, fHz: number): C {
  const s = jw(fHz);
  const cas = d.gm_cas !== undefined;
  const mir = d.gm_mirror !== undefined;
  const i: C = cas ? cdiv(re(d.gm), cadd(re(1), cmul(s, re(d.c_cas! / d.gm_cas!)))) : re(d.gm);
  const iOut: C = mir ? cadd(cmul(i, re(0.5)), cdiv(cmul(i, re(0.5)), cadd(re(1), cmul(s, re(d.c_mirror! / d.gm_mirror!))))) : i;
  const yOut = cadd(re(1 / parallel(d.rout, d.rl)), cmul(s, re(d.cout + d.cl)));
  return cdiv(iOut, yOut);
}

/** Poles (rad/s) of singleStageA: one per node, each −G/C of its own node. */
export function singleStagePoles(d: SingleStageDesign): number[] {
  const p = [-1 / (parallel(d.rout, d.rl) * (d.cout + d.cl))];
  if (d.gm_cas !== undefined) p.push(-d.gm_cas / d.c_cas!);
  if (d.gm_mirror !== undefined) p.push(-d.gm_mirror / d.c_mirror!);
  return p;
}

/** Zeros (rad/s): with the mirror, ½ + ½/(1 + s·τm) = (1 + s·τm/2)/(1 + s·τm): one zero at −2/τm; without it none. */
export function singleStageZeros(d: SingleStageDesign): number[] {
  if (d.gm_mirror === undefined) return [];
  return [-2 / (d.c_mirror! / d.gm_mirror)];
}

/**
 * The product form given with the topology:
 * gm·rout' · [1/(1 + s·c_cas/gm_cas)] · [(1 + s·c_mirror/(2·gm_mirror))/(1 + s·c_mirror/gm_mirror)] / (1 + s·rout'·(cout + cl)).
 * Equals singleStageA: the cascode sits in series with both halves.
 */
export function singleStageProductForm(d: SingleStageDesign, fHz: number): C {
  const s = jw(fHz);
  const ro = parallel(d.rout, d.rl);
  let h: C = cdiv(re(d.gm * ro), cadd(re(1), cmul(s, re(ro * (d.cout + d.cl)))));
  if (d.gm_cas !== undefined) h = cdiv(h, cadd(re(1), cmul(s, re(d.c_cas! / d.gm_cas))));
  if (d.gm_mirror !== undefined) {
    const tm = d.c_mirror! / d.gm_mirror;
    h = cmul(h, cdiv(cadd(re(1), cmul(s, re(tm / 2))), cadd(re(1), cmul(s, re(tm)))));
  }
  return h;
}

// ---- common-source -------------------------------------------------------------

const csDrain = (d: CommonSourceDesign) => ({ g: 1 / parallel(d.rout, d.rl), cd: d.cdb + d.cl });

/**
 * KCL at d: (G + s(cd + cgd))·vd = (s·cgd − gm)·vg; at g: (Gs + s(cgs + cgd))·vg − s·cgd·vd = Gs·vin.
 * A = Gs·(s·cgd − gm) / [(Gs + s(cgs + cgd))(G + s(cd + cgd)) − s·cgd·(s·cgd − gm)];
 * with rs = 0 (vg = vin): A = (s·cgd − gm)/(G + s(cd + cgd)).
 */
export function commonSourceA(d: CommonSourceDesign, fHz: number): C {
  const s = jw(fHz);
  const { g, cd } = csDrain(d);
  const num = csub(cmul(s, re(d.cgd)), re(d.gm));
  const yd = cadd(re(g), cmul(s, re(cd + d.cgd)));
  if (d.rs === 0) return cdiv(num, yd);
  const gs = 1 / d.rs;
  const yg = cadd(re(gs), cmul(s, re(d.cgs + d.cgd)));
  return cdiv(cmul(re(gs), num), csub(cmul(yg, yd), cmul(cmul(s, re(d.cgd)), num)));
}

/**
 * Normalised denominator 1 + b1·s + b2·s²:
 * b1 = rs·(cgs + cgd) + rout'·(cd + cgd) + gm·rout'·rs·cgd, b2 = rs·rout'·(cgs·cd + cgs·cgd + cgd·cd).
 */
export function commonSourceDenominator(d: CommonSourceDesign): { b1: number; b2: number } {
  const { g, cd } = csDrain(d);
  const ro = 1 / g;
  return {
    b1: d.rs * (d.cgs + d.cgd) + ro * (cd + d.cgd) + d.gm * ro * d.rs * d.cgd,
    b2: d.rs * ro * (d.cgs * cd + d.cgs * d.cgd + d.cgd * cd),
  };
}

/** The numerator s·cgd − gm: a right-half-plane zero at +gm/cgd. */
export const commonSourceZero = (d: CommonSourceDesign) => d.gm / d.cgd;

/**
 * Miller: cgs + cgd·(1 + gm·rout'), the low-frequency limit of exactInputCapacitance (B. Razavi, "Design of
 * Analog CMOS Integrated Circuits", ch. 6, the Miller effect; cited from memory).
 */
export const millerInputCapacitance = (d: CommonSourceDesign) => d.cgs + d.cgd * (1 + d.gm * parallel(d.rout, d.rl));

/** Exact Im(Y_in(jω))/ω with the gate driven: Y_in = s·cgs + s·cgd·(1 − vd/vg), vd/vg = (s·cgd − gm)/(G + s(cd + cgd)). */
export function exactInputCapacitance(d: CommonSourceDesign, fHz: number): number {
  const s = jw(fHz);
  const { g, cd } = csDrain(d);
  const av = cdiv(csub(cmul(s, re(d.cgd)), re(d.gm)), cadd(re(g), cmul(s, re(cd + d.cgd))));
  const y = cadd(cmul(s, re(d.cgs)), cmul(cmul(s, re(d.cgd)), csub(re(1), av)));
  return y[1] / (2 * Math.PI * fHz);
}

// ---- three-stage nested Miller ---------------------------------------------------

/**
 * Nodal matrix of (n1, n2, out), Y1 = 1/r1 + s·c1, Y2 = 1/r2 + s·c2, Y3 = 1/r3' + s(c3 + cl), a = s·cc1, b = s·cc2:
 *   [[Y1 + a, 0, −a], [−gm2, Y2 + b, −b], [−a, gm3 − b, Y3 + a + b]] · v = [−gm1·vin, 0, 0].
 * Cramer: N = gm1·(gm2·(gm3 − b) − a·(Y2 + b)),
 *         D = (Y1 + a)·[(Y2 + b)(Y3 + a + b) + b(gm3 − b)] − a·[a(Y2 + b) − gm2(gm3 − b)].
 */
export function threeStagePolys(d: ThreeStageDesign): { num: Poly; den: Poly } {
  const y1: Poly = [1 / d.r1, d.c1];
  const y2: Poly = [1 / d.r2, d.c2];
  const y3: Poly = [1 / parallel(d.r3, d.rl), d.c3 + d.cl];
  const a: Poly = [0, d.cc1];
  const b: Poly = [0, d.cc2];
  const g3b = padd([d.gm3], pscale(b, -1));
  const y2b = padd(y2, b);
  const num = pscale(padd(pscale(g3b, d.gm2), pscale(pmul(a, y2b), -1)), d.gm1);
  const inner = padd(pmul(y2b, padd(padd(y3, a), b)), pmul(b, g3b));
  const den = padd(pmul(padd(y1, a), inner), pscale(pmul(a, padd(pmul(a, y2b), pscale(g3b, -d.gm2))), -1));
  return { num, den };
}

export function threeStageA(d: ThreeStageDesign, fHz: number): C {
  return threeStageResponse(d)(fHz);
}

/** A(j2πf) as a function, the polynomials built once. */
export function threeStageResponse(d: ThreeStageDesign): (fHz: number) => C {
  const { num, den } = threeStagePolys(d);
  return (fHz) => {
    const s = jw(fHz);
    return cdiv(peval(num, s), peval(den, s));
  };
}

// ---- generic helpers ---------------------------------------------------------------

/** Real roots of a quadratic c0 + c1·s + c2·s², cancellation-free; throws on complex roots. */
export function quadraticRealRoots(c0: number, c1: number, c2: number): [number, number] {
  const disc = c1 * c1 - 4 * c2 * c0;
  if (disc < 0) throw new Error('complex roots');
  const q = -0.5 * (c1 + Math.sign(c1 || 1) * Math.sqrt(disc));
  return [q / c2, c0 / q];
}

/** Elementary symmetric functions of 1/p over the roots: Σ1/p, Σ1/(p_i p_j), Π1/p. */
export function inverseSymmetric(roots: { re: number; im: number }[]): [number, number, number] {
  const inv = roots.map((p): C => cdiv(re(1), [p.re, p.im]));
  const e1 = inv.reduce((acc, x) => cadd(acc, x), re(0));
  let e2: C = re(0);
  for (let i = 0; i < inv.length; i++) for (let j = i + 1; j < inv.length; j++) e2 = cadd(e2, cmul(inv[i], inv[j]));
  const e3 = inv.reduce((acc, x) => cmul(acc, x), re(1));
  return [e1[0], e2[0], e3[0]];
}

/** Solve |h(f)| = target by bisection in log f inside [lo, hi]. */
export function solveMag(h: (f: number) => C, target: number, lo: number, hi: number): number {
  const g = (f: number) => Math.hypot(...h(f)) - target;
  let a = Math.log(lo);
  let b = Math.log(hi);
  const ga = Math.sign(g(lo));
  if (ga === Math.sign(g(hi))) throw new Error('bracket does not contain the crossing');
  for (let k = 0; k < 200; k++) {
    const m = 0.5 * (a + b);
    if (Math.sign(g(Math.exp(m))) === ga) a = m;
    else b = m;
  }
  return Math.exp(0.5 * (a + b));
}

/**
 * Continuous phase (deg) of h between fLow and fHigh: followed on a grid of
 * 2000 points per decade from fLow (steps far below 180°), and between grid
 * points by the wrapped change from the grid point below.
 */
export class PhaseTrack {
  private readonly f: number[] = [];
  private readonly raw: number[] = [];
  private readonly ph: number[] = [];
  constructor(
    private readonly h: (f: number) => C,
    fLow: number,
    fHigh: number,
  ) {
    const n = Math.max(1, Math.ceil(2000 * Math.log10(fHigh / fLow)));
    for (let k = 0; k <= n; k++) {
      const f = fLow * Math.pow(fHigh / fLow, k / n);
      const raw = this.arg(f);
      let ph = raw;
      if (k > 0) {
        let dd = raw - this.raw[k - 1];
        dd -= 360 * Math.round(dd / 360);
        ph = this.ph[k - 1] + dd;
      }
      this.f.push(f);
      this.raw.push(raw);
      this.ph.push(ph);
    }
  }

  private arg(f: number): number {
    const [a, b] = this.h(f);
    return (Math.atan2(b, a) * 180) / Math.PI;
  }

  /** Continuous phase at f (fLow ≤ f ≤ fHigh). */
  at(f: number): number {
    let lo = 0;
    let hi = this.f.length - 1;
    if (!(f >= this.f[0] * (1 - 1e-12) && f <= this.f[hi] * (1 + 1e-12))) throw new Error(`phase asked at ${f} Hz, outside the tracked range`);
    while (hi - lo > 1) {
      const m = (lo + hi) >> 1;
      if (this.f[m] <= f) lo = m;
      else hi = m;
    }
    let d = this.arg(f) - this.raw[lo];
    d -= 360 * Math.round(d / 360);
    return this.ph[lo] + d;
  }

  /** Every frequency where the continuous phase crosses `level`, refined by bisection. */
  crossings(level: number): number[] {
    const out: number[] = [];
    for (let k = 0; k + 1 < this.f.length; k++) {
      if ((this.ph[k] - level) * (this.ph[k + 1] - level) >= 0) continue;
      let a = Math.log(this.f[k]);
      let b = Math.log(this.f[k + 1]);
      const sa = Math.sign(this.ph[k] - level);
      for (let it = 0; it < 100; it++) {
        const m = 0.5 * (a + b);
        if (Math.sign(this.at(Math.exp(m)) - level) === sa) a = m;
        else b = m;
      }
      out.push(Math.exp(0.5 * (a + b)));
    }
    return out;
  }
}
