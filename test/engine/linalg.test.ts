// The dense linear algebra of the engine against references outside it:
// polynomials with known roots (companion matrices, coefficients formed exactly
// in integer arithmetic), matrices with a known spectrum built as S·D·S⁻¹ with
// an exactly invertible S, orthogonal similarities of a known spectrum (whose
// eigenvalues may move by no more than the rounding of the matrix, by the
// Bauer–Fike theorem for normal matrices: Golub & Van Loan, "Matrix
// Computations", §7.2, the section number from memory), and small cases whose characteristic polynomials were
// worked by hand.
import { describe, expect, it } from 'vitest';
import { complexLU, complexSolve, eigenvalues, realLU, realSolve } from '../../src/engine/linalg';

interface Complex {
  re: number;
  im: number;
}

/** Runs eigenvalues() and fails the test on null; the input must be left unchanged. */
function eig(a: ArrayLike<number>, n: number): Complex[] {
  const m = Float64Array.from(a);
  const result = eigenvalues(m, n);
  expect(result).not.toBeNull();
  expect(Array.from(m)).toEqual(Array.from(a));
  return Array.from(result!.re, (re, i) => ({ re, im: result!.im[i] }));
}

/**
 * Pairs each computed eigenvalue with the nearest unused expected one and
 * returns, for each expected one, |computed − expected| / |expected|.
 */
function relativeErrors(got: Complex[], expected: Complex[]): number[] {
  expect(got.length).toBe(expected.length);
  const used = expected.map(() => false);
  const errors = expected.map(() => Infinity);
  // Greedy matching, closest pairs first, so that neighbours are not swapped.
  const pairs: Array<[number, number, number]> = [];
  got.forEach((g, i) => expected.forEach((e, j) => pairs.push([Math.hypot(g.re - e.re, g.im - e.im), i, j])));
  pairs.sort((a, b) => a[0] - b[0]);
  const taken = got.map(() => false);
  for (const [d, i, j] of pairs) {
    if (taken[i] || used[j]) continue;
    taken[i] = true;
    used[j] = true;
    errors[j] = d / Math.hypot(expected[j].re, expected[j].im);
  }
  return errors;
}

const real = (...xs: number[]): Complex[] => xs.map((re) => ({ re, im: 0 }));

/**
 * Monic polynomial coefficients from roots, exactly, in integer arithmetic.
 * Roots are given as integer real roots and integer complex pairs (re, im).
 * Returns [c0, …, c(n−1)] of sⁿ + c(n−1)·sⁿ⁻¹ + … + c0.
 */
function exactCoefficients(realRoots: bigint[], pairs: Array<[bigint, bigint]> = []): bigint[] {
  let p: bigint[] = [1n]; // highest degree first
  const multiply = (q: bigint[]) => {
    const out = new Array<bigint>(p.length + q.length - 1).fill(0n);
    p.forEach((a, i) => q.forEach((b, j) => (out[i + j] += a * b)));
    p = out;
  };
  for (const r of realRoots) multiply([1n, -r]);
  for (const [re, im] of pairs) multiply([1n, -2n * re, re * re + im * im]);
  return p.slice(1).reverse();
}

/** Frobenius companion matrix of sⁿ + c(n−1)·sⁿ⁻¹ + … + c0, whose eigenvalues are the polynomial's roots. */
function companion(coefficients: bigint[]): Float64Array {
  const n = coefficients.length;
  const a = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    const c = Number(coefficients[n - 1 - j]);
    // The reference is exact only if every coefficient is exact in double precision.
    expect(BigInt(c)).toBe(coefficients[n - 1 - j]);
    a[j] = -c;
  }
  for (let i = 1; i < n; i++) a[i * n + i - 1] = 1;
  return a;
}

