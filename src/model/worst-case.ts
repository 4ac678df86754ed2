// Worst case of one figure over the box of ranged params and conditions.
//
// A figure need not be monotone in a param: the phase margin of a one-stage
// OTA with a current mirror dips where the crossover passes the mirror's
// pole-zero doublet, so a load range that spans that point is worst inside,
// and two ranged keys that move the crossover and the doublet together make a
// valley along a diagonal of the box. The search therefore looks inside:
//
//  1. the typical point and the corners the context already evaluated (every
//     vertex up to MAX_VERTEX_KEYS ranged keys, else each key at its ends, and
//     then the vertex that takes each key to its own worse end);
//  2. a scrambled Halton sample of the box, its size growing with the number
//     of ranged keys, bounded (J. H. Halton, "On the efficiency of certain
//     quasi-random sequences of points in evaluating multi-dimensional
//     integrals", Numer. Math. 2, 1960; each base's digits pass through a
//     fixed permutation that keeps 0, as in the permuted Halton sequences of
//     E. Braaten and G. Weller, J. Comput. Phys. 33, 1979, the permutations
//     here drawn from a seeded generator);
//  3. a local descent from each of the worst few points that lie apart: a
//     compass (pattern) search with one step per key, halved when neither
//     direction helps, and a Hooke–Jeeves pattern move after each sweep that
//     improved (R. Hooke and T. A. Jeeves, "Direct search solution of
//     numerical and statistical problems", J. ACM 8, 1961; T. G. Kolda,
//     R. M. Lewis and V. Torczon, "Optimization by direct search", SIAM
//     Review 45, 2003). A key at an end of its range that gains nothing from
//     a short step inward is held there. Then Newton steps on the keys inside
//     their ranges, gradient and Hessian from central differences, in a trust
//     region clipped to the box (J. Nocedal and S. J. Wright, "Numerical
//     Optimization", 2nd ed., ch. 4 and 8): they follow the diagonal valleys
//     where steps along one key at a time stall. Converged when a short step
//     each way along every key gains less than the figure's tolerance (1e-5°
//     or dB, 1e-7 relative); otherwise finer compass steps and Newton again.
//     A descent that reaches the neighbourhood of a point an earlier one
//     ended at, no worse, stops there.
//
// All of it in normalised coordinates: each key's range maps to [0, 1],
// logarithmically when it spans more than a factor of three. Every point goes
// through ctx.withChanges (memoized per operating point by check.ts), and the
// sample is the same for every claim, so bounds of one spec share it.
// test/worst-case.test.ts and test/worst-case-dense.test.ts compare the result
// with dense brute-force references.

import { rangedKeys } from './evaluation';
import type { Figure } from '../engine/figure';
import type { Model } from './model';
import { formatQuantity, type Kind } from '../quantity';
import type { RuleContext } from '../verdicts/rule';
import { keySpecOf } from '../spec/design';
import type { Values } from '../topologies/types';

export interface WorstPoint {
  label: string;
  values: Values;
  value: number | null;
  figure: Figure | undefined;
}

/** One ranged key as a coordinate of the unit box. */
interface Axis {
  key: string;
  lo: number;
  hi: number;
  typ: number | undefined;
  /** The typical value's normalised coordinate: it maps back to `typ` exactly. */
  typU: number;
  /** Normalised logarithmically (the range spans more than LOG_SPAN). */
  log: boolean;
  kind: Kind | undefined;
}

/** A range wider than this factor is searched in log space. */
const LOG_SPAN = 3;
/** First step of the descent, as a fraction of each range. */
const FIRST_STEP = 0.25;
/** The descent stops when every step is below this. */
const LAST_STEP = 1e-4;
/** The first walk stops when every step is below this, and Newton takes over. */
const COARSE_STEP = 1e-2;
/** Inward step that tests whether a key at an end of its range should stay there; also the difference step. */
const PROBE = 1e-3;
/** Descent + Newton cycles from one start. */
const CYCLES = 3;
/** Newton iterations per cycle, and the keys it handles at most. */
const NEWTON_ITERATIONS = 8;
const NEWTON_KEYS = 6;
/** A descent that comes this close (in every key) to where an earlier one ended, no worse, stops. */
const NEIGHBOURHOOD = 0.02;

