// Expected figures of the two-stage Miller amplifier from its closed-form
// transfer function, written here without any code of the tool, so the rule
// tests check the tool against an independent computation.
//
// Eliminating the internal node of the series cc–rz branch (admittance
// Yc = s·cc/(1 + s·cc·rz)) leaves two nodal equations, at the first-stage
// output (Y1 = 1/r1 + s·c1) and at the output (Yo = 1/r2' + s·c2'), whose
// solution is exactly
//   A(s) = gm1·(gm2 − Yc) / (Y1·Yo + Yc·(Y1 + Yo + gm2)),
// and for rz = 0 the familiar form (Gray, Hurst, Lewis, Meyer, "Analysis and
// Design of Analog Integrated Circuits", ch. 9; the form recalled from memory
// and re-derived by hand from the two nodal equations):
//   A(s) = A0·(1 − s·cc/gm2) / (1 + a1·s + a2·s²),
//   a1 = r1(c1 + cc) + r2'(c2' + cc) + gm2·r1·r2'·cc,
//   a2 = r1·r2'·(c1·c2' + cc·(c1 + c2')),   c2' = c2 + cl,  r2' = r2 ∥ rl.
// The zero is exactly s = gm2/(cc·(1 − gm2·rz)); the slew rate is
// min(i1/cc, (i2 − i1)/(c2 + cl)), the output node's total capacitance (Allen & Holberg, "CMOS Analog Circuit Design", ch. 6).

export interface Design {
  gm1: number; r1: number; c1: number; gm2: number; r2: number; c2: number; cc: number;
  rz?: number; i1?: number; i2?: number;
  cl?: number; rl?: number; beta?: number;
}

const TWO_PI = 2 * Math.PI;

interface C { re: number; im: number }
const add = (a: C, b: C): C => ({ re: a.re + b.re, im: a.im + b.im });
const sub = (a: C, b: C): C => ({ re: a.re - b.re, im: a.im - b.im });
const mul = (a: C, b: C): C => ({ re: a.re * b.re - a.im * b.im, im: a.re * b.im + a.im * b.re });
const div = (a: C, b: C): C => {
  const d = b.re * b.re + b.im * b.im;
  return { re: (a.re * b.re + a.im * b.im) / d, im: (a.im * b.re - a.re * b.im) / d };
};
const real = (x: number): C => ({ re: x, im: 0 });

export function loadedOutput(d: Design): { c2l: number; r2l: number } {
  const rl = d.rl ?? Infinity;
  return { c2l: d.c2 + (d.cl ?? 0), r2l: Number.isFinite(rl) ? (d.r2 * rl) / (d.r2 + rl) : d.r2 };
}

/** A(j·2πf) from the closed form above. */
export function gainAt(d: Design, fHz: number): C {
  const { c2l, r2l } = loadedOutput(d);
  const s: C = { re: 0, im: TWO_PI * fHz };
  const rz = d.rz ?? 0;
  const sc = mul(s, real(d.cc));
  const yc = div(sc, add(real(1), mul(sc, real(rz))));
  const y1 = add(real(1 / d.r1), mul(s, real(d.c1)));
  const yo = add(real(1 / r2l), mul(s, real(c2l)));
  const num = mul(real(d.gm1), sub(real(d.gm2), yc));
  const den = add(mul(y1, yo), mul(yc, add(add(y1, yo), real(d.gm2))));
  return div(num, den);
}

export const dcGainVV = (d: Design): number => d.gm1 * d.r1 * d.gm2 * loadedOutput(d).r2l;
export const dcGainDb = (d: Design): number => 20 * Math.log10(dcGainVV(d));

export function denominator(d: Design): { a1: number; a2: number } {
  const { c2l, r2l } = loadedOutput(d);
  return {
    a1: d.r1 * (d.c1 + d.cc) + r2l * (c2l + d.cc) + d.gm2 * d.r1 * r2l * d.cc,
    a2: d.r1 * r2l * (d.c1 * c2l + d.cc * (d.c1 + c2l)),
  };
}

