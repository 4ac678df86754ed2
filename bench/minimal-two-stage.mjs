// A minimal closed-form evaluation of the two-stage Miller network of
// src/topologies/two-stage-miller.ts, in plain JavaScript with no project
// imports: the reference that bench/engine.mjs times the engine against
// (what one evaluation costs when nothing is general), and a generator of
// exact figures for the bench's seeded specs.
//
// The network (read from the topology's `network()`): node n1 with gm1·vin
// leaving it, r1 and c1 to ground; node out with gm2·v(n1) leaving it, r2, rl
// and c2 + cl to ground; cc from n1 to out, or cc in series with rz through an
// inner node nz. Nodal analysis (KCL at each node, currents leaving):
//
//   n1:   gm1·vin + (g1 + s·c1)·v1 + Y·(v1 − vo) = 0
//   out:  gm2·v1  + (g2 + s·c2')·vo + Y·(vo − v1) = 0
//
// with g1 = 1/r1, g2 = 1/r2 + 1/rl, c2' = c2 + cl and Y = s·cc/(1 + s·rz·cc)
// the admittance of the cc–rz branch (the node nz eliminated: with rz the
// network has 3 nodes, and the Schur complement on nz leaves these 2). Cramer's
// rule, both sides multiplied by (1 + s·τ), τ = rz·cc:
//
//   A(s) = vo/vin = N(s)/D(s)
//   N(s) = gm1·gm2 + s·gm1·cc·(gm2·rz − 1)
//   D(s) = (1 + s·τ)(g1 + s·c1)(g2 + s·c2') + s·cc·(g1 + g2 + gm2 + s·(c1 + c2'))
//        = d0 + d1·s + d2·s² + d3·s³
//   d0 = g1·g2
//   d1 = g1·c2' + g2·c1 + τ·g1·g2 + cc·(g1 + g2 + gm2)
//   d2 = c1·c2' + τ·(g1·c2' + g2·c1) + cc·(c1 + c2')
//   d3 = τ·c1·c2'
//
// With rz = 0 this is the two-pole form of Gray, Hurst, Lewis, Meyer, "Analysis
// and Design of Analog Integrated Circuits", ch. 9, zero at +gm2/cc; with rz
// the zero moves to 1/(cc·(1/gm2 − rz)), their nulling-resistor result.
//
// Poles: the roots of D (quadratic formula in its cancellation-free form, or
// one real root of the cubic by a bracketed Newton iteration, deflation, and
// the quadratic formula). |A(jω)|² = 1 is a polynomial equation in x = ω²:
//
//   F(x) = β²·|N(jω)|² − |D(jω)|²
//        = β²·(n0² + n1²·x) − (d0 − d2·x)² − x·(d1 − d3·x)²,
//
// of degree 3 (2 without rz); its positive roots are the crossovers, the
// first one with β = 1 the unity-gain frequency. The phase at a crossover is
// summed from the root factors, arg(1 − jω/z) − Σ arg(1 − jω/p), as the
// engine does, and the phase margin is the worst of 180° plus that phase
// (within ±180°), when the closed loop is stable.

const TWO_PI = 2 * Math.PI;
const DEG = 180 / Math.PI;

/**
 * The roots of c0 + c1·x + c2·x² (c2 ≠ 0) as [re, im] pairs, computed without
 * subtracting nearly equal numbers: q = −(c1 + sign(c1)·√disc)/2, roots q/c2
 * and c0/q (the classical remedy for the cancellation in the textbook formula:
 * G. E. Forsythe, "How do you solve a quadratic equation?", Stanford
 * technical report CS40, 1966).
 */
function quadraticRoots(c0, c1, c2) {
  const disc = c1 * c1 - 4 * c2 * c0;
  if (disc >= 0) {
    const sq = Math.sqrt(disc);
    const q = -0.5 * (c1 + (c1 >= 0 ? sq : -sq));
    if (q === 0) return [[0, 0], [0, 0]];
    return [[q / c2, 0], [c0 / q, 0]];
  }
  const re = -c1 / (2 * c2);
  const im = Math.sqrt(-disc) / (2 * Math.abs(c2));
  return [[re, im], [re, -im]];
}

/**
 * Fujiwara's bound on the magnitudes of the roots of c[0] + c[1]·x + … + c[n]·xⁿ
 * (M. Fujiwara, Tôhoku Math. J. 10, 1916): 2·max |c[n−k]/c[n]|^(1/k), the
 * last term halved.
 */
function rootBound(c) {
  const n = c.length - 1;
  let b = 0;
  for (let k = 1; k <= n; k++) {
    const ratio = Math.abs(c[n - k] / c[n]) / (k === n ? 2 : 1);
    b = Math.max(b, ratio ** (1 / k));
  }
  return 2 * b;
}