describe('eigenvalues: small cases worked by hand from the characteristic polynomial', () => {
  it('finds 1 and 3 for [2 1; 1 2]: (λ − 2)² − 1 = 0', () => {
    expect(Math.max(...relativeErrors(eig([2, 1, 1, 2], 2), real(1, 3)))).toBeLessThan(1e-15);
  });

  it('finds −1 and −2 for [0 1; −2 −3]: λ² + 3λ + 2 = 0', () => {
    expect(Math.max(...relativeErrors(eig([0, 1, -2, -3], 2), real(-1, -2)))).toBeLessThan(1e-15);
  });

  it('finds 2 ± j for [1 −2; 1 3]: λ² − 4λ + 5 = 0', () => {
    const got = eig([1, -2, 1, 3], 2);
    expect(Math.max(...relativeErrors(got, [{ re: 2, im: 1 }, { re: 2, im: -1 }]))).toBeLessThan(1e-15);
  });

  it('finds 2 − √2, 2, 2 + √2 for the second-difference matrix [2 −1 0; −1 2 −1; 0 −1 2]: (2 − λ)·((2 − λ)² − 2) = 0', () => {
    const got = eig([2, -1, 0, -1, 2, -1, 0, -1, 2], 3);
    expect(Math.max(...relativeErrors(got, real(2 - Math.SQRT2, 2, 2 + Math.SQRT2)))).toBeLessThan(1e-14);
  });

  it('finds 2, 1 and 11 for [2 0 0; 0 3 4; 0 4 9]: (2 − λ)·(λ² − 12λ + 11) = 0', () => {
    expect(Math.max(...relativeErrors(eig([2, 0, 0, 0, 3, 4, 0, 4, 9], 3), real(2, 1, 11)))).toBeLessThan(1e-14);
  });

  it('finds the cube roots of 1 for the cyclic permutation [0 0 1; 1 0 0; 0 1 0], where the standard shifts stall: λ³ − 1 = 0', () => {
    // The matrix is orthogonal and already Hessenberg; the shifts from its
    // trailing 2×2 block (both zero) leave it unchanged, so only the
    // exceptional shift gets the iteration going.
    const got = eig([0, 0, 1, 1, 0, 0, 0, 1, 0], 3);
    const h = Math.sqrt(3) / 2;
    expect(Math.max(...relativeErrors(got, [{ re: 1, im: 0 }, { re: -0.5, im: h }, { re: -0.5, im: -h }]))).toBeLessThan(1e-14);
  });

  it('finds ±1 and ±j for the 4×4 cyclic permutation: λ⁴ − 1 = 0', () => {
    const a = new Float64Array(16);
    a[3] = 1;
    for (let i = 1; i < 4; i++) a[i * 4 + i - 1] = 1;
    const got = eig(a, 4);
    const expected = [...real(1, -1), { re: 0, im: 1 }, { re: 0, im: -1 }];
    expect(Math.max(...relativeErrors(got, expected))).toBeLessThan(1e-14);
  });

  it('handles the empty matrix, a 1×1 matrix and the zero matrix', () => {
    expect(eig([], 0)).toEqual([]);
    expect(eig([-3.5], 1)).toEqual(real(-3.5));
    expect(eig(new Float64Array(9), 3)).toEqual(real(0, 0, 0));
  });

  it('returns null for a matrix holding NaN or an infinity', () => {
    expect(eigenvalues(Float64Array.from([1, NaN, 0, 1]), 2)).toBeNull();
    expect(eigenvalues(Float64Array.from([1, 0, Infinity, 1]), 2)).toBeNull();
  });
});