/** Pole frequencies (Hz) for rz = 0, from 1 + a1·s + a2·s²; null for a complex pair. */
export function polesHz(d: Design): [number, number] | null {
  if (d.rz) throw new Error('the two-pole closed form holds for rz = 0 only');
  const { a1, a2 } = denominator(d);
  const disc = a1 * a1 - 4 * a2;
  if (disc < 0) return null;
  const q = 0.5 * (a1 + Math.sqrt(disc)); // no cancellation
  const w = [1 / q, q / a2].sort((x, y) => x - y);
  return [w[0] / TWO_PI, w[1] / TWO_PI];
}

/** The RHP zero (Hz), or null when rz ≥ 1/gm2 puts it at infinity or in the left half-plane. */
export function rhpZeroHz(d: Design): number | null {
  const k = 1 - d.gm2 * (d.rz ?? 0);
  return k > 0 ? d.gm2 / (TWO_PI * d.cc * k) : null;
}

export function slewRate(d: Design): number {
  if (d.i1 === undefined || d.i2 === undefined) throw new Error('needs i1, i2');
  const cOut = (d.c2 ?? 0) + (d.cl ?? 0);
  return Math.min(d.i1 / d.cc, cOut > 0 ? (d.i2 - d.i1) / cOut : Infinity);
}

/** Log grid from 1 mHz to 1 THz·100, fine enough that the phase step between points is small. */
function grid(): number[] {
  const f: number[] = [];
  for (let e = -3; e <= 14; e += 1 / 400) f.push(10 ** e);
  return f;
}
const GRID = grid();

/** Magnitude (dB) and continuous phase (deg, unwrapped from ~0° at DC) of β·A over the grid. */
function loopCurve(d: Design): { f: number[]; db: number[]; deg: number[] } {
  const beta = d.beta ?? 1;
  const db: number[] = [];
  const deg: number[] = [];
  let prev = 0;
  let unwrapped = 0;
  for (let i = 0; i < GRID.length; i++) {
    const a = gainAt(d, GRID[i]);
    db.push(20 * Math.log10(beta * Math.hypot(a.re, a.im)));
    const ph = Math.atan2(a.im, a.re);
    if (i === 0) unwrapped = ph;
    else {
      let step = ph - prev;
      step -= TWO_PI * Math.round(step / TWO_PI);
      unwrapped += step;
    }
    prev = ph;
    deg.push((unwrapped * 180) / Math.PI);
  }
  return { f: GRID, db, deg };
}

/** First frequency where `y` crosses `target` going down, refined by linear interpolation in log f. */
function firstDownCrossing(f: number[], y: number[], target: number): number | null {
  for (let i = 1; i < f.length; i++) {
    if (y[i - 1] >= target && y[i] < target) {
      const t = (y[i - 1] - target) / (y[i - 1] - y[i]);
      return Math.exp(Math.log(f[i - 1]) + t * (Math.log(f[i]) - Math.log(f[i - 1])));
    }
  }
  return null;
}

/** Refines a root of g near f0 by bisection in log f on [f0/1.01, f0·1.01]. */
function refine(g: (f: number) => number, f0: number): number {
  let lo = f0 / 1.01;
  let hi = f0 * 1.01;
  let glo = g(lo);
  for (let i = 0; i < 100; i++) {
    const mid = Math.sqrt(lo * hi);
    const gm = g(mid);
    if (gm * glo <= 0) hi = mid;
    else {
      lo = mid;
      glo = gm;
    }
  }
  return Math.sqrt(lo * hi);
}

const magDb = (d: Design, f: number): number => {
  const a = gainAt(d, f);
  return 20 * Math.log10(Math.hypot(a.re, a.im));
};

/** Unity-gain frequency (Hz) of A itself (β = 1). */
export function unityGainHz(d: Design): number | null {
  const c = loopCurve({ ...d, beta: 1 });
  const f0 = firstDownCrossing(c.f, c.db, 0);
  return f0 === null ? null : refine((f) => magDb(d, f), f0);
}

