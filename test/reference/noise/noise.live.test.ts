// The noise figures against ngspice 39's `noise` analysis (Debian package
// `ngspice`), run live on every design: 40 seeded designs of each built-in
// topology and 40 random user-defined networks (./designs.ts), netlists
// written from the design params with the channel noise of each device as a
// copied noise resistor (./netlist.ts).
//
// Bars (issue 13): the input-referred density within 0.5 % at six
// frequencies of the sweep; its integral over the sweep within 1 %; for the
// topologies in a loop, the closed loop's output noise integrated over all
// frequencies within 1 % of the integral of ngspice's densities over 10⁻⁴ of
// the lowest to 10⁴ times the highest closed-loop pole (where the loop is
// stable). The integrals of ngspice's densities are taken by the power-law
// rule ngspice itself uses (see ./ngspice.ts for why not its inoise_total).

import { describe, expect, it } from 'vitest';
import { checkText } from '../../../src/check';
import { evaluate, type Model } from '../../../src/model/model';
import { commonSource } from '../../../src/topologies/common-source';
import { INPUT_NOISE_AT, NOISE_BAND_FROM, NOISE_BAND_TO } from '../../../src/topologies/common';
import { singleStage } from '../../../src/topologies/single-stage';
import { threeStageNestedMiller } from '../../../src/topologies/three-stage-nested-miller';
import { twoStageMiller } from '../../../src/topologies/two-stage-miller';
import type { Topology, Values } from '../../../src/topologies/types';
import { ngspiceAvailable, ngspiceVersion } from '../ngspice';
import { type AnyNoiseDesign, type NoiseTopology, type RandomNetwork, noiseDesigns, randomNetworks } from './designs';
import { NOISE_OUTPUT, closeLoop, networkNoiseElements, noiseElements, noiseGenerator } from './netlist';
import { powerLawRms, runNoise } from './ngspice';

export const NOISE_BARS = { densityRel: 5e-3, integralRel: 1e-2 };
/** Points a decade: 50, or 50·Q around a resonance of quality factor Q (a peak of relative width 1/Q needs points inside it), at most 4000. */
const perDecade = (roots: ReadonlyArray<{ re: number; im: number }>): number => {
  const q = Math.max(0.5, ...roots.filter((r) => r.re !== 0).map((r) => Math.hypot(r.re, r.im) / (2 * Math.abs(r.re))));
  return Math.min(4000, Math.max(50, Math.ceil(50 * q)));
};

const TOPOLOGY: Record<NoiseTopology, Topology> = {
  'two-stage-miller': twoStageMiller,
  'single-stage': singleStage,
  'common-source': commonSource,
  'three-stage-nested-miller': threeStageNestedMiller,
};

const valuesOf = (d: AnyNoiseDesign): Values => {
  const { id: _id, ...rest } = d;
  return rest as unknown as Values;
};

const TWO_PI = 2 * Math.PI;
const decadeFloor = (x: number) => 10 ** Math.floor(Math.log10(x));
const decadeCeil = (x: number) => 10 ** Math.ceil(Math.log10(x));
const rel = (a: number | null | undefined, b: number) => (a === null || a === undefined ? Infinity : a === b ? 0 : Math.abs(a - b) / Math.abs(b));

interface Worst {
  density: number;
  band: number;
  closed: number;
  closedCount: number;
}

/**
 * The harness's integral of the output densities reproduces ngspice's own
 * onoise_total (when it prints a number) to 10⁻⁴: ngspice applies the rule to
 * each generator's density and sums, the harness to their sum.
 */
function selfCheck(id: string, ng: ReturnType<typeof runNoise>, failures: string[]): void {
  if (!Number.isFinite(ng.onoiseTotal)) return;
  const mine = powerLawRms(ng.f, ng.onoise);
  if (!(rel(mine, ng.onoiseTotal) < 1e-4)) failures.push(`${id}: the power-law integral of onoise_spectrum (${mine}) is not ngspice's onoise_total (${ng.onoiseTotal})`);
}

