// Small dense linear algebra over plain Float64Arrays (row-major, n×n).
// The networks here have a handful of nodes, so clarity beats blocking.

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

export function complexLU(re: Float64Array, im: Float64Array, n: number): ComplexLU {
  const perm = new Int32Array(n);
  for (let i = 0; i < n; i++) perm[i] = i;
  let sign = 1;
  let minPivot = Infinity;
  let maxPivot = 0;
  for (let k = 0; k < n; k++) {
    let p = k;
    let best = -1;
    for (let i = k; i < n; i++) {
      const m = Math.hypot(re[i * n + k], im[i * n + k]);
      if (m > best) {
        best = m;
        p = i;
      }
    }
    minPivot = Math.min(minPivot, best);
    maxPivot = Math.max(maxPivot, best);
    if (p !== k) {
      for (let j = 0; j < n; j++) {
        const a = k * n + j;
        const b = p * n + j;
        let t = re[a];
        re[a] = re[b];
        re[b] = t;
        t = im[a];
        im[a] = im[b];
        im[b] = t;
      }
      const t = perm[k];
      perm[k] = perm[p];
      perm[p] = t;
      sign = -sign;
    }
    if (best === 0) continue;
    const pr = re[k * n + k];
    const pi = im[k * n + k];
    const d = pr * pr + pi * pi;
    for (let i = k + 1; i < n; i++) {
      const ar = re[i * n + k];
      const ai = im[i * n + k];
      if (ar === 0 && ai === 0) continue;
      // l = a / pivot
      const lr = (ar * pr + ai * pi) / d;
      const li = (ai * pr - ar * pi) / d;
      re[i * n + k] = lr;
      im[i * n + k] = li;
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

/** Solves LU·x = P·b for one complex right-hand side; returns x in (xr, xi). */
export function complexSolve(lu: ComplexLU, br: ArrayLike<number>, bi: ArrayLike<number>, xr: Float64Array, xi: Float64Array): void {
  const { n, re, im, perm } = lu;
  for (let i = 0; i < n; i++) {
    xr[i] = br[perm[i]];
    xi[i] = bi[perm[i]];
  }
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
    const d = pr * pr + pi * pi;
    xr[i] = (sr * pr + si * pi) / d;
    xi[i] = (si * pr - sr * pi) / d;
  }
}

/** Real LU with partial pivoting, in place. Returns null when exactly singular. */
export function realLU(a: Float64Array, n: number): { a: Float64Array; perm: Int32Array; pivotRatio: number } | null {
  const perm = new Int32Array(n);
  for (let i = 0; i < n; i++) perm[i] = i;
  let minPivot = Infinity;
  let maxPivot = 0;
  for (let k = 0; k < n; k++) {
    let p = k;
    for (let i = k + 1; i < n; i++) if (Math.abs(a[i * n + k]) > Math.abs(a[p * n + k])) p = i;
    const piv = Math.abs(a[p * n + k]);
    if (piv === 0) return null;
    minPivot = Math.min(minPivot, piv);
    maxPivot = Math.max(maxPivot, piv);
    if (p !== k) {
      for (let j = 0; j < n; j++) {
        const t = a[k * n + j];
        a[k * n + j] = a[p * n + j];
        a[p * n + j] = t;
      }
      const t = perm[k];
      perm[k] = perm[p];
      perm[p] = t;
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

export function realSolve(lu: { a: Float64Array; perm: Int32Array }, n: number, b: ArrayLike<number>): Float64Array {
  const { a, perm } = lu;
  const x = new Float64Array(n);
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

/**
 * Eigenvalues of a real square matrix: balancing, reduction to upper
 * Hessenberg form by stabilised elementary similarity transforms, then the
 * Francis double-shift QR iteration (the classic EISPACK balanc/elmhes/hqr
 * sequence, as in Press et al., Numerical Recipes, 2nd ed., §11.5–11.6).
 * Returns null if the iteration does not converge.
 */
export function eigenvalues(matrix: Float64Array, n: number): { re: Float64Array; im: Float64Array } | null {
  // 1-based copy keeps the transcription of the algorithm readable.
  const a: number[][] = [];
  for (let i = 0; i <= n; i++) a.push(new Array<number>(n + 1).fill(0));
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) a[i + 1][j + 1] = matrix[i * n + j];
  balance(a, n);
  toHessenberg(a, n);
  for (let i = 3; i <= n; i++) for (let j = 1; j <= i - 2; j++) a[i][j] = 0;
  const wr = new Float64Array(n + 1);
  const wi = new Float64Array(n + 1);
  if (!hqr(a, n, wr, wi)) return null;
  return { re: wr.subarray(1), im: wi.subarray(1) };
}

function balance(a: number[][], n: number): void {
  const RADIX = 2;
  const sqrdx = RADIX * RADIX;
  let done = false;
  let guard = 0;
  while (!done && guard++ < 200) {
    done = true;
    for (let i = 1; i <= n; i++) {
      let r = 0;
      let c = 0;
      for (let j = 1; j <= n; j++) {
        if (j === i) continue;
        c += Math.abs(a[j][i]);
        r += Math.abs(a[i][j]);
      }
      // Non-finite sums would never leave the scaling loops below.
      if (c === 0 || r === 0 || !Number.isFinite(c) || !Number.isFinite(r)) continue;
      let g = r / RADIX;
      let f = 1;
      const s = c + r;
      while (c < g) {
        f *= RADIX;
        c *= sqrdx;
      }
      g = r * RADIX;
      while (c > g) {
        f /= RADIX;
        c /= sqrdx;
      }
      if ((c + r) / f < 0.95 * s) {
        done = false;
        g = 1 / f;
        for (let j = 1; j <= n; j++) a[i][j] *= g;
        for (let j = 1; j <= n; j++) a[j][i] *= f;
      }
    }
  }
}

function toHessenberg(a: number[][], n: number): void {
  for (let m = 2; m < n; m++) {
    let x = 0;
    let i = m;
    for (let j = m; j <= n; j++) {
      if (Math.abs(a[j][m - 1]) > Math.abs(x)) {
        x = a[j][m - 1];
        i = j;
      }
    }
    if (i !== m) {
      for (let j = m - 1; j <= n; j++) [a[i][j], a[m][j]] = [a[m][j], a[i][j]];
      for (let j = 1; j <= n; j++) [a[j][i], a[j][m]] = [a[j][m], a[j][i]];
    }
    if (x !== 0) {
      for (i = m + 1; i <= n; i++) {
        let y = a[i][m - 1];
        if (y !== 0) {
          y /= x;
          a[i][m - 1] = y;
          for (let j = m; j <= n; j++) a[i][j] -= y * a[m][j];
          for (let j = 1; j <= n; j++) a[j][m] += y * a[j][i];
        }
      }
    }
  }
}

const sign = (a: number, b: number): number => (b >= 0 ? Math.abs(a) : -Math.abs(a));

function hqr(a: number[][], n: number, wr: Float64Array, wi: Float64Array): boolean {
  let anorm = 0;
  for (let i = 1; i <= n; i++) for (let j = Math.max(i - 1, 1); j <= n; j++) anorm += Math.abs(a[i][j]);
  let nn = n;
  let t = 0;
  let p = 0;
  let q = 0;
  let r = 0;
  let s = 0;
  let w = 0;
  let x = 0;
  let y = 0;
  let z = 0;
  while (nn >= 1) {
    let its = 0;
    let l: number;
    do {
      for (l = nn; l >= 2; l--) {
        s = Math.abs(a[l - 1][l - 1]) + Math.abs(a[l][l]);
        if (s === 0) s = anorm;
        if (Math.abs(a[l][l - 1]) + s === s) {
          a[l][l - 1] = 0;
          break;
        }
      }
      x = a[nn][nn];
      if (l === nn) {
        wr[nn] = x + t;
        wi[nn--] = 0;
      } else {
        y = a[nn - 1][nn - 1];
        w = a[nn][nn - 1] * a[nn - 1][nn];
        if (l === nn - 1) {
          p = 0.5 * (y - x);
          q = p * p + w;
          z = Math.sqrt(Math.abs(q));
          x += t;
          if (q >= 0) {
            z = p + sign(z, p);
            wr[nn - 1] = wr[nn] = x + z;
            if (z !== 0) wr[nn] = x - w / z;
            wi[nn - 1] = wi[nn] = 0;
          } else {
            wr[nn - 1] = wr[nn] = x + p;
            wi[nn - 1] = -(wi[nn] = z);
          }
          nn -= 2;
        } else {
          if (its === 60) return false;
          if (its === 10 || its === 20 || its === 40) {
            // Exceptional shift, to break cycles.
            t += x;
            for (let i = 1; i <= nn; i++) a[i][i] -= x;
            s = Math.abs(a[nn][nn - 1]) + Math.abs(a[nn - 1][nn - 2]);
            y = x = 0.75 * s;
            w = -0.4375 * s * s;
          }
          ++its;
          let m: number;
          for (m = nn - 2; m >= l; m--) {
            z = a[m][m];
            r = x - z;
            s = y - z;
            p = (r * s - w) / a[m + 1][m] + a[m][m + 1];
            q = a[m + 1][m + 1] - z - r - s;
            r = a[m + 2][m + 1];
            s = Math.abs(p) + Math.abs(q) + Math.abs(r);
            p /= s;
            q /= s;
            r /= s;
            if (m === l) break;
            const u = Math.abs(a[m][m - 1]) * (Math.abs(q) + Math.abs(r));
            const v = Math.abs(p) * (Math.abs(a[m - 1][m - 1]) + Math.abs(z) + Math.abs(a[m + 1][m + 1]));
            if (u + v === v) break;
          }
          for (let i = m + 2; i <= nn; i++) {
            a[i][i - 2] = 0;
            if (i !== m + 2) a[i][i - 3] = 0;
          }
          for (let k = m; k <= nn - 1; k++) {
            if (k !== m) {
              p = a[k][k - 1];
              q = a[k + 1][k - 1];
              r = 0;
              if (k !== nn - 1) r = a[k + 2][k - 1];
              x = Math.abs(p) + Math.abs(q) + Math.abs(r);
              if (x !== 0) {
                p /= x;
                q /= x;
                r /= x;
              }
            }
            s = sign(Math.sqrt(p * p + q * q + r * r), p);
            if (s !== 0) {
              if (k === m) {
                if (l !== m) a[k][k - 1] = -a[k][k - 1];
              } else {
                a[k][k - 1] = -s * x;
              }
              p += s;
              x = p / s;
              y = q / s;
              z = r / s;
              q /= p;
              r /= p;
              for (let j = k; j <= nn; j++) {
                p = a[k][j] + q * a[k + 1][j];
                if (k !== nn - 1) {
                  p += r * a[k + 2][j];
                  a[k + 2][j] -= p * z;
                }
                a[k + 1][j] -= p * y;
                a[k][j] -= p * x;
              }
              const mmin = nn < k + 3 ? nn : k + 3;
              for (let i = l; i <= mmin; i++) {
                p = x * a[i][k] + y * a[i][k + 1];
                if (k !== nn - 1) {
                  p += z * a[i][k + 2];
                  a[i][k + 2] -= p * r;
                }
                a[i][k + 1] -= p * q;
                a[i][k] -= p;
              }
            }
          }
        }
      }
    } while (l < nn - 1);
  }
  return true;
}
