// Roots of det(A + s·B) = 0 for a real matrix pencil: the poles of a network
// (A = G, B = C) or, with the bordered pencil, the zeros of a transfer function.

import { complexLU, complexSolve, eigenvalues, realLU, realSolve } from './linalg';
import { type PencilPolynomial, pencilPolynomial, polynomialRoots } from './poly';

/** A root in the complex frequency plane, in rad/s. */
export interface Root {
  re: number;
  im: number;
}

export class SingularPencilError extends Error {}

export interface PencilRoots {
  roots: Root[];
  /** True when every root was refined to convergence by Newton's method on det(A + sB). */
  polished: boolean;
  /** The shift used to make A + σB invertible (0 for an ordinary pencil). */
  shift: number;
}

/**
 * All finite roots of det(A + sB).
 *
 * Method: shift-and-invert to a standard eigenproblem, μ = eig((A + σB)⁻¹B),
 * s = σ − 1/μ, then each root is refined by simultaneous Newton (Aberth)
 * steps on det(A + sB), using d/ds ln det(A + sB) = tr((A + sB)⁻¹B). The
 * refinement restores full relative accuracy to roots that are many decades
 * away from the largest one, where the eigenvalue step alone is only
 * accurate relative to the largest.
 */
export function pencilRoots(A: Float64Array, B: Float64Array, n: number): PencilRoots {
  if (n === 0) return { roots: [], polished: true, shift: 0 };
  if (!A.every(Number.isFinite) || !B.every(Number.isFinite)) throw new SingularPencilError('the network matrices hold values beyond double precision');
  // One shift-and-invert resolves roots within about ten decades of the
  // shift's scale; roots much farther out are lost in forming (A + σB)⁻¹B.
  // So further passes shift far beyond the largest root found so far, until
  // a pass adds nothing new.
  const accepted: Root[] = [];
  let polishedAll = true;
  let firstShift = 0;
  let far = 0;
  // The fastest conceivable root: the largest rate A_ii/B_ii of any node, with margin.
  let ceiling = 0;
  for (let i = 0; i < n; i++) if (B[i * n + i] !== 0) ceiling = Math.max(ceiling, Math.abs(A[i * n + i] / B[i * n + i]));
  ceiling = ceiling > 0 ? ceiling * 1e6 : Infinity;
  let shift = 0;
  for (let pass = 0; pass < 8; pass++) {
    const start = shiftInvertRoots(A, B, n, pass === 0 ? candidateShifts(A, B, n) : [-shift, 1.3 * shift], pass === 0);
    if (!start) {
      if (pass === 0) throw new SingularPencilError('the network matrices are singular at every trial frequency');
      break;
    }
    if (pass === 0) firstShift = start.shift;
    // A later pass exists for roots beyond those found so far: only those are polished.
    const fresh = pass === 0 ? start.roots : start.roots.filter((r) => Math.hypot(r.re, r.im) > far * 1.01);
    if (pass > 0 && fresh.length === 0) {
      shift = Math.max(far * 1e6, shift * 1e12);
      if (!(shift < ceiling)) break;
      continue;
    }
    const { roots, converged } = polish(A, B, n, fresh, accepted, start.shift);
    polishedAll &&= converged;
    // A later pass exists to find roots beyond the largest one found so far
    // (the earlier pass resolved everything below it); what it finds again
    // below that is a poorly resolved copy. Within one pass, equal roots are a
    // genuine multiple root and all are kept.
    for (const r of roots) {
      const size = Math.hypot(r.re, r.im);
      if (pass > 0 && size <= far * 1.01) continue;
      accepted.push(r);
    }
    if (accepted.length >= n) break;
    far = Math.max(far, ...accepted.map((r) => Math.hypot(r.re, r.im)));
    // Shift further out each pass (a pass that found nothing still moves on),
    // up to the fastest rate any node could have.
    shift = Math.max(far * 1e6, shift * 1e12);
    if (!(shift < ceiling)) break;
  }
  const finite = accepted.filter((r) => Number.isFinite(r.re) && Number.isFinite(r.im));
  return { roots: sortRoots(symmetrise(finite)), polished: polishedAll, shift: firstShift };
}

