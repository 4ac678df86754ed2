// The closed-loop engine against textbook closed forms.
//
// Second-order system ωn²/(s² + 2ζωn·s + ωn²), all from K. Ogata, "Modern
// Control Engineering" (ch. 5 transient response, ch. 8 frequency response;
// from memory):
//   step response y(t) = 1 − e^{−ζωn·t}·(cos ωd·t + ζ/√(1 − ζ²)·sin ωd·t), ωd = ωn√(1 − ζ²)
//   overshoot exp(−πζ/√(1 − ζ²)) at t = π/ωd
//   resonant peak 1/(2ζ√(1 − ζ²)) at ωn√(1 − 2ζ²), for ζ < 1/√2
//   −3 dB bandwidth ωn·√(1 − 2ζ² + √(4ζ⁴ − 4ζ² + 2))
//   phase margin of L(s) = ωn²/(s(s + 2ζωn)): atan(2ζ/√(√(1 + 4ζ⁴) − 2ζ²)),
//   51.8° at ζ = 0.5 and 76.3° at ζ = 1 (Ogata's table, from memory).
// 10–90 % rise time ωn·t_r ≈ 1.768ζ³ − 0.417ζ² + 1.039ζ + 1 for ζ < 0.9 (N. S.
// Nise, "Control Systems Engineering", ch. 4; a curve fit, from memory).
// TR-BDF2's local error constant from its amplification function (R. E. Bank
// et al., IEEE Trans. CAD 4, 1985): (3γ² − 4γ + 2)/(12(2 − γ)), γ = 2 − √2.
import { describe, expect, it } from 'vitest';
import { crossoverOverNatural, overshootOfZeta, peakOfZeta, riseOfZeta, zetaFromPhaseMargin } from '../../src/model/closed-loop-figures';
import { FactoredResponse, analyzeNetwork } from '../../src/engine/analyze';
import { LTE_C, ModalBasis, closedMatrices, firstFall, largeStepSettling, overshoot, peakMagnitude, riseTime, settlingTime, stepModes } from '../../src/engine/closed-loop';
import { findRoots } from '../../src/engine/roots';
import { evaluate } from '../../src/model/model';
import { twoStageMiller } from '../../src/topologies/two-stage-miller';
import { networkTopology } from '../../src/topologies/network';

const TWO_PI = 2 * Math.PI;
const pair = (zeta: number, wn: number) => {
  const wd = wn * Math.sqrt(1 - zeta * zeta);
  return [{ re: -zeta * wn, im: wd }, { re: -zeta * wn, im: -wd }];
};
/** The textbook step response. */
const ySecond = (zeta: number, wn: number) => (t: number) => {
  const wd = wn * Math.sqrt(1 - zeta * zeta);
  return 1 - Math.exp(-zeta * wn * t) * (Math.cos(wd * t) + (zeta / Math.sqrt(1 - zeta * zeta)) * Math.sin(wd * t));
};
/** Where g changes sign in [a, b], by bisection. */
const bisect = (g: (t: number) => number, a: number, b: number) => {
  let ga = g(a);
  for (let i = 0; i < 200; i++) {
    const m = 0.5 * (a + b);
    const gm = g(m);
    if (gm * ga > 0) (a = m), (ga = gm);
    else b = m;
  }
  return 0.5 * (a + b);
};

