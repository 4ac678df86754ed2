// Small dense linear algebra over plain Float64Arrays (row-major, n×n).
// The networks here have a handful of nodes, so clarity beats blocking.
//
// LU: Gaussian elimination with partial pivoting in its outer-product form,
// and the forward and back substitutions that use it (Golub & Van Loan,
// "Matrix Computations", §3.1 and §3.4). Eigenvalues: the public-domain
// EISPACK sequence balanc → elmhes → hqr, each step citing its source.

/** Complex LU factorisation with partial pivoting, in place on (re, im). */
export interface ComplexLU {
  n: number;
  re: Float64Array;
  im: Float64Array;
  perm: Int32Array;
  /** Sign of the permutation, for determinants. */
  sign: number;
  /** Smallest |pivot| / largest |pivot|: a cheap conditioning indicator. */
  pivotRatio: number;
}

/**
 * P·A = L·U for a complex matrix held as (re, im), overwritten by the
 * multipliers of L below the diagonal and U on and above it; perm[i] is the
 * original row now at row i. A column with no nonzero pivot is left as it is
 * (pivotRatio is then 0), so the caller decides what singular means.
 */
export function complexLU(re: Float64Array, im: Float64Array, n: number): ComplexLU {
  const perm = new Int32Array(n);
  for (let i = 0; i < n; i++) perm[i] = i;
  let sign = 1;
  let minPivot = Infinity;
  let maxPivot = 0;
  for (let k = 0; k < n; k++) {
    // Partial pivoting: the largest modulus in column k, rows k..n−1, keeps
    // every multiplier at most 1 in modulus.
    let pivotRow = k;
    let pivotSize = -1;
    for (let i = k; i < n; i++) {
      const size = Math.hypot(re[i * n + k], im[i * n + k]);
      if (size > pivotSize) {
        pivotSize = size;
        pivotRow = i;
      }
    }
    minPivot = Math.min(minPivot, pivotSize);
    maxPivot = Math.max(maxPivot, pivotSize);
    if (pivotRow !== k) {
      swapRows(re, n, k, pivotRow);
      swapRows(im, n, k, pivotRow);
      const t = perm[k];
      perm[k] = perm[pivotRow];
      perm[pivotRow] = t;
      sign = -sign;
    }
    if (pivotSize === 0) continue;
    const pr = re[k * n + k];
    const pi = im[k * n + k];
    const pivotSq = pr * pr + pi * pi;
    for (let i = k + 1; i < n; i++) {
      const ar = re[i * n + k];
      const ai = im[i * n + k];
      if (ar === 0 && ai === 0) continue;
      // Multiplier l = a / pivot = a·conj(pivot) / |pivot|².
      const lr = (ar * pr + ai * pi) / pivotSq;
      const li = (ai * pr - ar * pi) / pivotSq;
      re[i * n + k] = lr;
      im[i * n + k] = li;
      // Rank-one update of the trailing rows: row i −= l · row k.
      for (let j = k + 1; j < n; j++) {
        const ur = re[k * n + j];
        const ui = im[k * n + j];
        re[i * n + j] -= lr * ur - li * ui;
        im[i * n + j] -= lr * ui + li * ur;
      }
    }
  }
  return { n, re, im, perm, sign, pivotRatio: maxPivot === 0 ? 0 : minPivot / maxPivot };
}

/** Solves A·x = b for one complex right-hand side from complexLU's factors; returns x in (xr, xi). */
export function complexSolve(lu: ComplexLU, br: ArrayLike<number>, bi: ArrayLike<number>, xr: Float64Array, xi: Float64Array): void {
  const { n, re, im, perm } = lu;
  for (let i = 0; i < n; i++) {
    xr[i] = br[perm[i]];
    xi[i] = bi[perm[i]];
  }
  // Forward substitution, L·y = P·b (L has a unit diagonal).
  for (let i = 0; i < n; i++) {
    let sr = xr[i];
    let si = xi[i];
    for (let j = 0; j < i; j++) {
      const lr = re[i * n + j];
      const li = im[i * n + j];
      sr -= lr * xr[j] - li * xi[j];
      si -= lr * xi[j] + li * xr[j];
    }
    xr[i] = sr;
    xi[i] = si;
  }
  // Back substitution, U·x = y.
  for (let i = n - 1; i >= 0; i--) {
    let sr = xr[i];
    let si = xi[i];
    for (let j = i + 1; j < n; j++) {
      const ur = re[i * n + j];
      const ui = im[i * n + j];
      sr -= ur * xr[j] - ui * xi[j];
      si -= ur * xi[j] + ui * xr[j];
    }
    const pr = re[i * n + i];
    const pi = im[i * n + i];
    const pivotSq = pr * pr + pi * pi;
    xr[i] = (sr * pr + si * pi) / pivotSq;
    xi[i] = (si * pr - sr * pi) / pivotSq;
  }
}