/** Eigenvalue estimates of the roots, from the first shift that makes A + σB invertible. */
function shiftInvertRoots(A: Float64Array, B: Float64Array, n: number, shifts: number[], strict: boolean): { roots: Root[]; shift: number } | null {
  for (const shift of shifts) {
    const shifted = new Float64Array(n * n);
    for (let i = 0; i < n * n; i++) shifted[i] = A[i] + shift * B[i];
    const lu = realLU(shifted, n);
    // The first pass insists on a well-conditioned shift; the far shifts of
    // later passes scale the nodes very differently by design, so only an
    // exact zero pivot or a non-finite result disqualifies them.
    if (!lu || (strict && lu.pivotRatio < 1e-13)) continue;
    const M = new Float64Array(n * n);
    const col = new Float64Array(n);
    for (let j = 0; j < n; j++) {
      for (let i = 0; i < n; i++) col[i] = B[i * n + j];
      const x = realSolve(lu, n, col);
      for (let i = 0; i < n; i++) M[i * n + j] = x[i];
    }
    if (!M.every(Number.isFinite)) continue;
    const eig = eigenvalues(M, n);
    if (!eig) continue;
    let maxMu = 0;
    for (let i = 0; i < n; i++) maxMu = Math.max(maxMu, Math.hypot(eig.re[i], eig.im[i]));
    const roots: Root[] = [];
    for (let i = 0; i < n; i++) {
      const mr = eig.re[i];
      const mi = eig.im[i];
      const m2 = mr * mr + mi * mi;
      // μ = 0 is a root at infinity, and μ at the round-off level of the
      // largest one may be one split by round-off: such estimates are left
      // to a later pass, shifted near them, which resolves them if they are real.
      if (maxMu === 0 || Math.sqrt(m2) <= 1e-13 * maxMu) continue;
      roots.push({ re: shift - mr / m2, im: mi / m2 });
    }
    return { roots, shift };
  }
  return null;
}

function candidateShifts(A: Float64Array, B: Float64Array, n: number): number[] {
  let na = 0;
  let nb = 0;
  for (let i = 0; i < n * n; i++) {
    na = Math.max(na, Math.abs(A[i]));
    nb = Math.max(nb, Math.abs(B[i]));
  }
  const scale = nb > 0 && na > 0 ? na / nb : 1;
  // Irrational-looking factors keep the shift off any root that is a round number.
  return [0, -0.3719 * scale, 1.913 * scale, -7.31 * scale, -0.0517 * scale, 23.7 * scale];
}