/** Loop crossover |β·A| = 1 (Hz) and the phase margin there (deg); null when |βA| < 1 everywhere. */
export function phaseMargin(d: Design): { fcHz: number; pmDeg: number } | null {
  const beta = d.beta ?? 1;
  const c = loopCurve(d);
  const f0 = firstDownCrossing(c.f, c.db, 0);
  if (f0 === null) return null;
  const fc = refine((f) => magDb(d, f) + 20 * Math.log10(beta), f0);
  // Phase at fc: the unwrapped grid phase nearest fc plus the wrapped difference.
  const i = c.f.findIndex((x) => x >= fc);
  const a = gainAt(d, fc);
  let diff = (Math.atan2(a.im, a.re) * 180) / Math.PI - c.deg[i];
  diff -= 360 * Math.round(diff / 360);
  return { fcHz: fc, pmDeg: 180 + c.deg[i] + diff };
}

/** Gain margin (dB) where the continuous phase first reaches −180°; null when it never does. */
export function gainMargin(d: Design): { f180Hz: number; gmDb: number } | null {
  const beta = d.beta ?? 1;
  const c = loopCurve(d);
  const i0 = c.deg.findIndex((x) => x <= -180);
  if (i0 <= 0) return null;
  // Near −180° the phase of −A is near 0°, where atan2 is continuous: bisect on it.
  const f180 = refine((f) => {
    const a = gainAt(d, f);
    return Math.atan2(-a.im, -a.re);
  }, Math.sqrt(c.f[i0 - 1] * c.f[i0]));
  return { f180Hz: f180, gmDb: -(magDb(d, f180) + 20 * Math.log10(beta)) };
}

/** Relative difference. */
export const rel = (a: number, b: number): number => Math.abs(a - b) / Math.abs(b);

/**
 * All pole frequencies (Hz, ascending) for any rz, from the denominator of the
 * closed form multiplied out: with τ1 = r1·c1, τ2 = r2'·c2', τz = cc·rz,
 *   D(s) = (1 + sτ1)(1 + sτ2)(1 + sτz) + s·cc·(r2'(1 + sτ1) + r1(1 + sτ2) + gm2·r1·r2'),
 * which for rz = 0 is 1 + a1·s + a2·s². Real roots only (null otherwise):
 * Newton from s = 0 finds the smallest root, the rest follow by deflation and
 * the quadratic formula, each polished by Newton on D itself.
 */
export function polesHzAny(d: Design): number[] | null {
  const { c2l, r2l } = loadedOutput(d);
  const t1 = d.r1 * d.c1;
  const t2 = r2l * c2l;
  const tz = d.cc * (d.rz ?? 0);
  const c = [
    1,
    t1 + t2 + tz + d.cc * (r2l + d.r1 + d.gm2 * d.r1 * r2l),
    t1 * t2 + tz * (t1 + t2) + d.cc * d.r1 * r2l * (d.c1 + c2l),
    t1 * t2 * tz,
  ];
  const deg = c[3] === 0 ? 2 : 3;
  const D = (s: number) => c[0] + s * (c[1] + s * (c[2] + s * c[3]));
  const dD = (s: number) => c[1] + s * (2 * c[2] + s * 3 * c[3]);
  const polish = (s: number) => {
    for (let i = 0; i < 60; i++) {
      const step = D(s) / dD(s);
      s -= step;
      if (Math.abs(step) <= 1e-15 * Math.abs(s)) break;
    }
    return s;
  };
  const quad = (a0: number, a1: number, a2: number): number[] | null => {
    const disc = a1 * a1 - 4 * a2 * a0;
    if (disc < 0) return null;
    const q = -0.5 * (a1 + Math.sign(a1) * Math.sqrt(disc));
    return [q / a2, a0 / q];
  };
  let roots: number[] | null;
  if (deg === 2) roots = quad(c[0], c[1], c[2]);
  else {
    const r0 = polish(0);
    // D(s) = (s − r0)·(b2 s² + b1 s + b0), dividing from the constant term (stable for the smallest root).
    const b0 = -c[0] / r0;
    const b1 = (b0 - c[1]) / r0;
    const b2 = c[3];
    const rest = quad(b0, b1, b2);
    roots = rest ? [r0, ...rest] : null;
  }
  if (!roots) return null;
  return roots.map(polish).map((s) => Math.abs(s) / TWO_PI).sort((x, y) => x - y);
}