const sampleSize = (n: number) => Math.min(16 * (n + 2), 192);
const startCount = (n: number) => (n <= 3 ? 3 : 2);
/** Fresh evaluations allowed to one local descent. */
const startBudget = (n: number) => 80 + 40 * n;

const memo = new WeakMap<RuleContext, Map<string, WorstPoint>>();

/** The worst point of a figure for a bound; computed once per context and claim. */
export function worstCase(ctx: RuleContext, claim: string, bound: 'min' | 'max'): WorstPoint {
  let m = memo.get(ctx);
  if (!m) memo.set(ctx, (m = new Map()));
  const key = `${claim}:${bound}`;
  const hit = m.get(key);
  if (hit) return hit;
  const w = search(ctx, claim, bound);
  m.set(key, w);
  return w;
}

function axesOf(ctx: RuleContext): Axis[] {
  const typical = ctx.evaluated[0]?.corner.values ?? {};
  // Design quantities are axes like params: the box is the one of the underlying values, never of values derived from them.
  return rangedKeys(ctx.spec)
    .filter((r) => r.hi > r.lo)
    .map((r) => {
      const a: Axis = { ...r, typ: typical[r.key], typU: NaN, log: r.lo > 0 && r.hi / r.lo > LOG_SPAN, kind: keySpecOf(ctx.spec, r.key)?.kind };
      a.typU = toUnit(a, a.typ);
      return a;
    });
}

function toValue(a: Axis, u: number): number {
  if (u <= 0) return a.lo;
  if (u >= 1) return a.hi;
  if (u === a.typU && a.typ !== undefined) return a.typ;
  return a.log ? a.lo * Math.exp(u * Math.log(a.hi / a.lo)) : a.lo + u * (a.hi - a.lo);
}

function toUnit(a: Axis, x: number | undefined): number {
  if (x === undefined || !(x > a.lo)) return 0;
  if (x >= a.hi) return 1;
  return a.log ? Math.log(x / a.lo) / Math.log(a.hi / a.lo) : (x - a.lo) / (a.hi - a.lo);
}

/** "gm1 min, cl = 480 fF": ends by name, inner values by value; keys at their typical value are left out. */
function describe(axes: Axis[], values: Values): string {
  const parts: string[] = [];
  for (const a of axes) {
    const v = values[a.key];
    if (v === a.typ) continue;
    if (v === a.lo) parts.push(`${a.key} min`);
    else if (v === a.hi) parts.push(`${a.key} max`);
    else parts.push(`${a.key} = ${a.kind ? formatQuantity(v, a.kind) : v.toPrecision(3)}`);
  }
  return parts.join(', ') || 'typical';
}

/** Small deterministic generator (xorshift32, G. Marsaglia, "Xorshift RNGs", J. Stat. Softw. 8, 2003). */
function xorshift32(seed: number): () => number {
  let x = seed >>> 0 || 0x9e3779b9;
  return () => {
    x ^= x << 13;
    x >>>= 0;
    x ^= x >>> 17;
    x ^= x << 5;
    x >>>= 0;
    return x / 4294967296;
  };
}

function primes(count: number): number[] {
  const out: number[] = [];
  for (let p = 2; out.length < count; p++) if (out.every((q) => p % q !== 0)) out.push(p);
  return out;
}

/**
 * Points 1…count of the Halton sequence in `dims` dimensions, each base's
 * digits passed through a fixed permutation that keeps 0 (so the radical
 * inverse stays a finite sum). Deterministic: the same box gets the same points.
 */
export function scrambledHalton(dims: number, count: number): number[][] {
  const bases = primes(dims);
  const perms = bases.map((b, d) => {
    const rand = xorshift32(0x2545f491 + 7919 * d);
    const p = Array.from({ length: b }, (_, i) => i);
    // Fisher–Yates on the digits 1…b−1.
    for (let i = b - 1; i > 1; i--) {
      const j = 1 + Math.floor(rand() * i);
      [p[i], p[j]] = [p[j], p[i]];
    }
    return p;
  });
  const out: number[][] = [];
  for (let i = 1; i <= count; i++) {
    out.push(
      bases.map((b, d) => {
        let x = 0;
        let scale = 1 / b;
        for (let k = i; k > 0; k = Math.floor(k / b)) {
          x += perms[d][k % b] * scale;
          scale /= b;
        }
        return x;
      }),
    );
  }
  return out;
}

