// Regenerates test/fixtures/ngspice-two-stage.json: ngspice reference results
// for 60 seeded random two-stage Miller designs plus hand-picked edge cases.
// Run: npx tsx test/reference/generate.ts

import { mkdirSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { randomTwoStageDesigns, type TwoStageDesign } from './designs';
import { debianPackageVersion, ngspiceVersion, runTwoStage, sweepFor, type NgspiceResult } from './ngspice';

export const SEED = 20261201;
export const RANDOM_COUNT = 60;
export const FIXTURE = join(dirname(fileURLToPath(import.meta.url)), '..', 'fixtures', 'ngspice-two-stage.json');

// A typical mid-range design the edge cases are varied from.
const base: Omit<TwoStageDesign, 'id'> = {
  gm1: 200e-6,
  r1: 2e6,
  c1: 100e-15,
  gm2: 2e-3,
  r2: 200e3,
  c2: 200e-15,
  cc: 2e-12,
  cl: 2e-12,
  beta: 1,
};

/** Hand-picked cases the random set may miss or only graze. */
export const EDGE_DESIGNS: TwoStageDesign[] = [
  // Nulling resistor exactly 1/gm2: the numerator's s-term cancels, zero at infinity.
  { ...base, id: 'edge-rz-exact-inv-gm2', rz: 1 / base.gm2 },
  // Nearly cancelled zero (rz = 1.000001/gm2): LHP zero ~6 decades above the RHP one it replaced.
  { ...base, id: 'edge-rz-near-inv-gm2', rz: 1.000001 / base.gm2 },
  // Tiny Miller cap, heavy load: crossover above the output pole, negative phase margin (unstable in unity feedback).
  { ...base, id: 'edge-small-cc-unstable', gm1: 1e-3, gm2: 0.5e-3, cc: 0.2e-12, cl: 20e-12 },
  // Same with rz = 2/gm2: the zero moves to the LHP and buys back ~9° (barely stable).
  { ...base, id: 'edge-small-cc-rz-lhp', gm1: 1e-3, gm2: 0.5e-3, cc: 0.2e-12, cl: 20e-12, rz: 4e3 },
  // Feedback factor 0.1: loop crossover differs from the unity-gain frequency.
  { ...base, id: 'edge-beta-0.1', beta: 0.1 },
  // The unstable design above with beta = 0.1: the lower loop crossover restores a small positive margin.
  { ...base, id: 'edge-beta-0.1-small-cc', gm1: 1e-3, gm2: 0.5e-3, cc: 0.2e-12, cl: 20e-12, beta: 0.1 },
  // No load capacitance at all.
  { ...base, id: 'edge-cl-0', cl: 0 },
  { ...base, id: 'edge-cl-0-rz', cl: 0, rz: 0.5 / base.gm2 },
  // Heavy resistive load 1 kΩ: second-stage gain below 1.
  { ...base, id: 'edge-rl-1k', rl: 1e3 },
  // DC gain below 0 dB: no unity-gain crossing at all.
  { ...base, id: 'edge-gain-below-1', gm1: 20e-6, r1: 100e3, gm2: 200e-6, r2: 10e3, rl: 1e3 },
  // Poles ~14 decades apart (huge r, gm2; femtofarad parasitics): stress for .pz.
  { ...base, id: 'edge-wide-spread', gm1: 100e-6, r1: 20e6, c1: 10e-15, gm2: 20e-3, r2: 2e6, c2: 20e-15, cc: 10e-12, cl: 0 },
  { ...base, id: 'edge-wide-spread-rz', gm1: 100e-6, r1: 20e6, c1: 10e-15, gm2: 20e-3, r2: 2e6, c2: 20e-15, cc: 10e-12, cl: 0, rz: 0.2 / 20e-3 },
  { ...base, id: 'edge-wide-spread-rz-lhp', gm1: 2e-3, r1: 20e6, c1: 10e-15, gm2: 20e-3, r2: 2e6, c2: 20e-15, cc: 10e-12, cl: 20e-12, rz: 3 / 20e-3 },
];

export interface FixtureFile {
  source: string;
  regenerate: string;
  seed: number;
  generated: string;
  designs: { design: TwoStageDesign; ngspice: NgspiceResult }[];
}

function main(): void {
  const t0 = performance.now();
  const deb = debianPackageVersion();
  const version = ngspiceVersion() + (deb ? ` (Debian package ngspice ${deb})` : '');
  const designs = [...randomTwoStageDesigns(SEED, RANDOM_COUNT), ...EDGE_DESIGNS];
  const ppd = sweepFor(designs[0]).acPointsPerDecade;
  const entries = designs.map((design) => ({ design, ngspice: runTwoStage(design) }));

  const file: FixtureFile = {
    source:
      `ngspice ${version}, AC analysis (${ppd} points/decade, DC gain from .tf) and .pz analysis ` +
      'of the netlist built by test/reference/netlist.ts',
    regenerate: 'npx tsx test/reference/generate.ts',
    seed: SEED,
    generated: new Date().toISOString(),
    designs: entries,
  };
  mkdirSync(dirname(FIXTURE), { recursive: true });
  writeFileSync(FIXTURE, JSON.stringify(file, null, 1) + '\n');

  const failed = entries.filter((e) => e.ngspice.pzFailed);
  const noted = entries.filter((e) => e.ngspice.pzNote !== undefined);
  const worst = (pick: (r: NgspiceResult) => number | null) =>
    Math.max(0, ...entries.map((e) => pick(e.ngspice) ?? 0));
  console.log(`wrote ${entries.length} designs to ${FIXTURE} in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
  console.log(
    `max interpolation error estimate: unity-gain ${worst((r) => r.diagnostics.interpErr.unityGainRel).toExponential(1)} rel, ` +
      `loop crossover ${worst((r) => r.diagnostics.interpErr.loopCrossoverRel).toExponential(1)} rel, ` +
      `PM ${worst((r) => r.diagnostics.interpErr.phaseMarginDeg).toExponential(1)}°, ` +
      `GM ${worst((r) => r.diagnostics.interpErr.gainMarginDb).toExponential(1)} dB`,
  );
  console.log(
    `max pz-vs-AC deviation: ${worst((r) => r.diagnostics.pzVsAcMaxDb).toExponential(1)} dB, ` +
      `${worst((r) => r.diagnostics.pzVsAcMaxDeg).toExponential(1)}°`,
  );
  console.log(`pz failed on ${failed.length} design(s)${failed.map((e) => `\n  ${e.design.id}: ${e.ngspice.pzNote}`).join('')}`);
  for (const e of noted.filter((x) => !x.ngspice.pzFailed)) console.log(`  note ${e.design.id}: ${e.ngspice.pzNote}`);
}

// Only when run as a script, so tests may import EDGE_DESIGNS without regenerating.
if (process.argv[1] !== undefined && import.meta.url === pathToFileURL(process.argv[1]).href) main();