function polish(A: Float64Array, B: Float64Array, n: number, start: Root[], fixed: Root[], shift: number): { roots: Root[]; converged: boolean } {
  const roots = start.map((r) => ({ ...r }));
  // Shift-and-invert resolves the eigenvalues μ = 1/(σ − s) relative to the
  // largest, that is the roots nearest the shift. A root within six decades
  // of the nearest one is an eigenvalue the QR step resolved to about 1e-10 or
  // better: for a network of many nodes it is taken as it is, without Newton
  // steps or the final check (each costs a factorisation and n solves, O(n⁴)
  // over all roots). Farther roots, where round-off splits infinite
  // eigenvalues into spurious ones, are refined and vetted as before.
  let nearest = Infinity;
  for (const r of roots) nearest = Math.min(nearest, Math.hypot(r.re - shift, r.im));
  // Clustered roots (a repeated stage, a multiple pole) are resolved only to the
  // square root of the round-off by the QR step: those are always refined.
  const isolated = (k: number): boolean => {
    const size = Math.hypot(roots[k].re, roots[k].im);
    for (let j = 0; j < roots.length; j++) if (j !== k && Math.hypot(roots[j].re - roots[k].re, roots[j].im - roots[k].im) <= 1e-3 * size) return false;
    return true;
  };
  const trusted = roots.map((r, k) => n > 8 && Math.hypot(r.re - shift, r.im) <= 1e6 * nearest && isolated(k));
  const done = trusted.slice();
  const rejected = roots.map(() => false);
  const lastStep = roots.map(() => Infinity);
  const work = workspace(n);
  for (let iter = 0; iter < 40 && done.some((d) => !d); iter++) {
    for (let k = 0; k < roots.length; k++) {
      if (done[k]) continue;
      const s = roots[k];
      const d = logDerivative(A, B, n, s, work);
      if (!d) {
        done[k] = true; // landed on the root exactly
        continue;
      }
      let [tr, ti] = d;
      // Aberth: subtract the other roots' share of the logarithmic derivative.
      for (let j = 0; j < roots.length + fixed.length; j++) {
        if (j === k) continue;
        const other = j < roots.length ? roots[j] : fixed[j - roots.length];
        const dr = s.re - other.re;
        const di = s.im - other.im;
        const d2 = dr * dr + di * di;
        if (d2 === 0) continue;
        tr -= dr / d2;
        ti -= -di / d2;
      }
      const t2 = tr * tr + ti * ti;
      if (t2 === 0 || !Number.isFinite(t2)) {
        done[k] = true;
        continue;
      }
      const stepRe = tr / t2;
      const stepIm = -ti / t2;
      const size = Math.hypot(s.re, s.im);
      const step = Math.hypot(stepRe, stepIm);
      if (step > 0.5 * size) {
        // An accurate eigenvalue estimate needs only a small correction; a step
        // as large as the root itself means there is no root of det(A + sB)
        // here: the estimate came from an infinite eigenvalue split by round-off.
        rejected[k] = true;
        done[k] = true;
        continue;
      }
      s.re -= stepRe;
      s.im -= stepIm;
      // Converged at the round-off floor, or the step stopped shrinking there.
      if (step <= 4e-14 * size || (step < 1e-10 * size && step >= lastStep[k])) done[k] = true;
      lastStep[k] = step;
    }
  }
  // Last check, without the other roots' share: a root of det(A + sB) has a
  // plain Newton step that is tiny beside it (also for a multiple root, where
  // it is (s − r)/m). An estimate that Aberth's repulsion parked between roots,
  // or one far out where A + sB ≈ sB, fails it.
  // Trusted roots are checked too (one factorisation each, O(n⁴) over all of
  // them): a pencil with no finite root at all (an RC ladder's transfer has no
  // zeros) has every estimate from infinite eigenvalues split by round-off,
  // all within six decades of each other.
  for (let k = 0; k < roots.length; k++) {
    if (rejected[k]) continue;
    const d = logDerivative(A, B, n, roots[k], work);
    if (!d) continue; // exactly singular: a root
    const t = Math.hypot(d[0], d[1]);
    const step = t === 0 ? Infinity : 1 / t;
    if (step > 1e-6 * Math.hypot(roots[k].re, roots[k].im)) rejected[k] = true;
  }
  // Iterations that ran out before converging are reported as not polished.
  return { roots: roots.filter((_, k) => !rejected[k]), converged: done.every((d) => d) };
}

export interface Workspace {
  re: Float64Array;
  im: Float64Array;
  br: Float64Array;
  zero: Float64Array;
  xr: Float64Array;
  xi: Float64Array;
}

export const workspace = (n: number): Workspace => ({
  re: new Float64Array(n * n),
  im: new Float64Array(n * n),
  br: new Float64Array(n),
  zero: new Float64Array(n),
  xr: new Float64Array(n),
  xi: new Float64Array(n),
});

/** d/ds ln det(A + sB) = tr((A + sB)⁻¹B) at s, as [re, im]; null where A + sB is exactly singular (a root). */
export function logDerivative(A: Float64Array, B: Float64Array, n: number, s: Root, w: Workspace): [number, number] | null {
  for (let i = 0; i < n * n; i++) {
    w.re[i] = A[i] + s.re * B[i];
    w.im[i] = s.im * B[i];
  }
  const lu = complexLU(w.re, w.im, n);
  if (lu.pivotRatio < 1e-300) return null;
  let tr = 0;
  let ti = 0;
  for (let j = 0; j < n; j++) {
    for (let i = 0; i < n; i++) w.br[i] = B[i * n + j];
    complexSolve(lu, w.br, w.zero, w.xr, w.xi);
    tr += w.xr[j];
    ti += w.xi[j];
  }
  return [tr, ti];
}