/** Differences below round-off are not a worse point: the first point found keeps its place. */
const beats = (a: number, b: number) => a < b - 1e-12 * Math.max(1, Math.abs(b));

/** One evaluated point: its normalised coordinates and its score (lower is worse for the claim). */
interface Probe {
  u: number[];
  score: number;
  point: WorstPoint | null;
}

/** Thrown to end the search at a point where the figure does not exist. */
class Missing {
  constructor(readonly point: WorstPoint) {}
}

function search(ctx: RuleContext, claim: string, bound: 'min' | 'max'): WorstPoint {
  const pointOf = (label: string, values: Values, model: Model | null): WorstPoint => ({
    label,
    values,
    figure: model?.exact[claim],
    value: model?.exact[claim]?.value ?? null,
  });
  // A figure that does not exist somewhere fails the bound there; an unbounded
  // gain margin is worse than any value for a max bound, better for a min.
  const fails = (p: WorstPoint) => p.value === null && (bound === 'max' || !p.figure?.unbounded);
  const scoreOf = (p: WorstPoint | null) => (p === null || p.value === null ? Infinity : bound === 'min' ? p.value : -p.value);
  const corners = ctx.evaluated.map((e) => pointOf(e.corner.label, e.corner.values, e.model));
  const missingAt = corners.find(fails);
  if (missingAt) return missingAt;

  const axes = axesOf(ctx);
  const n = axes.length;
  let best: Probe = { u: axes.map((a) => a.typU), score: scoreOf(corners[0]), point: corners[0] };
  const probes = new Map<string, Probe>();
  const keep = (p: Probe): Probe => {
    probes.set(p.u.join(','), p);
    if (p.point && beats(p.score, best.score)) best = p;
    return p;
  };
  for (const [i, e] of ctx.evaluated.entries()) {
    if (!e.model) continue;
    keep({ u: axes.map((a) => toUnit(a, e.corner.values[a.key])), score: scoreOf(corners[i]), point: corners[i] });
  }
  if (n === 0) return best.point!;

  let fresh = 0;
  const probe = (u: number[]): Probe => {
    const hit = probes.get(u.join(','));
    if (hit) return hit;
    const changes: Values = Object.create(null);
    axes.forEach((a, i) => (changes[a.key] = toValue(a, u[i])));
    const model = ctx.withChanges(changes);
    fresh++;
    const point = model ? pointOf('', model.values, model) : null;
    if (point && fails(point)) throw new Missing(point);
    return keep({ u, score: scoreOf(point), point });
  };

  try {
    if (ctx.cornersLimited) {
      // Each key to the end that, alone, made the figure worse.
      const score = (label: string) => scoreOf(corners.find((p) => p.label === label) ?? corners[0]);
      // A key whose ends tie (the figure does not depend on it) stays typical.
      probe(axes.map((a) => {
        const lo = score(`${a.key} min`);
        const hi = score(`${a.key} max`);
        return beats(lo, hi) ? 0 : beats(hi, lo) ? 1 : a.typU;
      }));
    }
    for (const u of scrambledHalton(n, sampleSize(n))) probe(u);
    // Descents from the worst few points; one that walks into the
    // neighbourhood of an optimum an earlier descent ended at, no worse
    // than it, stops there.
    const ends: Probe[] = [];
    for (const start of startsFrom([...probes.values()], startCount(n))) {
      const limit = fresh + startBudget(n);
      const ftol = tolerance(best.point?.figure, best.score);
      const known = (p: Probe) => ends.some((e) => p.score >= e.score - ftol && e.u.every((x, i) => Math.abs(x - p.u[i]) <= NEIGHBOURHOOD));
      ends.push(descend(start, probe, (p) => fresh >= limit || known(p), ftol));
    }
  } catch (err) {
    if (!(err instanceof Missing)) throw err;
    return { ...err.point, label: describe(axes, err.point.values) };
  }
  const p = best.point!;
  return p.label ? p : { ...p, label: describe(axes, p.values) };
}