/** Compares one model with ngspice; returns the errors and the failures against the bars. */
function compareNoise(id: string, model: Model, elements: string[], output: string, temperature: number, inLoop: boolean): { errors: Omit<Worst, 'closedCount'> & { closedDone: boolean }; failures: string[] } {
  const failures: string[] = [];
  const poles = model.analysis.poles.map((p) => Math.hypot(p.re, p.im) / TWO_PI).filter((f) => f > 0);
  // The sweep: a decade below the lowest pole to the decade of the highest.
  const f1 = decadeFloor(Math.min(...poles) / 10);
  const f2 = Math.max(decadeCeil(Math.max(...poles)), f1 * 1e3);
  const ng = runNoise(id, elements, output, temperature, f1, f2, perDecade([...model.analysis.poles, ...model.analysis.zeros]));
  const at = (extra: Values) => evaluate(model.topology, { ...model.values, ...extra });
  let density = 0;
  for (let k = 0; k < 6; k++) {
    const i = Math.round((k * (ng.f.length - 1)) / 5);
    const mine = at({ [INPUT_NOISE_AT]: ng.f[i] }).exact.input_noise;
    const e = rel(mine?.value, ng.inoise[i]);
    density = Math.max(density, e);
    if (!(e <= NOISE_BARS.densityRel)) failures.push(`${id}: input noise at ${ng.f[i]} Hz: engine ${mine?.value ?? mine?.reason}, ngspice ${ng.inoise[i]} V/√Hz`);
  }
  selfCheck(id, ng, failures);
  const band = at({ [NOISE_BAND_FROM]: ng.f[0], [NOISE_BAND_TO]: ng.f[ng.f.length - 1] }).exact.integrated_noise;
  const reference = powerLawRms(ng.f, ng.inoise);
  const bandErr = rel(band?.value, reference);
  if (!(bandErr <= NOISE_BARS.integralRel)) failures.push(`${id}: integrated input noise over ${ng.f[0]}–${ng.f[ng.f.length - 1]} Hz: engine ${band?.value ?? band?.reason}, ngspice densities ${reference} V`);
  let closed = 0;
  let closedDone = false;
  if (inLoop && model.loop.stability === 'stable') {
    const mine = model.exact.integrated_noise;
    const cl = model.loop.closedLoopPoles.map((p) => Math.hypot(p.re, p.im) / TWO_PI).filter((f) => f > 0);
    const lo = decadeFloor(Math.min(...cl) * 1e-4);
    const hi = decadeCeil(Math.max(...cl) * 1e4);
    const ngc = runNoise(`${id} closed`, closeLoop(elements, model.beta, output), output, temperature, lo, hi, perDecade([...model.loop.closedLoopPoles, ...model.analysis.poles, ...model.analysis.zeros]));
    selfCheck(`${id} closed`, ngc, failures);
    const reference = powerLawRms(ngc.f, ngc.onoise);
    closed = rel(mine?.value, reference);
    closedDone = true;
    if (!(closed <= NOISE_BARS.integralRel)) failures.push(`${id}: closed-loop output noise: engine ${mine?.value ?? mine?.reason}, ngspice densities ${reference} V over ${lo}–${hi} Hz`);
  }
  return { errors: { density, band: bandErr, closed, closedDone }, failures };
}

function specOf(net: RandomNetwork): string {
  const el = net.elements.map((e) => {
    const noise = e.noise ? `, noise: ${e.noise}` : '';
    const gamma = e.gamma !== undefined ? `, gamma: ${e.gamma.toPrecision(17)}` : '';
    const unit = { resistor: 'Ω', capacitor: 'F', transconductance: 'S' }[e.kind];
    const where = e.kind === 'transconductance' ? `into: ${e.b}, from: ${e.a}, control: [${e.control!.join(', ')}]` : `between: [${e.a}, ${e.b}]`;
    return `    ${e.name}: {kind: ${e.kind}, ${where}${noise}${gamma}, value: ${e.value.toExponential(16)} ${unit}}`;
  });
  return ['---', 'polecheck: 1', `block: ${net.id}`, 'topology: network', 'network:', '  input: in', '  output: out', `  nodes: [${net.nodes.join(', ')}]`, '  elements:', ...el, 'conditions:', `  cl: ${net.cl.toExponential(16)} F`, `  beta: ${net.beta.toPrecision(17)}`, `  temperature: ${net.temperature.toPrecision(17)} K`, '---', ''].join('\n');
}

