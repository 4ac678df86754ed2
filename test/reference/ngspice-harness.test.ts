// Sanity checks of the ngspice reference harness itself, against closed-form
// circuit results derived by hand (independent of the polecheck engine).

import { describe, expect, it } from 'vitest';
import { randomTwoStageDesigns, type TwoStageDesign } from './designs';
import { analysisControl, MARK, spiceNum, twoStageNetlist } from './netlist';
import {
  firstFall,
  ngspiceAvailable,
  ngspiceVersion,
  parseAc,
  parsePz,
  parseScalars,
  runNetlist,
  runTwoStage,
  section,
  unwrapPhaseDeg,
  type Complex,
} from './ngspice';

const HAVE = ngspiceAvailable();
const MISSING = 'ngspice missing: apt-get install -y ngspice';

if (!HAVE) {
  if (process.env.CI) {
    describe('ngspice reference harness', () => {
      it('needs ngspice', () => {
        throw new Error(MISSING);
      });
    });
  } else {
    console.warn(`${MISSING} (skipping ngspice harness tests; they fail instead when CI is set)`);
  }
}

// ---- small complex helpers for the closed-form transfer function ----------
type C = [number, number];
const add = (a: C, b: C): C => [a[0] + b[0], a[1] + b[1]];
const sub = (a: C, b: C): C => [a[0] - b[0], a[1] - b[1]];
const mul = (a: C, b: C): C => [a[0] * b[0] - a[1] * b[1], a[0] * b[1] + a[1] * b[0]];
const div = (a: C, b: C): C => {
  const m = b[0] * b[0] + b[1] * b[1];
  return [(a[0] * b[0] + a[1] * b[1]) / m, (a[1] * b[0] - a[0] * b[1]) / m];
};
const re = (x: number): C => [x, 0];

function rel(a: number, b: number): number {
  return Math.abs(a - b) / Math.abs(b);
}

/** Output-node totals: ro = r2 ∥ rl, co = c2 + cl. */
function outNode(d: TwoStageDesign): { ro: number; co: number } {
  const go = 1 / d.r2 + (d.rl !== undefined ? 1 / d.rl : 0);
  return { ro: 1 / go, co: d.c2 + d.cl };
}

/**
 * Exact A(s) from nodal analysis (KCL at n1 and out, the cc–rz branch as one
 * admittance Yc = s·cc/(1 + s·cc·rz)):
 *   A = gm1·(gm2 − Yc) / (Y1·Yo + Yc·(Y1 + Yo + gm2)),  Y1 = 1/r1 + s·c1,  Yo = 1/ro + s·co.
 */
function exactA(d: TwoStageDesign, fHz: number): C {
  const s: C = [0, 2 * Math.PI * fHz];
  const { ro, co } = outNode(d);
  const y1 = add(re(1 / d.r1), mul(s, re(d.c1)));
  const yo = add(re(1 / ro), mul(s, re(co)));
  const scc = mul(s, re(d.cc));
  const yc = d.rz === undefined ? scc : div(scc, add(re(1), mul(scc, re(d.rz))));
  const num = mul(re(d.gm1), sub(re(d.gm2), yc));
  const den = add(mul(y1, yo), mul(yc, add(add(y1, yo), re(d.gm2))));
  return div(num, den);
}

/**
 * Normalised denominator 1 + b1·s + b2·s² + b3·s³ of A(s) (same nodal analysis,
 * multiplied through by (1 + s·cc·rz) and by r1·ro). Without rz this is the
 * classic two-stage Miller denominator
 *   1 + s·[r1(c1+cc) + ro(co+cc) + gm2·r1·ro·cc] + s²·r1·ro·[c1·co + cc(c1+co)].
 */
function denominator(d: TwoStageDesign): { b1: number; b2: number; b3: number } {
  const { ro, co } = outNode(d);
  const rz = d.rz ?? 0;
  const b1 = d.r1 * d.c1 + ro * co + d.cc * (d.r1 + ro + d.gm2 * d.r1 * ro) + d.cc * rz;
  const b2 = d.r1 * ro * (d.c1 * co + d.cc * (d.c1 + co)) + d.cc * rz * (d.r1 * d.c1 + ro * co);
  const b3 = d.cc * rz * d.r1 * ro * d.c1 * co;
  return { b1, b2, b3 };
}

