// A chain of gm–R–C stages, each driving the next through a transconductance:
// stage i has the pole 1/(r_i·c_i) and the gain −gm_i·r_i, so the chain's
// transfer function is Π(−gm_i·r_i)/Π(1 + s·r_i·c_i) exactly (each stage is
// isolated by its controlled source; nodal analysis, e.g. Sedra & Smith,
// "Microelectronic Circuits", the cascade of unilateral stages). Impedance
// levels decades apart make the conductance matrix's pivots spread over many
// decades: a well-posed network that a pivot-ratio test would call singular.
import { describe, expect, it } from 'vitest';
import { analyzeNetwork } from '../../src/engine/analyze';
import type { Element, Network } from '../../src/engine/network';

const R = [10e3, 1e6, 1e3, 100e3, 10e6, 100, 50e3];
const C = [1e-15, 1e-12, 1e-9, 1e-14, 1e-10, 1e-11, 1e-13];

function chain(stages: number): { net: Network; gain: number; poles: number[] } {
  const elements: Element[] = [];
  let prev = 'in';
  let gain = 1;
  const poles: number[] = [];
  for (let i = 1; i <= stages; i++) {
    const node = i === stages ? 'out' : `n${i}`;
    const r = R[i % R.length];
    const c = C[i % C.length];
    elements.push(
      { kind: 'vccs', name: `gm${i}`, a: node, b: '0', ctrlP: prev, ctrlN: '0', gm: 1e-3 },
      { kind: 'conductance', name: `r${i}`, a: node, b: '0', siemens: 1 / r },
      { kind: 'capacitance', name: `c${i}`, a: node, b: '0', farads: c },
    );
    gain *= -1e-3 * r;
    poles.push(1 / (r * c));
    prev = node;
  }
  return { net: { elements, input: 'in', output: 'out' }, gain, poles: poles.sort((a, b) => a - b) };
}

describe('a chain of gm–R–C stages at impedance levels decades apart', () => {
  for (const stages of [7, 12]) {
    it(`${stages} stages: DC gain and every pole as the closed form gives them`, () => {
      const { net, gain, poles } = chain(stages);
      const a = analyzeNetwork(net);
      expect(Math.abs(a.dcGain - gain) / Math.abs(gain)).toBeLessThan(1e-12);
      const mine = a.poles.map((p) => -p.re).sort((x, y) => x - y);
      // Real poles; a repeated one may split into a pair whose imaginary part is round-off of a multiple root.
      expect(a.poles.every((p) => Math.abs(p.im) <= (stages > 7 ? 1e-4 : 0) * Math.hypot(p.re, p.im))).toBe(true);
      expect(mine).toHaveLength(poles.length);
      // Repeated poles (the table of values repeats every seven stages) are resolved to the accuracy of a multiple root.
      mine.forEach((p, i) => expect(Math.abs(p - poles[i]) / poles[i]).toBeLessThan(stages > 7 ? 1e-5 : 1e-9));
      // The response at one frequency against the product of the stage responses.
      const w = 2 * Math.PI * 1e6;
      let re = gain;
      let im = 0;
      for (const p of poles) {
        // × 1/(1 + jx) = (1 − jx)/(1 + x²), x = ω/p
        const x = w / p;
        [re, im] = [(re + im * x) / (1 + x * x), (im - re * x) / (1 + x * x)];
      }
      const r = a.at(1e6);
      expect(Math.abs(20 * Math.log10(Math.hypot(re, im)) - r.magDb)).toBeLessThan(1e-6);
    });
  }
});