/** Real P·A = L·U with partial pivoting, in place, as complexLU. Returns null when a column has no nonzero pivot. */
export function realLU(a: Float64Array, n: number): { a: Float64Array; perm: Int32Array; pivotRatio: number } | null {
  const perm = new Int32Array(n);
  for (let i = 0; i < n; i++) perm[i] = i;
  let minPivot = Infinity;
  let maxPivot = 0;
  for (let k = 0; k < n; k++) {
    let pivotRow = k;
    for (let i = k + 1; i < n; i++) if (Math.abs(a[i * n + k]) > Math.abs(a[pivotRow * n + k])) pivotRow = i;
    const pivotSize = Math.abs(a[pivotRow * n + k]);
    if (pivotSize === 0) return null;
    minPivot = Math.min(minPivot, pivotSize);
    maxPivot = Math.max(maxPivot, pivotSize);
    if (pivotRow !== k) {
      swapRows(a, n, k, pivotRow);
      const t = perm[k];
      perm[k] = perm[pivotRow];
      perm[pivotRow] = t;
    }
    for (let i = k + 1; i < n; i++) {
      const l = a[i * n + k] / a[k * n + k];
      a[i * n + k] = l;
      if (l === 0) continue;
      for (let j = k + 1; j < n; j++) a[i * n + j] -= l * a[k * n + j];
    }
  }
  return { a, perm, pivotRatio: minPivot / maxPivot };
}

/** Solves A·x = b from realLU's factors: forward then back substitution. */
export function realSolve(lu: { a: Float64Array; perm: Int32Array }, n: number, b: ArrayLike<number>, into?: Float64Array): Float64Array {
  const { a, perm } = lu;
  // `into` (not `b`) takes the solution without an allocation, for loops that solve many times.
  const x = into ?? new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = b[perm[i]];
    for (let j = 0; j < i; j++) s -= a[i * n + j] * x[j];
    x[i] = s;
  }
  for (let i = n - 1; i >= 0; i--) {
    let s = x[i];
    for (let j = i + 1; j < n; j++) s -= a[i * n + j] * x[j];
    x[i] = s / a[i * n + i];
  }
  return x;
}

function swapRows(a: Float64Array, n: number, i: number, j: number): void {
  for (let k = 0; k < n; k++) {
    const t = a[i * n + k];
    a[i * n + k] = a[j * n + k];
    a[j * n + k] = t;
  }
}

/**
 * Eigenvalues of a real square matrix (row-major, n×n), which is left unchanged.
 *
 * The EISPACK path for eigenvalues only: balance (balanc), reduce to upper
 * Hessenberg form by stabilised elimination (elmhes), then Francis'
 * double-shift QR iteration on the Hessenberg matrix (hqr). EISPACK is public
 * domain; the algorithms are those of the Handbook for Automatic Computation,
 * Vol. II, Linear Algebra (Wilkinson & Reinsch, eds., 1971), each cited where
 * it is used. Returns null if the input is not finite or the QR iteration does
 * not converge.
 */
export function eigenvalues(matrix: Float64Array, n: number): { re: Float64Array; im: Float64Array } | null {
  const re = new Float64Array(n);
  const im = new Float64Array(n);
  for (let i = 0; i < n * n; i++) if (!Number.isFinite(matrix[i])) return null;
  const h = matrix.slice(0, n * n);
  const [lo, hi] = balance(h, n);
  // Outside lo..hi the balanced matrix is block upper triangular with 1×1
  // diagonal blocks: those eigenvalues are exact diagonal entries.
  for (let i = 0; i < n; i++) if (i < lo || i > hi) re[i] = h[i * n + i];
  if (hi > lo) {
    reduceToHessenberg(h, n, lo, hi);
    if (!hessenbergEigenvalues(h, n, lo, hi, re, im)) return null;
  } else if (hi === lo) {
    re[lo] = h[lo * n + lo];
  }
  return { re, im };
}