/** Roots of 1 + b1 s + b2 s² (real, as the AM–GM argument shows for this network), cancellation-free form. */
function quadRoots(b1: number, b2: number): [number, number] {
  const disc = b1 * b1 - 4 * b2;
  if (disc < 0) throw new Error('complex roots not expected without rz');
  const q = -0.5 * (b1 + Math.sqrt(disc)); // b2 s² + b1 s + 1: roots q/b2 and 1/q
  return [1 / q, q / b2];
}

/** Vieta on 1 + b1 s + b2 s² + b3 s³ with roots p_i: Σ1/p = −b1, Σ1/(p_i p_j) = b2, Π1/p = −b3. */
function vieta(poles: Complex[]): { e1: number; e2: number; e3: number } {
  const inv = poles.map((p): C => div(re(1), [p.re, p.im]));
  const e1 = inv.reduce((a, x) => add(a, x), re(0));
  let e2: C = re(0);
  for (let i = 0; i < inv.length; i++) for (let j = i + 1; j < inv.length; j++) e2 = add(e2, mul(inv[i], inv[j]));
  const e3 = inv.reduce((a, x) => mul(a, x), re(1));
  return { e1: e1[0], e2: e2[0], e3: e3[0] };
}

/** Solve |A(j2πf)| = target by bisection in log f inside [lo, hi]. */
function solveMag(d: TwoStageDesign, target: number, lo: number, hi: number): number {
  const g = (f: number) => Math.hypot(...exactA(d, f)) - target;
  let a = Math.log(lo);
  let b = Math.log(hi);
  if (Math.sign(g(lo)) === Math.sign(g(hi))) throw new Error('bracket does not contain the crossing');
  for (let k = 0; k < 200; k++) {
    const m = 0.5 * (a + b);
    if (Math.sign(g(Math.exp(m))) === Math.sign(g(Math.exp(a)))) a = m;
    else b = m;
  }
  return Math.exp(0.5 * (a + b));
}

/** Continuous phase (deg) of the closed form at f: unwrapped on a 100/decade grid from far below the first pole. */
function exactContinuousPhaseDeg(d: TwoStageDesign, f: number): number {
  const arg = (x: number) => {
    const [a, b] = exactA(d, x);
    return (Math.atan2(b, a) * 180) / Math.PI;
  };
  const f0 = 1e-6 / (2 * Math.PI * denominator(d).b1);
  const n = Math.ceil(100 * Math.log10(f / f0));
  let acc = arg(f0);
  let prev = acc;
  for (let k = 1; k <= n; k++) {
    const a = arg(f0 * Math.pow(f / f0, k / n));
    let dd = a - prev;
    dd -= 360 * Math.round(dd / 360);
    acc += dd;
    prev = a;
  }
  return acc;
}