describe('step response of a second-order system (Ogata)', () => {
  for (const zeta of [0.1, 0.3, 0.5, 0.68, 0.9]) {
    const wn = TWO_PI * 3.3e6;
    const m = stepModes(pair(zeta, wn), []);
    const y = ySecond(zeta, wn);
    it(`ζ = ${zeta}: overshoot, peak time, rise time and settling time`, () => {
      const o = overshoot(m)!;
      expect(o.value).toBeCloseTo(Math.exp((-Math.PI * zeta) / Math.sqrt(1 - zeta * zeta)), 12);
      expect(o.t * wn * Math.sqrt(1 - zeta * zeta)).toBeCloseTo(Math.PI, 9);
      // Rise points: the first crossings of 0.1 and 0.9 of the textbook expression, by bisection on a fine grid.
      const first = (level: number) => {
        const dt = 1e-4 / wn;
        let t = 0;
        while (y(t + dt) < level) t += dt;
        return bisect((x) => y(x) - level, t, t + dt);
      };
      const r = riseTime(m)!;
      expect(r.t10 / first(0.1)).toBeCloseTo(1, 9);
      expect(r.t90 / first(0.9)).toBeCloseTo(1, 9);
      // Nise's curve fit of ωn·t_r (the hand estimate) holds to a few percent for ζ < 0.9.
      expect(riseOfZeta(zeta) / (wn * (r.t90 - r.t10))).toBeCloseTo(1, 1);
      // Settling: the last crossing of |y − 1| = band, searched backwards from
      // where the textbook envelope e^{−ζωn·t}/√(1 − ζ²) is below the band.
      for (const band of [1e-2, 1e-3, 1e-4]) {
        const dt = 1e-3 / wn;
        let t = -Math.log(band * Math.sqrt(1 - zeta * zeta)) / (zeta * wn);
        while (Math.abs(y(t) - 1) < band) t -= dt;
        const exact = bisect((x) => Math.abs(y(x) - 1) - band, t, t + dt);
        expect(settlingTime(m, band)!.t / exact).toBeCloseTo(1, 9);
      }
    });
    it(`ζ = ${zeta}: resonant peak and −3 dB bandwidth`, () => {
      const f = new FactoredResponse(pair(zeta, wn), [], 1);
      const pk = peakMagnitude(f)!;
      if (zeta < Math.SQRT1_2) {
        expect(Math.exp(pk.lnMag)).toBeCloseTo(1 / (2 * zeta * Math.sqrt(1 - zeta * zeta)), 9);
        // The value is searched to 1e-9 neper; a flat peak's place is known only to about √(1e-9/curvature).
        expect(pk.w / (wn * Math.sqrt(1 - 2 * zeta * zeta))).toBeCloseTo(1, 2);
      } else {
        expect(pk.lnMag).toBeLessThan(1e-9);
      }
      const bw = firstFall(f, -0.5 * Math.LN2)!;
      expect(bw / (wn * Math.sqrt(1 - 2 * zeta ** 2 + Math.sqrt(4 * zeta ** 4 - 4 * zeta ** 2 + 2)))).toBeCloseTo(1, 10);
    });
  }

  it('ζ from the phase margin of the two-pole loop (Ogata: 51.8° at ζ = 0.5, 76.3° at ζ = 1)', () => {
    expect(zetaFromPhaseMargin(51.83)).toBeCloseTo(0.5, 3);
    expect(zetaFromPhaseMargin(76.35)).toBeCloseTo(1, 2);
    expect(zetaFromPhaseMargin(95)).toBe(Infinity);
    expect(overshootOfZeta(0.5)).toBeCloseTo(0.163, 3); // 16.3 %, the textbook figure for ζ = 0.5
    expect(20 * Math.log10(peakOfZeta(0.5))).toBeCloseTo(1.25, 2); // 1.25 dB
  });
});

describe('a network that is a pure two-pole loop', () => {
  // gm1 into c1 with a vanishing r1 (an integrator), then gm2 into r2 ∥ c2:
  // L(s) = gm1·gm2·r2/(c1·s·(1 + s·r2·c2)) = ωn²/(s(s + 2ζωn)) with
  // r2·c2 = 1/(2ζωn) and gm1·gm2·r2/c1 = ωn/(2ζ); β = 1.
  const at = { line: 1, column: 1, offset: 0 };
  const topo = networkTopology({
    input: 'in',
    output: 'out',
    nodes: ['in', 'n1', 'out'],
    elements: [
      { name: 'gm1', kind: 'transconductance', a: 'n1', b: '0', ctrlP: 'in', ctrlN: '0', pos: at },
      { name: 'r1', kind: 'resistor', a: 'n1', b: '0', pos: at },
      { name: 'c1', kind: 'capacitor', a: 'n1', b: '0', pos: at },
      { name: 'gm2', kind: 'transconductance', a: 'out', b: '0', ctrlP: 'n1', ctrlN: '0', pos: at },
      { name: 'r2', kind: 'resistor', a: 'out', b: '0', pos: at },
      { name: 'c2', kind: 'capacitor', a: 'out', b: '0', pos: at },
    ],
  });
  for (const zeta of [0.3, 0.5, 0.8]) {
    it(`ζ = ${zeta}: phase margin, overshoot, peaking and bandwidth, exact and by the second-order rules`, () => {
      const wn = TWO_PI * 1e6;
      const c2 = 1e-12;
      const r2 = 1 / (2 * zeta * wn * c2);
      const gm2 = 1e-3;
      const c1 = 1e-12;
      const gm1 = (wn / (2 * zeta)) * c1 / (gm2 * r2);
      const m = evaluate(topo, { gm1, r1: 1e16, c1, gm2, r2, c2, beta: 1 });
      const pm = (Math.atan((2 * zeta) / crossoverOverNatural(zeta)) * 180) / Math.PI;
      expect(m.loop.phaseMargin.value!).toBeCloseTo(pm, 4);
      expect(m.exact.overshoot.value!).toBeCloseTo(overshootOfZeta(zeta), 6);
      expect(m.hand.overshoot.value!).toBeCloseTo(overshootOfZeta(zeta), 6);
      expect(m.exact.peaking.value!).toBeCloseTo(20 * Math.log10(peakOfZeta(zeta)), 5);
      expect(m.hand.peaking.value!).toBeCloseTo(m.exact.peaking.value!, 4);
      const bw = (wn / TWO_PI) * Math.sqrt(1 - 2 * zeta ** 2 + Math.sqrt(4 * zeta ** 4 - 4 * zeta ** 2 + 2));
      expect(m.exact.closed_loop_bandwidth.value! / bw).toBeCloseTo(1, 6);
      // The settling rule −ln(band)/(ζωn) is an envelope: never shorter than the exact last exit, within the envelope's lead.
      const ts = m.exact.settling_time.value!;
      const rule = m.hand.settling_time.value!;
      expect(rule).toBeGreaterThan(ts);
      expect(rule - ts).toBeLessThan(-Math.log(Math.sqrt(1 - zeta * zeta)) / (zeta * wn) + Math.PI / (wn * Math.sqrt(1 - zeta * zeta)));
    });
  }
});

