// Small pencils in closed form: the polynomial det(A + s·B) of a network with a
// handful of nodes, its roots, and how much the expansion lost to cancellation.
//
// For the few-node networks of the built-in topologies this is much cheaper than
// the shift-and-invert eigenvalue path of roots.ts, and as exact: each
// coefficient is a sum of products of matrix entries, and when that sum cancels
// (the cc² terms of a Miller pencil do) the loss is measured and the roots are
// polished on the determinant itself, or the caller takes the eigenvalue path.

import type { Root } from './roots';

/** Largest pencil expanded over permutations (n! terms, most of them zero in a nodal matrix). */
export const MAX_EXPANDED = 5;

export interface PencilPolynomial {
  /** Coefficients of det(A + sB), ascending powers of s, trailing exact zeros removed. */
  coef: Float64Array;
  /**
   * Per coefficient, |sum of terms| / sum of |terms|: 1 without cancellation,
   * about 1e-16 when the coefficient is round-off of an exact zero. 1 for an
   * exact zero with no terms at all.
   */
  kept: Float64Array;
  /** Per coefficient, the sum of the |terms| (for the cancellation of a combination of polynomials). */
  scale: Float64Array;
}

/**
 * det(A + sB) as a polynomial, by Leibniz expansion over the permutations
 * (depth-first, pruning zero entries). Null for pencils above MAX_EXPANDED.
 */
const SUM = new Float64Array(MAX_EXPANDED + 1);
const ABS = new Float64Array(MAX_EXPANDED + 1);
const PARTIAL = new Float64Array((MAX_EXPANDED + 1) * (MAX_EXPANDED + 1));
const USED = new Uint8Array(MAX_EXPANDED);

export function pencilPolynomial(A: Float64Array, B: Float64Array, n: number): PencilPolynomial | null {
  if (n > MAX_EXPANDED) return null;
  const size = n + 1;
  // Scratch reused across calls (the engine is single-threaded per worker): this runs thousands of times per spec.
  const sum = SUM.fill(0, 0, size);
  const abs = ABS.fill(0, 0, size);
  // partial[d] holds the product of the first d factors (degree ≤ d).
  const partial = PARTIAL;
  partial[0] = 1;
  const used = USED.fill(0, 0, n);
  const walk = (row: number, sign: number): void => {
    const base = row * size;
    if (row === n) {
      for (let k = 0; k <= n; k++) {
        const t = partial[base + k];
        sum[k] += sign * t;
        abs[k] += Math.abs(t);
      }
      return;
    }
    const next = base + size;
    // Sign of the permutation: each column chosen contributes the parity of the
    // unused columns to its left.
    let inversions = 0;
    for (let col = 0; col < n; col++) {
      if (used[col]) continue;
      const a = A[row * n + col];
      const b = B[row * n + col];
      if (a !== 0 || b !== 0) {
        // partial[row + 1] = partial[row] · (a + s·b)
        for (let k = 0; k <= row + 1; k++) {
          const lower = k <= row ? partial[base + k] : 0;
          const upper = k > 0 ? partial[base + k - 1] : 0;
          partial[next + k] = a * lower + b * upper;
        }
        used[col] = 1;
        walk(row + 1, inversions % 2 === 0 ? sign : -sign);
        used[col] = 0;
      }
      inversions++;
    }
  };
  walk(0, 1);
  let top = n;
  while (top >= 0 && sum[top] === 0 && abs[top] === 0) top--;
  const coef = sum.slice(0, top + 1);
  const kept = new Float64Array(top + 1);
  for (let k = 0; k <= top; k++) kept[k] = abs[k] === 0 ? 1 : Math.abs(sum[k]) / abs[k];
  return { coef, kept, scale: abs.slice(0, top + 1) };
}