describe.skipIf(!HAVE)('ngspice reference harness', () => {
  it('reports a version', () => {
    expect(ngspiceVersion()).toMatch(/^\d+/);
  });

  it('RC low-pass: .pz prints rad/s, .ac −3 dB point at 1/(2πRC), .tf gain 1', () => {
    const R = 1.2345678901234567e3;
    const Cap = 1e-9;
    const sweep = { acPointsPerDecade: 1000, fStartHz: 1, fStopHz: 1e9 };
    // Same .control block as the two-stage decks, so this also checks their parsing.
    const deck = ['* RC low-pass unit check', 'vin in 0 dc 0 ac 1', `R1 in out ${spiceNum(R)}`, `C1 out 0 ${spiceNum(Cap)}`, ...analysisControl(sweep), '.end', ''].join('\n');
    const out = runNetlist(deck).stdout;

    const pz = parsePz(section(out, MARK.pz).lines);
    expect(pz.zeros).toHaveLength(0);
    expect(pz.poles).toHaveLength(1);
    // Expected: H(s) = 1/(1 + sRC) (KCL at out), single pole s = −1/(RC) in rad/s.
    // Had ngspice printed Hz this would be off by 2π.
    expect(rel(pz.poles[0].re, -1 / (R * Cap))).toBeLessThan(1e-6);
    expect(pz.poles[0].im).toBe(0);

    // Expected: same H(s) at s = 0 is exactly 1.
    const tf = parseScalars(section(out, MARK.tf).lines);
    expect(Number(tf.get('transfer_function'))).toBeCloseTo(1, 12);

    const ac = parseAc(section(out, MARK.ac).lines);
    expect(ac.f).toHaveLength(9 * 1000 + 1);
    const db = ac.re.map((r, i) => 10 * Math.log10(r * r + ac.im[i] ** 2));
    const u = ac.f.map(Math.log10);
    // Expected: |H(jω)|² = 1/(1 + (ωRC)²) = 1/2 at ω = 1/(RC), i.e. f = 1/(2πRC); −10·log10(2) dB.
    const c = firstFall(u, db, -10 * Math.log10(2));
    expect(c).not.toBeNull();
    expect(rel(Math.pow(10, c!.x), 1 / (2 * Math.PI * R * Cap))).toBeLessThan(1e-6);
    // Expected: arg H = −atan(ωRC) = −45° at the same frequency.
    const ph = unwrapPhaseDeg(ac.re, ac.im);
    expect(ph[c!.i] + c!.w * (ph[c!.i + 1] - ph[c!.i])).toBeCloseTo(-45, 4);
  });

  it('netlist contains exactly the specified elements', () => {
    const d: TwoStageDesign = { id: 't', gm1: 1e-4, r1: 1e6, c1: 1e-13, gm2: 1e-3, r2: 1e5, c2: 1e-13, cc: 1e-12, cl: 0, beta: 1 };
    const sweep = { acPointsPerDecade: 10, fStartHz: 1, fStopHz: 1e9 };
    const plain = twoStageNetlist(d, sweep);
    expect(plain).toMatch(/^G1 n1 0 in 0 1\.0000000000000000e-4$/m);
    expect(plain).toMatch(/^CC n1 out /m);
    expect(plain).not.toMatch(/^(CL|RL|RZ) /m);
    const full = twoStageNetlist({ ...d, rz: 500, cl: 1e-12, rl: 1e4 }, sweep);
    expect(full).toMatch(/^CC n1 nz /m);
    expect(full).toMatch(/^RZ nz out 5\.0000000000000000e\+2$/m);
    expect(full).toMatch(/^CL out 0 /m);
    expect(full).toMatch(/^RL out 0 /m);
    expect(full).toMatch(/^ac dec 10 /m);
    expect(full).toMatch(/^pz in 0 out 0 vol pz$/m);
  });

  it('two-pole Miller network (no rz): poles, zero, DC gain, crossover and PM match the hand-expanded formulas', () => {
    const d: TwoStageDesign = {
      id: 'hand-two-pole',
      gm1: 150e-6,
      r1: 3.3e6,
      c1: 80e-15,
      gm2: 1.7e-3,
      r2: 250e3,
      c2: 150e-15,
      cc: 1.5e-12,
      cl: 3e-12,
      rl: 400e3,
      beta: 1,
    };
    const r = runTwoStage(d);
    const { ro } = outNode(d);
    const { b1, b2 } = denominator(d);
    const [pa, pb] = quadRoots(b1, b2);
    expect(r.pzFailed).toBe(false);
    const poles = [...r.poles].sort((x, y) => Math.abs(x.re) - Math.abs(y.re));
    // Expected: roots of 1 + s·[r1(c1+cc) + ro(co+cc) + gm2·r1·ro·cc] + s²·r1·ro·[c1·co + cc(c1+co)].
    expect(poles).toHaveLength(2);
    expect(rel(poles[0].re, Math.max(pa, pb))).toBeLessThan(1e-6);
    expect(rel(poles[1].re, Math.min(pa, pb))).toBeLessThan(1e-6);
    expect(poles.every((p) => p.im === 0)).toBe(true);
    // Expected: numerator gm1·(gm2 − s·cc) ⇒ RHP zero at +gm2/cc.
    expect(r.zeros).toHaveLength(1);
    expect(rel(r.zeros[0].re, d.gm2 / d.cc)).toBeLessThan(1e-6);
    // Expected: A(0) = gm1·r1·gm2·(r2 ∥ rl).
    expect(Math.abs(r.dcGainDb - 20 * Math.log10(d.gm1 * d.r1 * d.gm2 * ro))).toBeLessThan(1e-6);
    // Expected: |A(jω)| = 1 solved on the closed form; PM = 180° − atan(ω/|p1|) − atan(ω/|p2|) − atan(ω/z).
    const fu = solveMag(d, 1, r.unityGainHz! / 1.01, r.unityGainHz! * 1.01);
    expect(rel(r.unityGainHz!, fu)).toBeLessThan(1e-5);
    const w = 2 * Math.PI * fu;
    const pm = 180 - (Math.atan(w / -pa) + Math.atan(w / -pb) + Math.atan(w / (d.gm2 / d.cc))) * (180 / Math.PI);
    expect(Math.abs(r.phaseMarginDeg! - pm)).toBeLessThan(1e-3);
    expect(r.loopCrossoverHz).toBe(r.unityGainHz); // beta = 1
  });

  it('random designs (with and without rz): pz obeys Vieta on the nodal-analysis denominator; AC metrics match the closed form', () => {
    const designs = randomTwoStageDesigns(7, 10);
    expect(designs.some((d) => d.rz !== undefined)).toBe(true);
    expect(designs.some((d) => d.rz === undefined)).toBe(true);
    for (const d of designs) {
      const r = runTwoStage(d);
      expect(r.pzFailed, `${d.id}: ${r.pzNote}`).toBe(false);
      const { b1, b2, b3 } = denominator(d);
      const v = vieta(r.poles);
      // Expected: coefficients b1, b2, b3 of the denominator (see `denominator`).
      expect(rel(-v.e1, b1), d.id).toBeLessThan(1e-6);
      expect(rel(v.e2, b2), d.id).toBeLessThan(1e-6);
      if (d.rz !== undefined) expect(rel(-v.e3, b3), d.id).toBeLessThan(1e-6);
      // Expected: numerator −gm2·(1 − s·cc(1 − gm2·rz)/gm2) ⇒ zero at gm2/(cc(1 − gm2·rz)).
      if (d.rz === undefined || d.rz !== 1 / d.gm2) {
        expect(r.zeros, d.id).toHaveLength(1);
        expect(rel(r.zeros[0].re, d.gm2 / (d.cc * (1 - d.gm2 * (d.rz ?? 0)))), d.id).toBeLessThan(1e-6);
      }
      // Expected: A(0) = gm1·r1·gm2·ro (closed form at s = 0).
      expect(Math.abs(r.dcGainDb - 20 * Math.log10(Math.hypot(...exactA(d, 0)))), d.id).toBeLessThan(1e-6);
      if (r.loopCrossoverHz !== null) {
        const fc = solveMag(d, 1 / d.beta, r.loopCrossoverHz / 1.01, r.loopCrossoverHz * 1.01);
        expect(rel(r.loopCrossoverHz, fc), d.id).toBeLessThan(1e-5);
        expect(Math.abs(r.phaseMarginDeg! - (180 + exactContinuousPhaseDeg(d, fc))), d.id).toBeLessThan(1e-3);
      }
      // Interpolation error estimate stays orders of magnitude below the 0.1 % / 0.1° bars.
      expect(r.diagnostics.interpErr.unityGainRel ?? 0).toBeLessThan(1e-5);
      expect(r.diagnostics.interpErr.phaseMarginDeg ?? 0).toBeLessThan(1e-3);
    }
  });

  it('rz exactly 1/gm2: no crash, three poles, zero at infinity', () => {
    const gm2 = 1.3e-3;
    const d: TwoStageDesign = {
      id: 'rz-exact',
      gm1: 300e-6,
      r1: 1.5e6,
      c1: 60e-15,
      gm2,
      r2: 400e3,
      c2: 120e-15,
      cc: 2.2e-12,
      cl: 1e-12,
      rz: 1 / gm2,
      beta: 0.5,
    };
    const r = runTwoStage(d);
    expect(r.poles).toHaveLength(3);
    // Expected: numerator gm2 − s·cc(1 − gm2·rz) loses its s-term, so no finite zero
    // (a zero beyond 1e6 × the unity-gain frequency would be equivalent to rounding).
    for (const z of r.zeros) expect(Math.hypot(z.re, z.im)).toBeGreaterThan(1e6 * 2 * Math.PI * r.unityGainHz!);
    expect(r.pzFailed).toBe(false);
    expect(r.loopCrossoverHz).not.toBeNull();
  });

  it('DC gain below 0 dB gives no unity-gain crossing', () => {
    const d: TwoStageDesign = { id: 'low', gm1: 20e-6, r1: 100e3, c1: 50e-15, gm2: 200e-6, r2: 10e3, c2: 50e-15, cc: 1e-12, cl: 0, rl: 1e3, beta: 1 };
    const r = runTwoStage(d);
    expect(r.dcGainDb).toBeLessThan(0);
    expect(r.unityGainHz).toBeNull();
    expect(r.loopCrossoverHz).toBeNull();
    expect(r.phaseMarginDeg).toBeNull();
  });
});