/**
 * Balancing, in place (Parlett & Reinsch, "Balancing a matrix for calculation
 * of eigenvalues and eigenvectors", Numer. Math. 13 (1969); EISPACK balanc;
 * LAPACK dgebal). Returns [lo, hi], the rows and columns still coupled.
 *
 * First, a symmetric permutation moves each row that is zero off the diagonal
 * (within the coupled block) to the bottom and each such column to the left:
 * those eigenvalues are then exact diagonal entries. Then a diagonal similarity
 * D⁻¹·A·D with powers of two on the diagonal makes each row's off-diagonal
 * 1-norm comparable to its column's. Powers of the radix change only exponents,
 * so balancing itself rounds nothing; it shrinks the norm, to which the QR
 * iteration's rounding errors are proportional.
 */
function balance(a: Float64Array, n: number): [number, number] {
  let lo = 0;
  let hi = n - 1;
  for (let moved = true; moved && hi > lo; ) {
    moved = false;
    for (let j = hi; j >= lo && !moved; j--) {
      if (rowIsolated(a, n, j, lo, hi)) {
        swapRowsAndColumns(a, n, j, hi--);
        moved = true;
      }
    }
    for (let j = lo; j <= hi && !moved; j++) {
      if (columnIsolated(a, n, j, lo, hi)) {
        swapRowsAndColumns(a, n, j, lo++);
        moved = true;
      }
    }
  }
  // Each accepted scaling cuts the sum of off-diagonal magnitudes by 5 % of the
  // row and column concerned (the 0.95 of balanc and dgebal), so the sweeps
  // end; the cap only guards against pathological input.
  for (let sweep = 0; sweep < 100; sweep++) {
    let scaled = false;
    for (let i = lo; i <= hi; i++) {
      let colSum = 0;
      let rowSum = 0;
      for (let j = lo; j <= hi; j++) {
        if (j === i) continue;
        colSum += Math.abs(a[j * n + i]);
        rowSum += Math.abs(a[i * n + j]);
      }
      if (colSum === 0 || rowSum === 0) continue;
      // f = 2^k nearest √(rowSum/colSum) minimises colSum·f + rowSum/f.
      const k = Math.round(0.5 * (Math.log2(rowSum) - Math.log2(colSum)));
      if (k === 0) continue;
      const f = 2 ** k;
      if (colSum * f + rowSum / f >= 0.95 * (colSum + rowSum)) continue;
      const g = 2 ** -k;
      for (let j = lo; j <= hi; j++) a[i * n + j] *= g;
      for (let j = lo; j <= hi; j++) a[j * n + i] *= f;
      scaled = true;
    }
    if (!scaled) break;
  }
  return [lo, hi];
}

/** True when row j is zero off the diagonal within columns lo..hi. */
function rowIsolated(a: Float64Array, n: number, j: number, lo: number, hi: number): boolean {
  for (let i = lo; i <= hi; i++) if (i !== j && a[j * n + i] !== 0) return false;
  return true;
}

/** True when column j is zero off the diagonal within rows lo..hi. */
function columnIsolated(a: Float64Array, n: number, j: number, lo: number, hi: number): boolean {
  for (let i = lo; i <= hi; i++) if (i !== j && a[i * n + j] !== 0) return false;
  return true;
}

/** P·A·Pᵀ for the permutation exchanging indices i and j: a similarity, exact. */
function swapRowsAndColumns(a: Float64Array, n: number, i: number, j: number): void {
  if (i === j) return;
  for (let k = 0; k < n; k++) {
    const t = a[i * n + k];
    a[i * n + k] = a[j * n + k];
    a[j * n + k] = t;
  }
  for (let k = 0; k < n; k++) {
    const t = a[k * n + i];
    a[k * n + i] = a[k * n + j];
    a[k * n + j] = t;
  }
}

/**
 * Reduces rows and columns lo..hi of a to upper Hessenberg form, in place, by
 * stabilised elementary similarity transforms: Gaussian elimination below the
 * subdiagonal, column by column, with the largest entry brought to the pivot
 * by a row-and-column interchange so that every multiplier is at most 1
 * (Wilkinson, "The Algebraic Eigenvalue Problem", 1965, ch. 6; Martin &
 * Wilkinson, "Similarity reduction of a general matrix to Hessenberg form",
 * Numer. Math. 12 (1968); EISPACK elmhes).
 *
 * Why not Householder reflections (EISPACK orthes), orthogonal and so
 * unconditionally stable: the matrices this engine produces, (A + σB)⁻¹B, are
 * graded over many decades, and on those from the reference designs orthes
 * lost about half a decade to two decades of relative accuracy on the
 * eigenvalues 1e-3 to 1e-13 of the largest (checked against 50-digit
 * references), while elimination with interchanges did not.
 */