/**
 * All roots of a real polynomial (ascending coefficients, nonzero leading one),
 * by Aberth's simultaneous iteration started on the circles of the Newton
 * polygon of the coefficients, as in D. A. Bini, "Numerical computation of
 * polynomial zeros by means of Aberth's method", Numerical Algorithms 13
 * (1996) 179–200. The polygon's radii put a starting point near every root
 * even when the roots lie many decades apart, which is the usual case for the
 * poles of an amplifier. Null when the iteration does not converge.
 */
export function polynomialRoots(coef: ArrayLike<number>): Root[] | null {
  let d = coef.length - 1;
  while (d >= 0 && coef[d] === 0) d--;
  if (d < 0) return null;
  // Exact zero roots: low-order coefficients that are exactly zero.
  let origin = 0;
  while (origin < d && coef[origin] === 0) origin++;
  const c: number[] = [];
  for (let k = origin; k <= d; k++) c.push(coef[k]);
  const deg = d - origin;
  const roots: Root[] = [];
  for (let i = 0; i < origin; i++) roots.push({ re: 0, im: 0 });
  if (deg === 0) return roots;
  if (deg === 1) {
    roots.push({ re: -c[0] / c[1], im: 0 });
    return roots;
  }
  const zr = new Float64Array(deg);
  const zi = new Float64Array(deg);
  startingPoints(c, deg, zr, zi);
  const done = new Uint8Array(deg);
  const lastStep = new Float64Array(deg).fill(Infinity);
  let remaining = deg;
  for (let iter = 0; iter < 80 && remaining > 0; iter++) {
    for (let i = 0; i < deg; i++) {
      if (done[i]) continue;
      const xr = zr[i];
      const xi = zi[i];
      // p(x) and p'(x) by Horner's rule in complex arithmetic.
      let pr = c[deg];
      let pi = 0;
      let dr = 0;
      let di = 0;
      for (let k = deg - 1; k >= 0; k--) {
        const tr = dr * xr - di * xi + pr;
        di = dr * xi + di * xr + pi;
        dr = tr;
        const ur = pr * xr - pi * xi + c[k];
        pi = pr * xi + pi * xr;
        pr = ur;
      }
      if (pr === 0 && pi === 0) {
        done[i] = 1;
        remaining--;
        continue;
      }
      // Newton ratio n = p/p'.
      const dd = dr * dr + di * di;
      if (dd === 0 || !Number.isFinite(dd)) return null;
      const nr = (pr * dr + pi * di) / dd;
      const ni = (pi * dr - pr * di) / dd;
      // Aberth correction w = n / (1 − n·Σ 1/(x − x_j)).
      let sr = 0;
      let si = 0;
      for (let j = 0; j < deg; j++) {
        if (j === i) continue;
        const er = xr - zr[j];
        const ei = xi - zi[j];
        const e2 = er * er + ei * ei;
        if (e2 === 0) continue;
        sr += er / e2;
        si -= ei / e2;
      }
      const qr = 1 - (nr * sr - ni * si);
      const qi = -(nr * si + ni * sr);
      const q2 = qr * qr + qi * qi;
      if (q2 === 0) return null;
      const wr = (nr * qr + ni * qi) / q2;
      const wi = (ni * qr - nr * qi) / q2;
      zr[i] = xr - wr;
      zi[i] = xi - wi;
      if (!Number.isFinite(zr[i]) || !Number.isFinite(zi[i])) return null;
      // Converged at the round-off floor, or the step stopped shrinking there.
      const step = Math.hypot(wr, wi);
      const size = Math.hypot(zr[i], zi[i]);
      if (step <= 4e-16 * size || (step < 1e-11 * size && step >= lastStep[i])) {
        done[i] = 1;
        remaining--;
      }
      lastStep[i] = step;
    }
  }
  if (remaining > 0) return null;
  for (let i = 0; i < deg; i++) roots.push({ re: zr[i], im: zi[i] });
  return roots;
}