describe('eigenvalues: companion matrices of polynomials with known roots', () => {
  it('resolves roots at −1, −1e3, −1e6 and −1e9 each to full relative accuracy', () => {
    const roots = [1n, 1000n, 1000000n, 1000000000n];
    const got = eig(companion(exactCoefficients(roots.map((r) => -r))), 4);
    const errors = relativeErrors(got, real(...roots.map((r) => -Number(r))));
    // Balancing is what makes this possible: unbalanced, the matrix holds the
    // coefficient 1e18, and rounding errors of ε·1e18 ≈ 200 swamp the root at −1.
    expect(Math.max(...errors)).toBeLessThan(1e-13);
  });

  it('resolves one root per decade from −1 to −1e5', () => {
    const roots = [1n, 10n, 100n, 1000n, 10000n, 100000n];
    const got = eig(companion(exactCoefficients(roots.map((r) => -r))), roots.length);
    expect(Math.max(...relativeErrors(got, real(...roots.map((r) => -Number(r)))))).toBeLessThan(1e-12);
  });

  it('finds complex pairs −1 ± 2j and −3e3 ± 4e3j beside a real root at −1e6', () => {
    const coefficients = exactCoefficients(
      [-1000000n],
      [
        [-1n, 2n],
        [-3000n, 4000n],
      ],
    );
    const got = eig(companion(coefficients), 5);
    const expected = [
      { re: -1, im: 2 },
      { re: -1, im: -2 },
      { re: -3000, im: 4000 },
      { re: -3000, im: -4000 },
      { re: -1e6, im: 0 },
    ];
    expect(Math.max(...relativeErrors(got, expected))).toBeLessThan(1e-12);
    // Complex eigenvalues of a real matrix come in exactly conjugate pairs.
    const complex = got.filter((g) => g.im !== 0).sort((a, b) => a.re - b.re || a.im - b.im);
    expect(complex.length).toBe(4);
    expect(complex[0].re).toBe(complex[1].re);
    expect(complex[0].im).toBe(-complex[1].im);
  });

  it('finds a triple root at −2 to the accuracy a triple root allows, about ε^(1/3)', () => {
    // A root of multiplicity m moves by about (perturbation)^(1/m) (Wilkinson,
    // "The Algebraic Eigenvalue Problem", ch. 2 — from memory); their mean,
    // fixed by the trace, stays accurate.
    const got = eig(companion(exactCoefficients([-2n, -2n, -2n])), 3);
    expect(Math.max(...relativeErrors(got, real(-2, -2, -2)))).toBeLessThan(1e-4);
    const mean = got.reduce((s, g) => s + g.re, 0) / 3;
    expect(Math.abs(mean + 2)).toBeLessThan(1e-14);
    expect(Math.abs(got.reduce((s, g) => s + g.im, 0))).toBeLessThan(1e-14);
  });

  it('finds a double root at −1 to about √ε and a simple root at −1e3 beside it to full accuracy', () => {
    const got = eig(companion(exactCoefficients([-1n, -1n, -1000n])), 3);
    const errors = relativeErrors(got, real(-1, -1, -1000));
    expect(Math.max(errors[0], errors[1])).toBeLessThan(1e-6);
    expect(errors[2]).toBeLessThan(1e-14);
  });
});

/** Exact integer matrix product (row-major, n×n). */
function multiplyExact(a: bigint[], b: bigint[], n: number): bigint[] {
  const c = new Array<bigint>(n * n).fill(0n);
  for (let i = 0; i < n; i++) for (let k = 0; k < n; k++) for (let j = 0; j < n; j++) c[i * n + j] += a[i * n + k] * b[k * n + j];
  return c;
}

/** Inverse of a unit lower-triangular integer matrix: integer again, by forward substitution. */
function unitLowerInverse(l: bigint[], n: number): bigint[] {
  const inv = new Array<bigint>(n * n).fill(0n);
  for (let j = 0; j < n; j++) {
    inv[j * n + j] = 1n;
    for (let i = j + 1; i < n; i++) {
      let s = 0n;
      for (let k = j; k < i; k++) s += l[i * n + k] * inv[k * n + j];
      inv[i * n + j] = -s;
    }
  }
  return inv;
}

const transpose = (a: bigint[], n: number): bigint[] => a.map((_, idx) => a[(idx % n) * n + Math.floor(idx / n)]);