export function symmetrise(roots: Root[]): Root[] {
  // A real pencil has real roots or conjugate pairs; remove round-off asymmetry.
  const out: Root[] = [];
  const used = new Array<boolean>(roots.length).fill(false);
  for (let i = 0; i < roots.length; i++) {
    if (used[i]) continue;
    const r = roots[i];
    const size = Math.hypot(r.re, r.im);
    if (Math.abs(r.im) <= 1e-12 * size) {
      out.push({ re: r.re, im: 0 });
      used[i] = true;
      continue;
    }
    let best = -1;
    let bestDist = Infinity;
    for (let j = i + 1; j < roots.length; j++) {
      if (used[j]) continue;
      const d = Math.hypot(roots[j].re - r.re, roots[j].im + r.im);
      if (d < bestDist) {
        bestDist = d;
        best = j;
      }
    }
    used[i] = true;
    if (best >= 0 && bestDist <= 1e-6 * size) {
      used[best] = true;
      const re = 0.5 * (r.re + roots[best].re);
      const im = 0.5 * (Math.abs(r.im) + Math.abs(roots[best].im));
      out.push({ re, im }, { re, im: -im });
    } else {
      out.push({ ...r });
    }
  }
  return out;
}

/** Ascending magnitude; for a conjugate pair the upper one first. */
export function sortRoots(roots: Root[]): Root[] {
  return roots.sort((a, b) => Math.hypot(a.re, a.im) - Math.hypot(b.re, b.im) || b.im - a.im);
}

export const rootHz = (r: Root): number => Math.hypot(r.re, r.im) / (2 * Math.PI);

/**
 * All finite roots of det(A + sB), the cheap way first: for a pencil of a few
 * nodes, the roots of its determinant polynomial (poly.ts), Newton-polished on
 * the determinant itself when the expansion lost digits to cancellation; else,
 * or when that does not settle, the eigenvalue path of pencilRoots.
 */
export function findRoots(A: Float64Array, B: Float64Array, n: number, poly?: PencilPolynomial | null): PencilRoots {
  if (n === 0) return { roots: [], polished: true, shift: 0 };
  const p = poly === undefined ? pencilPolynomial(A, B, n) : poly;
  const roots = p ? rootsOfExpansion(p) : null;
  if (roots && (roots.kept >= 1e-3 || polishOnDeterminant(A, B, n, roots.roots))) {
    return { roots: sortRoots(symmetrise(roots.roots)), polished: true, shift: 0 };
  }
  return pencilRoots(A, B, n);
}

/** Roots of an expanded determinant, with the worst fraction of a coefficient kept through cancellation; null when it cannot be trusted. */
function rootsOfExpansion(p: PencilPolynomial): { roots: Root[]; kept: number } | null {
  if (p.coef.length === 0) return null;
  let kept = 1;
  for (let k = 0; k < p.kept.length; k++) kept = Math.min(kept, p.kept[k]);
  // A coefficient at the round-off level of its terms may be an exact zero:
  // its roots would be spurious, so that pencil takes the eigenvalue path.
  if (kept < 1e-10) return null;
  const roots = polynomialRoots(p.coef);
  return roots ? { roots, kept } : null;
}

/** Newton steps on det(A + sB) from close estimates; false when a root will not settle. */
function polishOnDeterminant(A: Float64Array, B: Float64Array, n: number, roots: Root[]): boolean {
  const work = workspace(n);
  for (const r of roots) {
    const size = Math.hypot(r.re, r.im);
    if (size === 0) continue;
    let settled = false;
    for (let it = 0; it < 6 && !settled; it++) {
      const d = logDerivative(A, B, n, r, work);
      if (!d) {
        settled = true;
        break;
      }
      const t2 = d[0] * d[0] + d[1] * d[1];
      if (!(t2 > 0) || !Number.isFinite(t2)) return false;
      const stepRe = d[0] / t2;
      const stepIm = -d[1] / t2;
      const step = Math.hypot(stepRe, stepIm);
      // The estimate is already close: a large step means it is not a root of the determinant.
      if (step > 1e-3 * size) return false;
      r.re -= stepRe;
      r.im -= stepIm;
      settled = step <= 1e-14 * size;
    }
    if (!settled) {
      const d = logDerivative(A, B, n, r, work);
      if (d && 1 / Math.hypot(d[0], d[1]) > 1e-9 * size) return false;
    }
  }
  return true;
}