/** Findings that mean the spec text was not read as written. */
const READER_ERRORS = new Set(['yaml-syntax', 'front-matter', 'unknown-key', 'wrong-unit', 'invalid-value', 'missing-value', 'missing-param', 'network']);

const available = ngspiceAvailable();
if (!available && !process.env.CI) console.warn('ngspice not installed: live noise reference tests skipped (apt-get install -y ngspice)');

describe.runIf(available || process.env.CI)('noise against ngspice, run live', () => {
  it('has ngspice installed', () => expect(available, 'ngspice missing: apt-get install -y ngspice').toBe(true));

  it('the copied noise resistor gives the textbook densities through ngspice: 4kTR (Johnson, Nyquist, 1928) and kT/C', () => {
    // A 10 kΩ noise resistor copied into `out`, which a noiseless 10 kΩ and 1 pF hold to ground:
    // S_out(0) = (4kT/R)·R² = 4kTR, and the integral over all frequencies kT/C.
    const [R, C, T] = [10e3, 1e-12, 300];
    const elements = ['vin in 0 dc 0 ac 1', `Rq out 0 ${R} noisy=0`, `Cq out 0 ${C}`, ...noiseGenerator('r', R, [['out', 1]])];
    const fp = 1 / (2 * Math.PI * R * C);
    const ng = runNoise('textbook', elements, 'out', T, fp * 1e-4, fp * 1e4, 100);
    const k = 1.380649e-23;
    expect(Math.abs(ng.onoise[0] ** 2 / (4 * k * T * R) - 1)).toBeLessThan(1e-5);
    // Over 10⁻⁴…10⁴ fp the rest of [0, ∞) is 10⁻⁴·(2/π) of the whole at each end.
    expect(Math.abs(powerLawRms(ng.f, ng.onoise) ** 2 / ((k * T) / C) - 1)).toBeLessThan(2e-4);
  });

  const report = (name: string, all: Array<Omit<Worst, 'closedCount'> & { closedDone: boolean }>) => {
    const worst: Worst = { density: 0, band: 0, closed: 0, closedCount: 0 };
    for (const e of all) {
      worst.density = Math.max(worst.density, e.density);
      worst.band = Math.max(worst.band, e.band);
      if (e.closedDone) (worst.closed = Math.max(worst.closed, e.closed)), worst.closedCount++;
    }
    console.log(`${name}: worst relative error against ngspice ${available ? ngspiceVersion() : ''} over ${all.length} designs (closed loop: ${worst.closedCount}):`, worst);
  };

  for (const kind of Object.keys(TOPOLOGY) as NoiseTopology[]) {
    it(`${kind}: densities, band integrals and closed-loop output noise of 40 seeded designs`, () => {
      const failures: string[] = [];
      const all = [];
      const designs = noiseDesigns(kind);
      expect(designs.length).toBeGreaterThanOrEqual(40);
      for (const d of designs) {
        const model = evaluate(TOPOLOGY[kind], valuesOf(d));
        const r = compareNoise(d.id, model, noiseElements(kind, d), NOISE_OUTPUT[kind], d.temperature, kind !== 'common-source');
        all.push(r.errors);
        failures.push(...r.failures);
      }
      report(kind, all);
      expect(failures).toEqual([]);
    }, 120_000);
  }

  it('network: 40 random networks read from their spec text', () => {
    const failures: string[] = [];
    const all = [];
    for (const net of randomNetworks(1305)) {
      const r = checkText(`${net.id}.md`, specOf(net));
      // The spec must be read whole (an unstable loop at its β is a finding of another kind, and fine here).
      const unread = r.findings.filter((f) => READER_ERRORS.has(f.rule));
      expect(unread.map((f) => f.message), net.id).toEqual([]);
      const c = compareNoise(net.id, r.model!, networkNoiseElements(net), 'out', net.temperature, true);
      all.push(c.errors);
      failures.push(...c.failures);
    }
    report('network', all);
    expect(failures).toEqual([]);
  }, 120_000);
});