/** A deterministic generator (a linear congruential one) so that the cases are the same on every run. */
function lcg(seed: number): () => number {
  let state = seed;
  return () => {
    state = (state * 1103515245 + 12345) % 2147483648;
    return state / 2147483648;
  };
}

describe('eigenvalues: matrices with a known spectrum built as S·D·S⁻¹', () => {
  // S = L·Uᵀ with unit lower-triangular integer L and U: det S = 1, so S⁻¹ is
  // an integer matrix and A = S·D·S⁻¹ is formed exactly; D is block diagonal
  // with 1×1 blocks (real eigenvalues) and 2×2 blocks [a b; −b a] (a ± jb).
  function knownSpectrum(blocks: Array<number | [number, number]>, random: () => number, spread: number) {
    const n = blocks.reduce<number>((s, b) => s + (typeof b === 'number' ? 1 : 2), 0);
    const d = new Array<bigint>(n * n).fill(0n);
    const expected: Complex[] = [];
    let k = 0;
    for (const b of blocks) {
      if (typeof b === 'number') {
        d[k * n + k] = BigInt(b);
        expected.push({ re: b, im: 0 });
        k += 1;
      } else {
        const [re, im] = b;
        d[k * n + k] = BigInt(re);
        d[(k + 1) * n + k + 1] = BigInt(re);
        d[k * n + k + 1] = BigInt(im);
        d[(k + 1) * n + k] = BigInt(-im);
        expected.push({ re, im }, { re, im: -im });
        k += 2;
      }
    }
    const unitLower = () => {
      const l = new Array<bigint>(n * n).fill(0n);
      for (let i = 0; i < n; i++) {
        l[i * n + i] = 1n;
        for (let j = 0; j < i; j++) l[i * n + j] = BigInt(Math.floor(random() * (2 * spread + 1)) - spread);
      }
      return l;
    };
    const l = unitLower();
    const u = unitLower();
    const s = multiplyExact(l, transpose(u, n), n);
    const sInv = multiplyExact(transpose(unitLowerInverse(u, n), n), unitLowerInverse(l, n), n);
    const identity = multiplyExact(s, sInv, n);
    identity.forEach((v, idx) => expect(v).toBe(idx % (n + 1) === 0 ? 1n : 0n));
    const a = multiplyExact(multiplyExact(s, d, n), sInv, n).map((v) => {
      const x = Number(v);
      expect(BigInt(x)).toBe(v); // exact in double precision
      return x;
    });
    return { a, n, expected };
  }

  it('recovers a mixed real and complex spectrum of a 7×7 non-normal matrix', () => {
    const { a, n, expected } = knownSpectrum([-1, [-3, 4], 5, -20, [-7, 1]], lcg(7), 1);
    expect(Math.max(...relativeErrors(eig(a, n), expected))).toBeLessThan(1e-12);
  });

  it('recovers the spectra of 40 seeded random cases of sizes 2 to 8', () => {
    const random = lcg(2026);
    let worst = 0;
    for (let t = 0; t < 40; t++) {
      const blocks: Array<number | [number, number]> = [];
      const size = 2 + Math.floor(random() * 7);
      let n = 0;
      while (n < size) {
        const re = Math.floor(random() * 41) - 20 || 1;
        if (n + 2 <= size && random() < 0.4) {
          blocks.push([re, 1 + Math.floor(random() * 20)]);
          n += 2;
        } else {
          blocks.push(re);
          n += 1;
        }
      }
      const { a, expected } = knownSpectrum(blocks, random, 1);
      worst = Math.max(worst, ...relativeErrors(eig(a, n), expected));
    }
    expect(worst).toBeLessThan(1e-10);
  });
});