function reduceToHessenberg(a: Float64Array, n: number, lo: number, hi: number): void {
  for (let m = lo + 1; m < hi; m++) {
    // Pivot: the largest entry of column m−1 on or below row m (the first, on ties).
    let pivotRow = m;
    let pivot = 0;
    for (let i = m; i <= hi; i++) {
      if (Math.abs(a[i * n + m - 1]) > Math.abs(pivot)) {
        pivot = a[i * n + m - 1];
        pivotRow = i;
      }
    }
    if (pivot === 0) continue; // the column is already reduced
    if (pivotRow !== m) {
      // Exchanging rows and the same columns is a similarity (P·A·Pᵀ).
      for (let j = m - 1; j <= hi; j++) {
        const t = a[pivotRow * n + j];
        a[pivotRow * n + j] = a[m * n + j];
        a[m * n + j] = t;
      }
      for (let i = lo; i <= hi; i++) {
        const t = a[i * n + pivotRow];
        a[i * n + pivotRow] = a[i * n + m];
        a[i * n + m] = t;
      }
    }
    for (let i = m + 1; i <= hi; i++) {
      const below = a[i * n + m - 1];
      if (below === 0) continue;
      // L·A·L⁻¹ with L = I − l·e_i·e_mᵀ: subtract l × row m from row i, which
      // clears a[i][m−1], then add l × column i to column m.
      const l = below / pivot;
      a[i * n + m - 1] = 0;
      for (let j = m; j <= hi; j++) a[i * n + j] -= l * a[m * n + j];
      for (let r = lo; r <= hi; r++) a[r * n + m] += l * a[r * n + i];
    }
  }
}

/**
 * Eigenvalues of the upper Hessenberg block lo..hi of a by Francis' implicit
 * double-shift QR iteration (Francis, "The QR transformation", Computer J. 4
 * (1961–62); Martin, Peters & Wilkinson, "The QR algorithm for real Hessenberg
 * matrices", Numer. Math. 14 (1970); EISPACK hqr; LAPACK dlahqr for the details
 * noted). Destroys a. Writes re[lo..hi], im[lo..hi]; false if not converged.
 */