/** Gains below this are not worth another cycle: 1e-5° or dB, else 1e-7 relative. */
function tolerance(figure: Figure | undefined, score: number): number {
  if (figure?.unit === 'deg' || figure?.unit === 'dB') return 1e-5;
  return Number.isFinite(score) ? 1e-7 * Math.abs(score) : 0;
}

/** The worst points that are at least 0.2 of a range apart in some key. */
function startsFrom(all: Probe[], count: number): Probe[] {
  const ranked = all.filter((p) => p.point && Number.isFinite(p.score)).sort((a, b) => a.score - b.score);
  const out: Probe[] = [];
  for (const p of ranked) {
    if (out.length >= count) break;
    if (out.every((q) => q.u.some((x, i) => Math.abs(x - p.u[i]) >= 0.2))) out.push(p);
  }
  return out;
}

const clamp01 = (x: number) => (x <= 0 ? 0 : x >= 1 ? 1 : x);

function descend(start: Probe, probe: (u: number[]) => Probe, stop: (at: Probe) => boolean, ftol: number): Probe {
  let at = start;
  const n = at.u.length;
  const spent = () => stop(at);
  const moveTo = (u: number[]): boolean => {
    const p = probe(u);
    if (!beats(p.score, at.score)) return false;
    at = p;
    return true;
  };
  // Coarse steps first, the fine work left to Newton; then a short step each
  // way along every key (inward only at an end) tells whether the point is
  // done, and if not, compass steps down to LAST_STEP and Newton again: for
  // figures that are not smooth there, and for keys held at an end too early.
  compass(FIRST_STEP, COARSE_STEP);
  newton();
  for (let cycle = 1; cycle < CYCLES && !spent(); cycle++) {
    const before = at.score;
    const center = at;
    for (let i = 0; i < n && !spent(); i++) {
      for (const x of [center.u[i] - PROBE, center.u[i] + PROBE]) if (x >= 0 && x <= 1) moveTo(withKey(center.u, i, x));
    }
    if (!(before - at.score > ftol)) break;
    compass(16 * PROBE, LAST_STEP);
    newton();
  }
  return at;

  function compass(step0: number, minStep: number): void {
    const step = new Array<number>(n).fill(step0);
    const prefer = new Array<number>(n).fill(1);
    while (!spent()) {
      const from = at;
      let active = false;
      for (let i = 0; i < n && !spent(); i++) {
        if (step[i] < minStep) continue;
        active = true;
        let moved = false;
        for (const dir of [prefer[i], -prefer[i]]) {
          const x = clamp01(at.u[i] + dir * step[i]);
          if (x === at.u[i]) continue;
          if (moveTo(withKey(at.u, i, x))) {
            prefer[i] = dir;
            moved = true;
            break;
          }
        }
        if (moved) continue;
        if ((at.u[i] === 0 || at.u[i] === 1) && step[i] > PROBE) {
          // At an end and a long step inward did not help: a short one tells
          // whether the figure gets better inward (stay) or worse (go on).
          if (moveTo(withKey(at.u, i, at.u[i] === 0 ? PROBE : 1 - PROBE))) step[i] = 2 * PROBE;
          else step[i] = 0;
        } else {
          step[i] /= 2;
        }
      }
      if (!active) break;
      // Hooke–Jeeves: repeat the sweep's net move while it keeps helping.
      for (let k = 0; k < 4 && at !== from && !spent(); k++) {
        const d = at.u.map((x, i) => x - from.u[i]);
        if (!moveTo(at.u.map((x, i) => clamp01(x + d[i])))) break;
      }
    }
  }

  function newton(): void {
    let radius = 0.1;
    for (let it = 0; it < NEWTON_ITERATIONS && !spent(); it++) {
      const free: number[] = [];
      for (let i = 0; i < n; i++) if (at.u[i] > 2 * PROBE && at.u[i] < 1 - 2 * PROBE) free.push(i);
      const k = free.length;
      if (k === 0 || k > NEWTON_KEYS) return;
      const center = at;
      const f0 = center.score;
      const h = PROBE;
      const grad = new Array<number>(k).fill(0);
      const hess = Array.from({ length: k }, () => new Array<number>(k).fill(0));
      const plus: number[] = [];
      // The lowest of the difference points, should the Newton step fail.
      let nearby = center;
      const around = (u: number[]) => {
        const p = probe(u);
        if (beats(p.score, nearby.score)) nearby = p;
        return p.score;
      };
      for (let a = 0; a < k; a++) {
        const fp = around(withKey(center.u, free[a], center.u[free[a]] + h));
        const fm = around(withKey(center.u, free[a], center.u[free[a]] - h));
        plus.push(fp);
        grad[a] = (fp - fm) / (2 * h);
        hess[a][a] = (fp - 2 * f0 + fm) / (h * h);
      }
      for (let a = 0; a < k; a++) {
        for (let b = a + 1; b < k; b++) {
          const u = center.u.slice();
          u[free[a]] += h;
          u[free[b]] += h;
          hess[a][b] = hess[b][a] = (around(u) - plus[a] - plus[b] + f0) / (h * h);
        }
      }
      if (![...grad, ...hess.flat()].every(Number.isFinite)) return;
      const dir = newtonStep(grad, hess);
      if (!dir) return;
      const size = Math.max(...dir.map(Math.abs));
      if (size < 1e-7) return;
      const scale = Math.min(1, radius / size);
      // The quadratic model's gain for the step: once a full step promises
      // less than the tolerance, the point has converged.
      const s = dir.map((d) => scale * d);
      const gain = -s.reduce((sum, x, a) => sum + x * (grad[a] + 0.5 * hess[a].reduce((t, y, b) => t + y * s[b], 0)), 0);
      if (scale === 1 && !(gain > ftol)) return;
      const u = center.u.slice();
      free.forEach((i, a) => (u[i] = clamp01(u[i] + s[a])));
      const moved = moveTo(u) || moveTo(nearby.u);
      // Trust-region update from the ratio of the actual to the predicted
      // gain (Nocedal and Wright, Algorithm 4.1).
      const ratio = moved ? (f0 - at.score) / gain : 0;
      if (ratio < 0.25) radius = (scale * size) / 4;
      else if (ratio > 0.75 && scale < 1) radius = Math.min(0.5, 2 * radius);
      if (radius < 1e-7) return;
      // A step that gained less than the tolerance ends the walk: along a
      // flat valley floor, further steps change the point but not the figure.
      if (moved && (!(f0 - at.score > ftol) || (scale === 1 && size < LAST_STEP))) return;
    }
  }
}

