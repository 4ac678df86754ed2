// Regenerates test/fixtures/ngspice-topologies.json: ngspice reference results
// for seeded random designs of the single-stage OTA, the common-source stage
// and the three-stage nested-Miller amplifier, plus hand-picked edge cases.
// Run: npx tsx test/reference/topologies/generate.ts

import { mkdirSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { debianPackageVersion, ngspiceVersion } from '../ngspice';
import {
  randomCommonSourceDesigns,
  randomSingleStageDesigns,
  randomThreeStageDesigns,
  type CommonSourceDesign,
  type SingleStageDesign,
  type ThreeStageDesign,
  type TopologyId,
} from './designs';
import { CIN_BELOW_POLE, POINTS_PER_DECADE, runTopology, type AnyDesign, type TopologyResult } from './ngspice';

export const SEEDS: Record<TopologyId, number> = {
  'single-stage': 20261211,
  'common-source': 20261212,
  'three-stage-nested-miller': 20261213,
};
export const RANDOM_COUNT: Record<TopologyId, number> = {
  'single-stage': 24,
  'common-source': 24,
  'three-stage-nested-miller': 24,
};
export const TOPOLOGY_IDS = Object.keys(SEEDS) as TopologyId[];
export const FIXTURE = join(dirname(fileURLToPath(import.meta.url)), '..', '..', 'fixtures', 'ngspice-topologies.json');

const ss: Omit<SingleStageDesign, 'id'> = { gm: 500e-6, rout: 5e6, cout: 100e-15, cl: 2e-12, beta: 1 };
const cas = { gm_cas: 2e-3, c_cas: 100e-15 };
const mir = { gm_mirror: 500e-6, c_mirror: 200e-15 };
const cs: Omit<CommonSourceDesign, 'id'> = { gm: 2e-3, rout: 50e3, cgs: 200e-15, cgd: 20e-15, cdb: 50e-15, rs: 10e3, cl: 100e-15 };
const nmc: Omit<ThreeStageDesign, 'id'> = {
  gm1: 100e-6, r1: 1e6, c1: 50e-15,
  gm2: 200e-6, r2: 1e6, c2: 50e-15,
  gm3: 4e-3, r3: 100e3, c3: 200e-15,
  cc1: 2e-12, cc2: 2e-12,
  cl: 20e-12, beta: 1,
};
const bwNmc = (d: Omit<ThreeStageDesign, 'id' | 'cc1' | 'cc2'>) => ({
  ...d,
  cc1: (4 * d.gm1 * d.cl) / d.gm3,
  cc2: (2 * d.gm2 * d.cl) / d.gm3,
});

/** Hand-picked cases the random sets may miss or only graze. */
export const EDGE_DESIGNS: { 'single-stage': SingleStageDesign[]; 'common-source': CommonSourceDesign[]; 'three-stage-nested-miller': ThreeStageDesign[] } = {
  'single-stage': [
    // No parasitic at the output (allowed): the load is the whole output capacitance.
    { ...ss, ...cas, id: 'edge-ss-cout0', cout: 0 },
    // One pole only, no load capacitance at all.
    { ...ss, id: 'edge-ss-plain-cl0', cl: 0 },
    // Slow cascode node (gm_cas/c_cas ≈ 1.6 × GBW): the non-dominant pole eats most of the margin.
    { ...ss, id: 'edge-ss-slow-cascode', gm: 2e-3, cl: 0.5e-12, gm_cas: 1e-3, c_cas: 400e-15 },
    // Mirror doublet, β = 0.1: crossover a decade lower than the unity-gain frequency.
    { ...ss, ...mir, id: 'edge-ss-mirror-beta-0.1', beta: 0.1 },
    // Cascode and mirror poles 1 % apart (a near-double pole, nearly cancelled by the doublet zero), i_tail given.
    { ...ss, ...cas, id: 'edge-ss-both-near-equal-poles', gm_mirror: 2.02e-3, c_mirror: 100e-15, i_tail: 100e-6 },
    // Heavy 1 kΩ load: A0 = gm·(rout ∥ rl) ≈ 0.1, no unity-gain crossing.
    { ...ss, ...cas, ...mir, id: 'edge-ss-gain-below-1', gm: 100e-6, rl: 1e3 },
    // Both nodes slow, β = 0.3, cl = 0.
    { ...ss, id: 'edge-ss-both-slow-cl0', gm: 3e-3, cl: 0, gm_cas: 1e-3, c_cas: 300e-15, gm_mirror: 300e-6, c_mirror: 500e-15, beta: 0.3 },
  ],
  'common-source': [
    // Ideal source, no load cap: one pole, and |A| flattens at cgd/(cgd + cdb) above the zero.
    { ...cs, id: 'edge-cs-rs0-cl0', rs: 0, cl: 0 },
    // Same with cgd ≫ cdb: the high-frequency feedthrough is −0.4 dB, |A| never falls far.
    { ...cs, id: 'edge-cs-rs0-feedthrough', rs: 0, cl: 0, cgd: 200e-15, cdb: 10e-15 },
    // Large source resistance: the Miller-multiplied gate pole dominates.
    { ...cs, id: 'edge-cs-big-rs', rs: 100e3, rout: 500e3 },
    // Heavy load: |A0| = gm·(rout ∥ rl) < 1.
    { ...cs, id: 'edge-cs-gain-below-1', gm: 200e-6, rl: 2e3 },
    // No capacitance from drain to ground and an ideal source: A = (s·cgd − gm)/(1/rout + s·cgd) tends to 1
    // from above, so |A| > 1 at every frequency and there is no unity-gain frequency.
    { ...cs, id: 'edge-cs-no-drain-cap', rs: 0, cdb: 0, cl: 0 },
    // No gate-source capacitance (allowed): the gate pole is set by cgd alone.
    { ...cs, id: 'edge-cs-cgs0', cgs: 0 },
    // Gate and drain poles close together.
    { ...cs, id: 'edge-cs-close-poles', gm: 1e-3, rout: 10e3, cgs: 1e-12, cgd: 5e-15, cdb: 500e-15, rs: 5e3, cl: 0.5e-12 },
  ],
  'three-stage-nested-miller': [
    // Exact Butterworth placement, the textbook case (about 60° of margin).
    { ...bwNmc(nmc), id: 'edge-nmc-butterworth-exact' },
    { ...bwNmc({ ...nmc, beta: 0.2, rl: 20e3 }), id: 'edge-nmc-butterworth-beta-0.2-rl' },
    // No parasitics at the internal nodes (allowed): still three poles, set by cc1, cc2 and c3 + cl.
    { ...nmc, id: 'edge-nmc-no-internal-caps', c1: 0, c2: 0 },
    // No load capacitance: only c3 at the output.
    { ...nmc, id: 'edge-nmc-cl0', cl: 0 },
    // Inner cap far too small: a lightly damped complex pair above the crossover, large PM but a gain margin of only 2 dB.
    { ...nmc, id: 'edge-nmc-small-cc2-peaking', cc2: 0.1e-12, cc1: 1e-12 },
    // Outer cap too small as well: the crossover moves past the pair, negative phase and gain margins.
    { ...nmc, id: 'edge-nmc-small-cc-unstable', cc2: 0.1e-12, cc1: 0.5e-12 },
    // gm3 = gm2: the non-dominant pair loses its damping term cc2·(gm3 − gm2).
    { ...nmc, id: 'edge-nmc-gm3-eq-gm2', gm3: 200e-6, cc1: 4e-12, cc2: 2e-12 },
    // Heavy resistive load, β = 0.5.
    { ...nmc, id: 'edge-nmc-rl-2k-beta-0.5', rl: 2e3, beta: 0.5 },
  ],
};

export interface FixtureEntry<D> {
  design: D;
  ngspice: TopologyResult;
}

export interface TopologiesFixture {
  source: string;
  regenerate: string;
  seeds: Record<TopologyId, number>;
  generated: string;
  topologies: {
    'single-stage': FixtureEntry<SingleStageDesign>[];
    'common-source': FixtureEntry<CommonSourceDesign>[];
    'three-stage-nested-miller': FixtureEntry<ThreeStageDesign>[];
  };
}

export function allDesigns(): { [K in TopologyId]: TopologiesFixture['topologies'][K][number]['design'][] } {
  return {
    'single-stage': [...randomSingleStageDesigns(SEEDS['single-stage'], RANDOM_COUNT['single-stage']), ...EDGE_DESIGNS['single-stage']],
    'common-source': [...randomCommonSourceDesigns(SEEDS['common-source'], RANDOM_COUNT['common-source']), ...EDGE_DESIGNS['common-source']],
    'three-stage-nested-miller': [
      ...randomThreeStageDesigns(SEEDS['three-stage-nested-miller'], RANDOM_COUNT['three-stage-nested-miller']),
      ...EDGE_DESIGNS['three-stage-nested-miller'],
    ],
  };
}

function main(): void {
  const t0 = performance.now();
  const deb = debianPackageVersion();
  const version = ngspiceVersion() + (deb ? ` (Debian package ngspice ${deb})` : '');
  const designs = allDesigns();
  const run = <D extends AnyDesign>(kind: TopologyId, ds: D[]): FixtureEntry<D>[] => ds.map((design) => ({ design, ngspice: runTopology(kind, design) }));
  const file: TopologiesFixture = {
    source:
      `ngspice ${version}: .tf (DC gain), .pz and AC analysis (${POINTS_PER_DECADE} points/decade) of the netlists built by ` +
      `test/reference/topologies/netlist.ts; common-source input capacitance from the source current at ${CIN_BELOW_POLE}× below the lowest pole`,
    regenerate: 'npx tsx test/reference/topologies/generate.ts',
    seeds: SEEDS,
    generated: new Date().toISOString(),
    topologies: {
      'single-stage': run('single-stage', designs['single-stage']),
      'common-source': run('common-source', designs['common-source']),
      'three-stage-nested-miller': run('three-stage-nested-miller', designs['three-stage-nested-miller']),
    },
  };
  mkdirSync(dirname(FIXTURE), { recursive: true });
  writeFileSync(FIXTURE, JSON.stringify(file, null, 1) + '\n');

  console.log(`wrote ${FIXTURE} in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
  for (const kind of TOPOLOGY_IDS) {
    const entries = file.topologies[kind] as FixtureEntry<AnyDesign>[];
    const worst = (pick: (r: TopologyResult) => number | null | undefined) => Math.max(0, ...entries.map((e) => pick(e.ngspice) ?? 0));
    const errKeys = [...new Set(entries.flatMap((e) => Object.keys(e.ngspice.diagnostics.interpErr)))];
    console.log(`${kind}: ${entries.length} designs`);
    console.log(`  max interpolation error estimate: ${errKeys.map((k) => `${k} ${worst((r) => r.diagnostics.interpErr[k]).toExponential(1)}`).join(', ')}`);
    console.log(`  max pz-vs-AC deviation: ${worst((r) => r.diagnostics.pzVsAcMaxDb).toExponential(1)} dB, ${worst((r) => r.diagnostics.pzVsAcMaxDeg).toExponential(1)}°`);
    console.log(`  sweep extended on ${entries.filter((e) => e.ngspice.diagnostics.sweepExtensions > 0).length} design(s)`);
    for (const e of entries.filter((x) => x.ngspice.pzNote !== undefined)) {
      console.log(`  ${e.ngspice.pzFailed ? 'pz FAILED' : 'note'} ${e.design.id}: ${e.ngspice.pzNote}`);
    }
  }
}

// Only when run as a script, so tests may import the designs without regenerating.
if (process.argv[1] !== undefined && import.meta.url === pathToFileURL(process.argv[1]).href) main();