/** Bini's starting points: on each edge of the upper convex hull of (k, log|c_k|), as many points as the edge spans, on the circle its slope gives. */
function startingPoints(c: number[], deg: number, zr: Float64Array, zi: Float64Array): void {
  const hull: number[] = [];
  for (let k = 0; k <= deg; k++) {
    if (c[k] === 0) continue;
    const y = Math.log(Math.abs(c[k]));
    while (hull.length >= 2) {
      const a = hull[hull.length - 2];
      const b = hull[hull.length - 1];
      const ya = Math.log(Math.abs(c[a]));
      const yb = Math.log(Math.abs(c[b]));
      // Drop b when it lies on or below the segment a → k.
      if ((yb - ya) * (k - a) <= (y - ya) * (b - a)) hull.pop();
      else break;
    }
    hull.push(k);
  }
  let at = 0;
  const offset = 0.7; // keeps the start off the real axis, where real roots would trap a pair
  for (let e = 1; e < hull.length; e++) {
    const a = hull[e - 1];
    const b = hull[e];
    const span = b - a;
    const radius = Math.exp((Math.log(Math.abs(c[a])) - Math.log(Math.abs(c[b]))) / span);
    for (let j = 0; j < span; j++) {
      const angle = (2 * Math.PI * j) / span + (2 * Math.PI * e) / deg + offset;
      zr[at] = radius * Math.cos(angle);
      zi[at] = radius * Math.sin(angle);
      at++;
    }
  }
}

/**
 * Whether every root of a real polynomial (ascending coefficients) lies in the
 * open left half-plane, by the Routh array (E. J. Routh, 1877; e.g. K. Ogata,
 * "Modern Control Engineering", the Routh stability criterion): stable iff the
 * array's first column keeps one sign. Null when the array cannot decide
 * safely (a first-column entry lost to cancellation, a zero coefficient: a
 * root on or near the jω axis), so that the caller computes the roots.
 */
export function hurwitzStable(coef: ArrayLike<number>): boolean | null {
  let d = coef.length - 1;
  while (d >= 0 && coef[d] === 0) d--;
  if (d < 0) return null;
  if (d === 0) return true;
  // Every coefficient present and of one sign is necessary.
  const sign = Math.sign(coef[d]);
  for (let k = 0; k <= d; k++) if (Math.sign(coef[k]) !== sign) return coef[k] === 0 ? null : false;
  if (d <= 2) return true;
  // Rows in descending powers, each scaled to unit maximum (signs kept).
  const width = Math.floor(d / 2) + 1;
  let upper = new Float64Array(width);
  let lower = new Float64Array(width);
  for (let j = 0; j < width; j++) {
    upper[j] = d - 2 * j >= 0 ? coef[d - 2 * j] : 0;
    lower[j] = d - 1 - 2 * j >= 0 ? coef[d - 1 - 2 * j] : 0;
  }
  const normalise = (row: Float64Array): void => {
    let m = 0;
    for (let j = 0; j < row.length; j++) m = Math.max(m, Math.abs(row[j]));
    if (m > 0) for (let j = 0; j < row.length; j++) row[j] /= m;
  };
  normalise(upper);
  normalise(lower);
  const firstSign = Math.sign(upper[0]);
  if (Math.sign(lower[0]) !== firstSign) return false;
  for (let row = 2; row <= d; row++) {
    const next = new Float64Array(width);
    for (let j = 0; j < width - 1; j++) {
      const a = lower[0] * upper[j + 1];
      const b = upper[0] * lower[j + 1];
      const v = (a - b) / lower[0];
      // A first-column entry that cancels to round-off cannot be signed safely.
      if (j === 0 && Math.abs(a - b) <= 1e-9 * (Math.abs(a) + Math.abs(b))) return null;
      next[j] = v;
    }
    normalise(next);
    if (next[0] === 0) return null;
    if (Math.sign(next[0]) !== firstSign) return false;
    upper = lower;
    lower = next;
  }
  return true;
}