function hessenbergEigenvalues(a: Float64Array, n: number, lo: number, hi: number, re: Float64Array, im: Float64Array): boolean {
  const at = (i: number, j: number): number => a[i * n + j];
  // Used in the deflation test when two neighbouring diagonal entries are both zero.
  let norm = 0;
  for (let i = lo; i <= hi; i++) for (let j = Math.max(i - 1, lo); j <= hi; j++) norm += Math.abs(at(i, j));
  // Total iteration budget, and an exceptional shift after every ten
  // iterations without deflation to break cycles (dlahqr: 30·max(10, size)).
  let budget = 30 * Math.max(10, hi - lo + 1);
  let its = 0;
  // Sum of the exceptional shifts subtracted from the diagonal so far.
  let shiftSum = 0;
  let en = hi;
  while (en >= lo) {
    // The trailing unreduced block is l..en: scanning up from en, h[l][l−1] is
    // the first subdiagonal entry negligible beside its diagonal neighbours
    // (hqr's test), or l = lo.
    let l = en;
    for (; l > lo; l--) {
      let s = Math.abs(at(l - 1, l - 1)) + Math.abs(at(l, l));
      if (s === 0) s = norm;
      if (s + Math.abs(at(l, l - 1)) === s) {
        a[l * n + l - 1] = 0;
        break;
      }
    }
    const x = at(en, en);
    if (l === en) {
      re[en] = x + shiftSum;
      im[en] = 0;
      en -= 1;
      its = 0;
      continue;
    }
    const na = en - 1;
    const y = at(na, na);
    const w = at(en, na) * at(na, en);
    if (l === na) {
      // A 2×2 block [y b; c x] with w = b·c: λ = x + p ± √(p² + w), p = (y − x)/2.
      const p = 0.5 * (y - x);
      const q = p * p + w;
      const root = Math.sqrt(Math.abs(q));
      const base = x + shiftSum;
      if (q >= 0) {
        // Real pair: add √q with the sign of p, so nothing cancels; the other
        // root from (λ1 − x)·(λ2 − x) = −w, again without cancellation.
        const z = p >= 0 ? p + root : p - root;
        re[na] = base + z;
        re[en] = z !== 0 ? base - w / z : base + z;
        im[na] = 0;
        im[en] = 0;
      } else {
        re[na] = base + p;
        re[en] = base + p;
        im[na] = root;
        im[en] = -root;
      }
      en -= 2;
      its = 0;
      continue;
    }
    if (budget-- === 0) return false;
    // Shifts: the eigenvalues s1, s2 of the trailing 2×2, given by their sum
    // sx + sy and product sx·sy − sw.
    let sx = x;
    let sy = y;
    let sw = w;
    if (its > 0 && its % 10 === 0) {
      // Wilkinson's exceptional shift (hqr; dlahqr uses the same constants).
      shiftSum += x;
      for (let i = lo; i <= en; i++) a[i * n + i] -= x;
      const s = Math.abs(at(en, na)) + Math.abs(at(na, en - 2));
      sx = 0.75 * s;
      sy = sx;
      sw = -0.4375 * s * s;
    }
    its += 1;
    // The first column of (H − s1)(H − s2) restricted to rows m..m+2, divided
    // by h[m+1][m]; start the sweep at the highest m ≥ l where a small
    // h[m][m−1] makes the rest of that column negligible (two consecutive
    // small subdiagonal entries, hqr's test).
    let m = en - 2;
    let p = 0;
    let q = 0;
    let r = 0;
    for (; ; m--) {
      const hmm = at(m, m);
      const dx = sx - hmm;
      const dy = sy - hmm;
      p = (dx * dy - sw) / at(m + 1, m) + at(m, m + 1);
      q = at(m + 1, m + 1) - hmm - dx - dy;
      r = at(m + 2, m + 1);
      const s = Math.abs(p) + Math.abs(q) + Math.abs(r);
      p /= s;
      q /= s;
      r /= s;
      if (m === l) break;
      const tst = Math.abs(p) * (Math.abs(at(m - 1, m - 1)) + Math.abs(hmm) + Math.abs(at(m + 1, m + 1)));
      if (tst + Math.abs(at(m, m - 1)) * (Math.abs(q) + Math.abs(r)) === tst) break;
    }
    // Chase the bulge from m down to en with 3×3 reflectors (2×2 at the end):
    // P = I − τ·v·vᵀ with v = (1, v2, v3), as LAPACK's dlarfg builds them.
    for (let k = m; k < en; k++) {
      const three = k < en - 1;
      let scale = 1;
      if (k > m) {
        p = at(k, k - 1);
        q = at(k + 1, k - 1);
        r = three ? at(k + 2, k - 1) : 0;
        scale = Math.abs(p) + Math.abs(q) + Math.abs(r);
        if (scale === 0) continue; // nothing to chase at this column
        p /= scale;
        q /= scale;
        r /= scale;
      }
      const s = p >= 0 ? Math.sqrt(p * p + q * q + r * r) : -Math.sqrt(p * p + q * q + r * r);
      const tau = (p + s) / s;
      const v2 = q / (p + s);
      const v3 = r / (p + s);
      const tv2 = q / s; // τ·v2
      const tv3 = r / s; // τ·v3
      if (k > m) {
        // The reflector maps the bulge column to (−s, 0, 0)·scale.
        a[k * n + k - 1] = -s * scale;
        a[(k + 1) * n + k - 1] = 0;
        if (three) a[(k + 2) * n + k - 1] = 0;
      } else if (m > l) {
        // h[m][m−1] is multiplied by the reflector's (1,1) entry; the other
        // entries it creates are negligible by the choice of m (dlahqr's form).
        a[k * n + k - 1] *= 1 - tau;
      }
      // P·H on rows k..k+2, columns k..en, then H·P below. Only eigenvalues
      // are wanted, so the rows and columns outside l..en are left as they are.
      for (let j = k; j <= en; j++) {
        let t = at(k, j) + v2 * at(k + 1, j);
        if (three) {
          t += v3 * at(k + 2, j);
          a[(k + 2) * n + j] -= t * tv3;
        }
        a[(k + 1) * n + j] -= t * tv2;
        a[k * n + j] -= t * tau;
      }
      // H·P on columns k..k+2, rows l..min(en, k+3).
      const last = Math.min(en, k + 3);
      for (let i = l; i <= last; i++) {
        let t = tau * at(i, k) + tv2 * at(i, k + 1);
        if (three) {
          t += tv3 * at(i, k + 2);
          a[i * n + k + 2] -= t * v3;
        }
        a[i * n + k + 1] -= t * v2;
        a[i * n + k] -= t;
      }
    }
  }
  return true;
}
