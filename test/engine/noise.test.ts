// The noise engine against closed forms from outside the project:
// - the Gauss–Kronrod 7–15 pair integrates polynomials exactly up to the
//   degrees its construction promises (15-point Kronrod: degree 3·7 + 2 = 23;
//   the embedded 7-point Gauss rule: 2·7 − 1 = 13; R. Piessens et al.,
//   QUADPACK, 1983);
// - the thermal noise of a resistor, S_v = 4kTR (J. B. Johnson, "Thermal
//   agitation of electricity in conductors", Phys. Rev. 32, 1928; H. Nyquist,
//   "Thermal agitation of electric charge in conductors", Phys. Rev. 32, 1928);
// - kT/C: the thermal noise of a resistor filtered by a capacitor integrates
//   to kT/C whatever the resistance (from memory of the standard derivation,
//   e.g. B. Razavi, "Design of Analog CMOS Integrated Circuits", ch. 7).
import { describe, expect, it } from 'vitest';
import { stamp } from '../../src/engine/network';
import { BOLTZMANN, NoiseSolver, fourKT, gaussKronrod15, integrateLogFrequency } from '../../src/engine/noise';

describe('Gauss–Kronrod 7–15', () => {
  it('integrates x^k over [−1, 1] exactly for k ≤ 23, and its Gauss part for k ≤ 13 (the error estimate vanishes)', () => {
    const exact = (k: number) => (k % 2 ? 0 : 2 / (k + 1));
    for (let k = 0; k <= 23; k++) {
      const r = gaussKronrod15((x) => x ** k, -1, 1);
      expect(Math.abs(r.value - exact(k)), `k = ${k}`).toBeLessThan(1e-15);
      if (k <= 13) expect(r.error, `k = ${k}`).toBeLessThan(1e-15);
    }
    // Beyond degree 13 the Gauss rule is no longer exact, so the two rules differ; beyond 23 the Kronrod rule is off too.
    expect(gaussKronrod15((x) => x ** 14, -1, 1).error).toBeGreaterThan(1e-6);
    expect(Math.abs(gaussKronrod15((x) => x ** 24, -1, 1).value - exact(24))).toBeGreaterThan(1e-9);
  });

  it('adapts to a sharp resonance: ∫ df/((1 − (f/f0)²)² + (f/(Q·f0))²) over all f = π·Q·f0/2 (by residues)', () => {
    const f0 = 1e6;
    const q = 50;
    const g = (f: number) => 1 / ((1 - (f / f0) ** 2) ** 2 + (f / (q * f0)) ** 2);
    const r = integrateLogFrequency(g, 1e-3 * f0, 1e4 * f0, [f0]);
    // The closed form is over [0, ∞); the pieces left out: ≈ 1e-3·f0 below, ≈ f0/1e4 (·f0³/f³ tail) above.
    const outside = 1e-3 * f0 + f0 / (3 * 1e12);
    expect(r.converged).toBe(true);
    expect(Math.abs(r.value + outside - (Math.PI * q * f0) / 2) / ((Math.PI * q * f0) / 2)).toBeLessThan(1e-7);
  });
});

describe('thermal noise of a resistor and kT/C', () => {
  const T = 300;
  const R = 10e3;
  const C = 1e-12;
  // R from the (source-held) input to out, C from out to ground: the noise current 4kT/R between in and out.
  const st = stamp({
    elements: [
      { kind: 'conductance', name: 'r', a: 'in', b: 'out', siemens: 1 / R },
      { kind: 'capacitance', name: 'c', a: 'out', b: '0', farads: C },
    ],
    input: 'in',
    output: 'out',
  });
  const solver = new NoiseSolver(st, [{ name: 'r', psd: fourKT(T) / R, into: [['in', 1], ['out', -1]] }]);

  it('S_v = 4kTR at DC (Johnson, Nyquist), 4kTR/(1 + (ωRC)²) above', () => {
    const dc = solver.at(0);
    expect(Math.abs(dc.outPsd - 4 * BOLTZMANN * T * R) / (4 * BOLTZMANN * T * R)).toBeLessThan(1e-14);
    // 4kTR at 300 K, 10 kΩ is 1.657e-16 V²/Hz (12.9 nV/√Hz, the figure every noise table lists for 10 kΩ).
    expect(Math.sqrt(dc.outPsd)).toBeCloseTo(12.87e-9, 11);
    const f = 3e6;
    const w = 2 * Math.PI * f * R * C;
    expect(Math.abs(solver.at(f).outPsd - (4 * BOLTZMANN * T * R) / (1 + w * w)) / solver.at(f).outPsd).toBeLessThan(1e-12);
    // The gain of the RC low-pass comes with the same solve.
    const a = solver.at(f);
    expect(Math.hypot(a.gainRe, a.gainIm)).toBeCloseTo(1 / Math.sqrt(1 + w * w), 12);
  });

  it('integrates to kT/C, independent of R', () => {
    const fp = 1 / (2 * Math.PI * R * C);
    const lo = fp * 1e-6;
    const hi = fp * 1e6;
    const r = integrateLogFrequency((f) => solver.at(f).outPsd, lo, hi, [fp]);
    // Flat below lo (S·lo), 1/f² above hi (S(hi)·hi): the closed form is over [0, ∞).
    const total = r.value + solver.at(lo).outPsd * lo + solver.at(hi).outPsd * hi;
    expect(Math.abs(total - (BOLTZMANN * T) / C) / ((BOLTZMANN * T) / C)).toBeLessThan(1e-6);
    // 64 µV rms for 1 pF at 300 K: the textbook example.
    expect(Math.sqrt(total)).toBeCloseTo(64.4e-6, 7);
  });
});