const withKey = (u: number[], i: number, x: number): number[] => {
  const v = u.slice();
  v[i] = x;
  return v;
};

/**
 * −H⁻¹·g by Cholesky (Golub and Van Loan, "Matrix Computations", §4.2),
 * shifted by a multiple of the identity when H is not positive definite
 * (Nocedal and Wright, §3.4): a descent direction in either case.
 */
function newtonStep(grad: number[], hess: number[][]): number[] | null {
  const k = grad.length;
  const scale = Math.max(...hess.map((r, i) => Math.abs(r[i])), 1e-12);
  for (let shift = 0, tries = 0; tries < 30; tries++, shift = shift ? shift * 4 : 1e-6 * scale) {
    const l = Array.from({ length: k }, () => new Array<number>(k).fill(0));
    let ok = true;
    for (let i = 0; i < k && ok; i++) {
      for (let j = 0; j <= i; j++) {
        let s = hess[i][j] + (i === j ? shift : 0);
        for (let m = 0; m < j; m++) s -= l[i][m] * l[j][m];
        if (i === j) {
          if (!(s > 0)) ok = false;
          else l[i][i] = Math.sqrt(s);
        } else {
          l[i][j] = s / l[j][j];
        }
      }
    }
    if (!ok) continue;
    const y = new Array<number>(k).fill(0);
    for (let i = 0; i < k; i++) {
      let s = -grad[i];
      for (let m = 0; m < i; m++) s -= l[i][m] * y[m];
      y[i] = s / l[i][i];
    }
    const x = new Array<number>(k).fill(0);
    for (let i = k - 1; i >= 0; i--) {
      let s = y[i];
      for (let m = i + 1; m < k; m++) s -= l[m][i] * x[m];
      x[i] = s / l[i][i];
    }
    return x;
  }
  return null;
}