/**
 * One positive real root of the cubic g(u) = c0 + c1·u + c2·u² + c3·u³ when
 * g(0) = c0 and g(+∞) have opposite signs (so one exists). The bracket comes
 * from root bounds (Fujiwara's for g and for its reversal); inside it, Newton
 * steps from u = 0, replaced by a bisection of the bracket in log u whenever a
 * step leaves the bracket or fails to halve the previous step (Newton's method
 * safeguarded by bisection, as described in G. Dahlquist, Å. Björck,
 * "Numerical Methods", 1974; in log u because the roots span many decades).
 */
function positiveCubicRoot(c0, c1, c2, c3) {
  let lo = 0.5 / rootBound([c3, c2, c1, c0]);
  let hi = 2 * rootBound([c0, c1, c2, c3]);
  const sLo = Math.sign(c0);
  let u = -c0 / c1;
  if (!(u > lo && u < hi)) u = Math.sqrt(lo * hi);
  let lastStep = Infinity;
  for (let it = 0; it < 200; it++) {
    const g = c0 + u * (c1 + u * (c2 + u * c3));
    if (g === 0) return u;
    if (Math.sign(g) === sLo) lo = u;
    else hi = u;
    const dg = c1 + u * (2 * c2 + u * 3 * c3);
    let next = u - g / dg;
    if (!(next > lo && next < hi) || Math.abs(next - u) > 0.5 * lastStep) next = Math.sqrt(lo * hi);
    const step = Math.abs(next - u);
    if (step <= 4e-16 * next) return next;
    lastStep = step;
    u = next;
  }
  return u;
}

/** Newton refinement of a root of a real polynomial (coefficients ascending), in complex arithmetic; kept only while |p| falls. */
function polish(c, re, im) {
  const evalAt = (xr, xi) => {
    // Horner for p and p′ together.
    let pr = c[c.length - 1];
    let pi = 0;
    let dr = 0;
    let di = 0;
    for (let k = c.length - 2; k >= 0; k--) {
      const tr = dr * xr - di * xi + pr;
      di = dr * xi + di * xr + pi;
      dr = tr;
      const ur = pr * xr - pi * xi + c[k];
      pi = pr * xi + pi * xr;
      pr = ur;
    }
    return [pr, pi, dr, di];
  };
  let [pr, pi, dr, di] = evalAt(re, im);
  let size = Math.hypot(pr, pi);
  for (let it = 0; it < 3 && size > 0; it++) {
    const den = dr * dr + di * di;
    if (!(den > 0)) break;
    // (p / p′) = p·conj(p′)/|p′|²
    const nr = re - (pr * dr + pi * di) / den;
    const ni = im === 0 ? 0 : im - (pi * dr - pr * di) / den;
    const [qr, qi, er, ei] = evalAt(nr, ni);
    const next = Math.hypot(qr, qi);
    if (!(next < size)) break;
    [re, im, pr, pi, dr, di, size] = [nr, ni, qr, qi, er, ei, next];
  }
  return [re, im];
}

/**
 * The roots of c0 + c1·x + c2·x² + c3·x³ (c3 ≠ 0) as [re, im] pairs: one real
 * root r by positiveCubicRoot (on x or −x, whichever side g(0) and g(∞)
 * disagree), then the quadratic factor x² + b·x + c. c = −c0/(c3·r) from the
 * constant term; b from whichever end of the coefficient list cancels less
 * (b = c2/c3 + r loses the small roots when r is the largest, b = (c − c1/c3)/r
 * loses the large ones when r is the smallest); then every root is polished
 * on the cubic itself.
 */
function cubicRoots(c0, c1, c2, c3) {
  if (c0 === 0) return [[0, 0], ...quadraticRoots(c1, c2, c3)];
  const side = Math.sign(c0) !== Math.sign(c3) ? 1 : -1;
  const r = side * positiveCubicRoot(c0, side * c1, c2, side * c3);
  const c = -c0 / (c3 * r);
  const top = c2 / c3 + r;
  const bottom = (c - c1 / c3) / r;
  const topError = Math.abs(c2 / c3) + Math.abs(r);
  const bottomError = (Math.abs(c) + Math.abs(c1 / c3)) / Math.abs(r);
  const b = topError <= bottomError ? top : bottom;
  const coef = [c0, c1, c2, c3];
  return [[r, 0], ...quadraticRoots(c, b, 1)].map(([re, im]) => polish(coef, re, im));
}