describe('eigenvalues: orthogonal similarities of a known spectrum', () => {
  // A = Q·D·Qᵀ with Q a product of Householder reflections and D block diagonal
  // as above: A is normal, so each eigenvalue moves by at most ‖E‖₂ for a
  // perturbation E (Bauer–Fike), and both the rounding of A and a backward
  // stable QR keep ‖E‖₂ at a small multiple of ε·‖A‖.
  it('keeps every eigenvalue within 1e-13·‖A‖ of the true one, on 60 seeded random cases', () => {
    const random = lcg(41);
    let worst = 0;
    for (let t = 0; t < 60; t++) {
      const n = 2 + Math.floor(random() * 11);
      const d = new Float64Array(n * n);
      const expected: Complex[] = [];
      for (let k = 0; k < n; ) {
        const re = (random() - 0.5) * 10 ** (2 * random());
        if (k + 2 <= n && random() < 0.5) {
          const im = random() * 10;
          d[k * n + k] = re;
          d[(k + 1) * n + k + 1] = re;
          d[k * n + k + 1] = im;
          d[(k + 1) * n + k] = -im;
          expected.push({ re, im }, { re, im: -im });
          k += 2;
        } else {
          d[k * n + k] = re;
          expected.push({ re, im: 0 });
          k += 1;
        }
      }
      let a: Float64Array = d;
      for (let r = 0; r < 3; r++) {
        // A ← H·A·H with H = I − 2·v·vᵀ/(vᵀv), symmetric and orthogonal.
        const v = Array.from({ length: n }, () => random() - 0.5);
        const vv = v.reduce((s, x) => s + x * x, 0);
        const h = new Float64Array(n * n);
        for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) h[i * n + j] = (i === j ? 1 : 0) - (2 * v[i] * v[j]) / vv;
        a = multiply(multiply(h, a, n), h, n);
      }
      const norm = Math.max(...expected.map((e) => Math.hypot(e.re, e.im)));
      const got = eig(a, n);
      const errors = relativeErrors(got, expected);
      errors.forEach((e, j) => (worst = Math.max(worst, (e * Math.hypot(expected[j].re, expected[j].im)) / norm)));
    }
    expect(worst).toBeLessThan(1e-13);
  });
});

function multiply(a: Float64Array, b: Float64Array, n: number): Float64Array {
  const c = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let k = 0; k < n; k++) for (let j = 0; j < n; j++) c[i * n + j] += a[i * n + k] * b[k * n + j];
  return c;
}

describe('eigenvalues: badly scaled matrices', () => {
  it('finds the spectrum of D·B·D⁻¹ with D spanning 24 decades as accurately as that of B', () => {
    // B = the second-difference matrix tridiag(−1, 2, −1) of order 5, with
    // eigenvalues 2 − 2·cos(kπ/6), k = 1…5 (the closed form 2 − 2·cos(kπ/(n+1))
    // recalled from memory; for n = 3 it gives the hand-worked case above). Scaling
    // by powers of ten is not undone exactly by balancing (powers of two),
    // yet the norm returns to that of B; unbalanced, the norm would be ~1e12
    // and the small eigenvalues would be lost.
    const n = 5;
    const scale = [1, 1e-12, 1e6, 1e12, 1e-6];
    const a = new Float64Array(n * n);
    for (let i = 0; i < n; i++) {
      a[i * n + i] = 2;
      if (i > 0) a[i * n + i - 1] = (-1 * scale[i]) / scale[i - 1];
      if (i < n - 1) a[i * n + i + 1] = (-1 * scale[i]) / scale[i + 1];
    }
    const expected = real(...[1, 2, 3, 4, 5].map((k) => 2 - 2 * Math.cos((k * Math.PI) / 6)));
    expect(Math.max(...relativeErrors(eig(a, n), expected))).toBeLessThan(1e-13);
  });

  it('returns the diagonal of a lower-triangular matrix, 1e-12 to 1e4, each to full relative accuracy', () => {
    // The eigenvalues of a triangular matrix are its diagonal entries
    // (det(λI − A) is the product of the diagonal of λI − A). Balancing's
    // permutation step finds the triangular structure; the QR iteration on the
    // dense Hessenberg form would resolve 1e-12 only to about ε·1e4 absolute.
    const diagonal = [1e-12, 1, -3, 1e4, 0.5];
    const n = diagonal.length;
    const a = new Float64Array(n * n);
    const random = lcg(5);
    for (let i = 0; i < n; i++) {
      a[i * n + i] = diagonal[i];
      for (let j = 0; j < i; j++) a[i * n + j] = 10 * (random() - 0.5);
    }
    expect(Math.max(...relativeErrors(eig(a, n), real(...diagonal)))).toBeLessThan(1e-15);
  });

  it('finds the exact zero eigenvalues of a matrix with zero columns, as (A + σB)⁻¹B has for a node without capacitance', () => {
    // Columns 1 and 3 are zero, so expanding det(λI − A) along them gives λ²
    // times the determinant of rows and columns 0 and 2, [λ+2 −1; −1 λ+2],
    // whose roots are −1 and −3.
    const a = [-2, 0, 1, 0, 5, 0, 7, 0, 1, 0, -2, 0, 3, 0, 4, 0];
    const got = eig(a, 4);
    const zeros = got.filter((g) => g.re === 0 && g.im === 0);
    expect(zeros.length).toBe(2);
    const others = got.filter((g) => g.re !== 0 || g.im !== 0);
    expect(Math.max(...relativeErrors(others, real(-1, -3)))).toBeLessThan(1e-15);
  });
});

