// Loop gains with more than one unity crossing, built from a general gm-C
// network: a one-pole stage (gain 10, pole at 1 rad/s) driving a gm-C biquad
// low-pass (ω0 = 100 rad/s, Q = 20). Nodal analysis of the network gives
//   A(s) = 10·ω0² / ((1 + s)·(s² + s·ω0/Q + ω0²)),
// the standard second-order low-pass (e.g. Sedra & Smith, "Microelectronic
// Circuits", ch. on filters — the form recalled from memory, re-derived here).
// |A| falls through 1 near 10 rad/s, rises above it again on the resonant peak
// (|A(jω0)| ≈ 10/ω0·Q = 2) and falls through 1 once more.
import { describe, expect, it } from 'vitest';
import { analyzeLoop, analyzeNetwork } from '../../src/engine/analyze';
import type { Network } from '../../src/engine/network';

const w0 = 100;
const Q = 20;
const net: Network = {
  input: 'in',
  output: 'z',
  elements: [
    { kind: 'vccs', name: 'ga', a: 'x', b: '0', ctrlP: 'in', ctrlN: '0', gm: 10 },
    { kind: 'conductance', name: 'rx', a: 'x', b: '0', siemens: 1 },
    { kind: 'capacitance', name: 'cx', a: 'x', b: '0', farads: 1 },
    { kind: 'vccs', name: 'gb', a: 'y', b: '0', ctrlP: 'x', ctrlN: '0', gm: w0 },
    { kind: 'conductance', name: 'gy', a: 'y', b: '0', siemens: w0 / Q },
    { kind: 'capacitance', name: 'cy', a: 'y', b: '0', farads: 1 },
    { kind: 'vccs', name: 'gc', a: 'y', b: '0', ctrlP: 'z', ctrlN: '0', gm: w0 },
    { kind: 'vccs', name: 'gd', a: '0', b: 'z', ctrlP: 'y', ctrlN: '0', gm: w0 },
    { kind: 'capacitance', name: 'cz', a: 'z', b: '0', farads: 1 },
  ],
};

// Closed form on ω (rad/s).
const mag = (w: number) => (10 * w0 * w0) / (Math.hypot(1, w) * Math.hypot(w0 * w0 - w * w, (w * w0) / Q));
const phaseDeg = (w: number) => (-Math.atan(w) - Math.atan2((w * w0) / Q, w0 * w0 - w * w)) * (180 / Math.PI);

function crossings(): number[] {
  const out: number[] = [];
  let prev = 0.01;
  for (let w = 0.01 * 1.001; w < 1e5; w *= 1.001) {
    if ((mag(prev) - 1) * (mag(w) - 1) < 0) {
      let a = prev;
      let b = w;
      for (let i = 0; i < 200; i++) {
        const m = Math.sqrt(a * b);
        if ((mag(a) - 1) * (mag(m) - 1) <= 0) b = m;
        else a = m;
      }
      out.push(Math.sqrt(a * b));
    }
    prev = w;
  }
  return out;
}

describe('several crossovers', () => {
  const a = analyzeNetwork(net);
  const loop = analyzeLoop(a, 1);
  const expected = crossings();

  it('finds the closed form\'s poles: one real, a complex pair with Q = 20', () => {
    expect(a.poles).toHaveLength(3);
    expect(a.poles[0].re).toBeCloseTo(-1, 12);
    const pair = a.poles[1];
    expect(Math.hypot(pair.re, pair.im)).toBeCloseTo(w0, 9);
    expect(Math.hypot(pair.re, pair.im) / (2 * Math.abs(pair.re))).toBeCloseTo(Q, 9);
  });

  it('reports every crossing with its margin, and says so', () => {
    expect(expected).toHaveLength(3);
    expect(loop.crossoversHz).toHaveLength(3);
    loop.crossoversHz.forEach((f, i) => expect(Math.abs(2 * Math.PI * f - expected[i]) / expected[i]).toBeLessThan(1e-9));
    const margins = expected.map((w) => 180 + phaseDeg(w));
    loop.crossoverMarginsDeg.forEach((m, i) => expect(m).toBeCloseTo(margins[i], 6));
    expect(loop.phaseMargin.notes?.join(' ')).toMatch(/crosses 1 at 3 frequencies/);
  });

  it('decides stability from the closed loop, and gives no margin to an unstable one', () => {
    // Closed loop with β = 1: (1 + s)(s² + s·ω0/Q + ω0²) + 10·ω0² = s³ + a2·s² + a1·s + a0.
    // Routh–Hurwitz for a cubic with positive coefficients: stable iff a2·a1 > a0
    // (e.g. Ogata, "Modern Control Engineering", the Routh stability criterion).
    const a2 = 1 + w0 / Q;
    const a1 = w0 / Q + w0 * w0;
    const a0 = w0 * w0 + 10 * w0 * w0;
    expect(a2 * a1 > a0).toBe(false);
    expect(loop.stability).toBe('unstable');
    expect(loop.phaseMargin.value).toBeNull();
    expect(loop.phaseMargin.reason).toMatch(/closed loop is unstable/);
    expect(loop.phaseMargin.openLoop!).toBeCloseTo(Math.min(...expected.map((w) => 180 + phaseDeg(w))), 6);
  });

  it('follows the phase through −180° without wrapping (the biquad alone swings 180°)', () => {
    for (const w of [0.5, 10, 99, 101, 1e3, 1e4]) expect(a.at(w / (2 * Math.PI)).phaseDeg).toBeCloseTo(phaseDeg(w), 6);
  });
});