describe('closed-loop internals', () => {
  const base = { gm1: 200e-6, r1: 2e6, c1: 80e-15, gm2: 1.5e-3, r2: 150e3, c2: 300e-15, cc: 0.9e-12, rz: 600, i1: 16e-6, i2: 120e-6, cl: 5e-12, beta: 0.5 };

  it('the closed loop has the zeros of A(s): its bordered pencil has the same determinant', () => {
    const a = analyzeNetwork(twoStageMiller.network(base));
    const st = a.stamped;
    const { G, C } = closedMatrices(st, 0.5);
    const m = st.n + 1;
    const Ga = new Float64Array(m * m);
    const Ca = new Float64Array(m * m);
    for (let i = 0; i < st.n; i++) {
      for (let j = 0; j < st.n; j++) {
        Ga[i * m + j] = G[i * st.n + j];
        Ca[i * m + j] = C[i * st.n + j];
      }
      Ga[i * m + st.n] = st.gIn[i];
      Ca[i * m + st.n] = st.cIn[i];
    }
    Ga[st.n * m + st.out] = 1;
    const zeros = findRoots(Ga, Ca, m).roots;
    expect(zeros.length).toBe(a.zeros.length);
    zeros.forEach((z, i) => expect(Math.hypot(z.re - a.zeros[i].re, z.im - a.zeros[i].im) / Math.hypot(z.re, z.im)).toBeLessThan(1e-9));
  });

  it('the step response by partial fractions equals the free response of the modes (eigenvectors of the pencil)', () => {
    const model = evaluate(twoStageMiller, base);
    const st = model.analysis.stamped;
    const { G, C } = closedMatrices(st, model.beta);
    const poles = model.loop.closedLoopPoles;
    const basis = ModalBasis.of(G, C, st.n, poles)!;
    // Final state per volt of input; the deviation from it at t = 0 is −y(∞).
    const x = new Float64Array(st.n);
    {
      const A = G.slice();
      const b = Array.from(st.gIn, (v) => -v);
      // Gaussian elimination for the small system.
      const n = st.n;
      for (let k = 0; k < n; k++) {
        for (let i = k + 1; i < n; i++) {
          const l = A[i * n + k] / A[k * n + k];
          for (let j = k; j < n; j++) A[i * n + j] -= l * A[k * n + j];
          b[i] -= l * b[k];
        }
      }
      for (let i = n - 1; i >= 0; i--) {
        let s = b[i];
        for (let j = i + 1; j < n; j++) s -= A[i * n + j] * x[j];
        x[i] = s / A[i * n + i];
      }
    }
    const modal = basis.response(x.map((v) => -v), st.out, x[st.out]);
    const pf = stepModes(poles, model.analysis.zeros);
    for (const t of [1e-9, 5e-9, 2e-8, 1e-7, 5e-7]) expect(Math.abs(modal.value(t) - pf.value(t))).toBeLessThan(1e-9);
  });

  it('a step too small to slew settles as the small-signal response does', () => {
    const model = evaluate(twoStageMiller, base);
    const small = model.exact.settling_time.value!;
    const large = largeStepSettling(model.analysis.stamped, model.beta, model.loop.closedLoopPoles, { gm: base.gm1, tail: base.i1 }, 1e-6, 1e-3);
    if (typeof large === 'string') throw new Error(large);
    expect(large.peakDrive).toBeLessThan(0.01);
    expect(Math.abs(large.settlingTime - small) / small).toBeLessThan(1e-5);
  });

  it('TR-BDF2 misses the exact solution by LTE_C·h³·y‴ per step', () => {
    const g = 2 - Math.SQRT2;
    const amplification = (z: number) => ((1 / (g * (2 - g))) * ((1 + (g * z) / 2) / (1 - (g * z) / 2)) - (1 - g) ** 2 / (g * (2 - g))) / (1 - (g / 2) * z);
    for (const z of [1e-2, 3e-3]) expect((amplification(z) - Math.exp(z)) / z ** 3 / LTE_C).toBeCloseTo(1, 1);
  });
});