describe('LU with partial pivoting', () => {
  it('solves a real system whose exact solution is known (b formed from x in exact integer arithmetic)', () => {
    const a = [0, 2, 1, 4, -1, 3, -2, 5, 1];
    const x = [3, -1, 2];
    const b = [0, 1, 2].map((i) => a[i * 3] * x[0] + a[i * 3 + 1] * x[1] + a[i * 3 + 2] * x[2]);
    const lu = realLU(Float64Array.from(a), 3);
    expect(lu).not.toBeNull();
    // a[0][0] = 0: the first pivot must come from another row.
    expect(lu!.perm[0]).not.toBe(0);
    const got = realSolve(lu!, 3, b);
    got.forEach((v, i) => expect(Math.abs(v - x[i])).toBeLessThan(1e-15 * 4));
  });

  it('reports an exactly singular real matrix as null', () => {
    // Row 2 = 2·row 1: elimination leaves an exact zero pivot.
    expect(realLU(Float64Array.from([1, 2, 2, 4]), 2)).toBeNull();
  });

  it('solves a complex system and gives the determinant worked by hand', () => {
    // A = [1+j  2; 3  4−j]: det = (1+j)(4−j) − 6 = 5 + 3j − 6 = −1 + 3j.
    const re = Float64Array.from([1, 2, 3, 4]);
    const im = Float64Array.from([1, 0, 0, -1]);
    const lu = complexLU(re.slice(), im.slice(), 2);
    let detRe = lu.sign;
    let detIm = 0;
    for (let i = 0; i < 2; i++) {
      const pr = lu.re[i * 2 + i];
      const pi = lu.im[i * 2 + i];
      [detRe, detIm] = [detRe * pr - detIm * pi, detRe * pi + detIm * pr];
    }
    expect(Math.abs(detRe + 1)).toBeLessThan(1e-15 * 4);
    expect(Math.abs(detIm - 3)).toBeLessThan(1e-15 * 4);
    // x = (1 − j, 2j): b = A·x = ((1+j)(1−j) + 4j, 3(1−j) + (4−j)·2j) = (2 + 4j, 5 + 5j).
    const xr = new Float64Array(2);
    const xi = new Float64Array(2);
    complexSolve(lu, [2, 5], [4, 5], xr, xi);
    expect(Math.hypot(xr[0] - 1, xi[0] + 1)).toBeLessThan(1e-15 * 4);
    expect(Math.hypot(xr[1], xi[1] - 2)).toBeLessThan(1e-15 * 4);
  });
});