/** Positive real roots of a polynomial of degree 2 or 3 (ascending coefficients, leading one non-zero). */
function positiveRoots(c) {
  const roots = c.length === 4 && c[3] !== 0 ? cubicRoots(c[0], c[1], c[2], c[3]) : quadraticRoots(c[0], c[1], c[2]).map(([re, im]) => polish(c.slice(0, 3), re, im));
  return roots.filter(([re, im]) => im === 0 && re > 0).map(([re]) => re).sort((a, b) => a - b);
}

/** An angle into (−180°, 180°]: the margin each crossover would give, as the engine states it. */
const wrapDeg = (x) => x - 360 * Math.ceil((x - 180) / 360);

/** arg(1 − jω/r) for a root r = (re, im), continuous in ω off the imaginary axis (as src/engine/analyze.ts sums it). */
function rootPhase(re, im, w) {
  const m2 = re * re + im * im;
  return m2 === 0 ? Math.PI / 2 : Math.atan2((-w * re) / m2, 1 - (w * im) / m2);
}

/**
 * Exact figures of the two-stage Miller network for SI values
 * {gm1, r1, c1, gm2, r2, c2, cc, rz?, cl?, rl?, beta?}: dcGainDb, gbwHz (unity-gain
 * frequency of A), p1Hz and p2Hz (pole magnitudes, ascending), rhpZeroHz and
 * phaseMarginDeg (null when they do not exist), and the roots themselves in rad/s.
 */
export function twoStageFigures(v) {
  const rz = v.rz ?? 0;
  const beta = v.beta ?? 1;
  const g1 = 1 / v.r1;
  const g2 = 1 / v.r2 + (v.rl !== undefined && Number.isFinite(v.rl) ? 1 / v.rl : 0);
  const c1 = v.c1;
  const c2l = v.c2 + (v.cl ?? 0);
  const cc = v.cc;
  const tau = rz * cc;
  const d0 = g1 * g2;
  const d1 = g1 * c2l + g2 * c1 + tau * g1 * g2 + cc * (g1 + g2 + v.gm2);
  const d2 = c1 * c2l + tau * (g1 * c2l + g2 * c1) + cc * (c1 + c2l);
  const d3 = tau * c1 * c2l;
  const n0 = v.gm1 * v.gm2;
  const n1 = v.gm1 * cc * (v.gm2 * rz - 1);

  const dcGain = n0 / d0;
  const poles = (d3 !== 0 ? cubicRoots(d0, d1, d2, d3) : quadraticRoots(d0, d1, d2)).sort((a, b) => Math.hypot(a[0], a[1]) - Math.hypot(b[0], b[1]));
  const zero = n1 !== 0 ? -n0 / n1 : null; // real, rad/s; > 0 in the right half-plane

  // F(x) = β²·|N|² − |D|² in powers of x = ω².
  const crossings = (b2) => positiveRoots([b2 * n0 * n0 - d0 * d0, b2 * n1 * n1 - d1 * d1 + 2 * d0 * d2, 2 * d1 * d3 - d2 * d2, -d3 * d3]).map(Math.sqrt);
  const unity = crossings(1);
  const loop = beta === 1 ? unity : crossings(beta * beta);
  const phaseAt = (w) => {
    let ph = zero === null ? 0 : rootPhase(zero, 0, w);
    for (const [re, im] of poles) ph -= rootPhase(re, im, w);
    return ph * DEG; // A(0) > 0: no constant part
  };
  // The closed loop A/(1 + βA) has the characteristic polynomial D + β·N; a
  // loop that is not stable has no margin (so the engine reports it). Stability
  // by the Routh–Hurwitz conditions for degree 2 and 3: every coefficient
  // positive, and for the cubic k2·k1 > k3·k0 (e.g. K. Ogata, "Modern Control
  // Engineering", the Routh stability criterion).
  const k0 = d0 + beta * n0;
  const k1 = d1 + beta * n1;
  const stable = k0 > 0 && k1 > 0 && d2 > 0 && (d3 === 0 || (d3 > 0 && d2 * k1 > d3 * k0));
  let phaseMarginDeg = null;
  if (stable) {
    for (const w of loop) {
      const pm = wrapDeg(180 + phaseAt(w));
      if (phaseMarginDeg === null || pm < phaseMarginDeg) phaseMarginDeg = pm;
    }
  }
  return {
    dcGainDb: 20 * Math.log10(Math.abs(dcGain)),
    gbwHz: unity.length ? unity[0] / TWO_PI : null,
    p1Hz: Math.hypot(...poles[0]) / TWO_PI,
    p2Hz: Math.hypot(...poles[1]) / TWO_PI,
    rhpZeroHz: zero !== null && zero > 0 ? zero / TWO_PI : null,
    phaseMarginDeg,
    poles,
    zero,
  };
}
