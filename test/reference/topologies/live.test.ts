// Re-runs ngspice (Debian package `ngspice`) on every design of
// test/fixtures/ngspice-topologies.json, so the comparison with the engine
// cannot go stale: the live results must match both the engine (within the
// bars of ./compare.ts) and the recorded fixture.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { compare, within, worst, type Errors } from './compare';
import { FIXTURE, TOPOLOGY_IDS, type FixtureEntry, type TopologiesFixture } from './generate';
import { ngspiceAvailable, ngspiceVersion } from '../ngspice';
import { runTopology, type AnyDesign, type TopologyResult } from './ngspice';

const fixture = JSON.parse(readFileSync(FIXTURE, 'utf8')) as TopologiesFixture;
const available = ngspiceAvailable();
if (!available && !process.env.CI) console.warn('ngspice not installed: live topology reference tests skipped (apt-get install -y ngspice)');

const relDiff = (a: number | null | undefined, b: number | null | undefined) =>
  a === null || a === undefined || b === null || b === undefined ? ((a ?? null) === (b ?? null) ? 0 : Infinity) : Math.abs(a - b) / Math.abs(b);
const absDiff = (a: number | null | undefined, b: number | null | undefined) =>
  a === null || a === undefined || b === null || b === undefined ? ((a ?? null) === (b ?? null) ? 0 : Infinity) : Math.abs(a - b);

/** Where a live run no longer matches its recording (ngspice changed, or the fixture was edited by hand). */
function stale(live: TopologyResult, rec: TopologyResult): string[] {
  const out: string[] = [];
  if (absDiff(live.dcGainDb, rec.dcGainDb) > 1e-6) out.push(`DC gain ${live.dcGainDb} dB, recorded ${rec.dcGainDb}`);
  for (const k of ['unityGainHz', 'bandwidthHz', 'loopCrossoverHz', 'inputCapacitanceF'] as const) {
    if (relDiff(live[k], rec[k]) > 1e-8) out.push(`${k} ${live[k]}, recorded ${rec[k]}`);
  }
  for (const k of ['phaseMarginDeg', 'gainMarginDb'] as const) if (absDiff(live[k], rec[k]) > 1e-6) out.push(`${k} ${live[k]}, recorded ${rec[k]}`);
  if (live.poles.length !== rec.poles.length || live.zeros.length !== rec.zeros.length) out.push('pole/zero count differs from the recording');
  else {
    const far = (a: { re: number; im: number }[], b: { re: number; im: number }[]) => a.some((p, i) => Math.hypot(p.re - b[i].re, p.im - b[i].im) > 1e-8 * Math.hypot(b[i].re, b[i].im));
    if (far(live.poles, rec.poles) || far(live.zeros, rec.zeros)) out.push('poles or zeros differ from the recording');
  }
  return out;
}

describe.runIf(available || process.env.CI)('engine vs ngspice, run live (single-stage, common-source, three-stage nested Miller)', () => {
  it('has ngspice installed', () => {
    expect(available, 'ngspice missing: apt-get install -y ngspice').toBe(true);
  });

  for (const kind of TOPOLOGY_IDS) {
    const entries = fixture.topologies[kind] as FixtureEntry<AnyDesign>[];
    it(`${kind}: agrees with ngspice ${available ? ngspiceVersion() : ''} on all ${entries.length} fixture designs`, () => {
      const failures: string[] = [];
      const all: { id: string; e: Errors }[] = [];
      for (const { design, ngspice: recorded } of entries) {
        const live = runTopology(kind, design);
        const e = compare(kind, design, live);
        all.push({ id: design.id, e });
        for (const p of within(e)) failures.push(`${design.id}: ${p}`);
        for (const p of stale(live, recorded)) failures.push(`${design.id}: fixture is stale: ${p}`);
      }
      console.log(`${kind}: worst agreement with live ngspice over ${all.length} designs:`, worst(all));
      expect(failures).toEqual([]);
    }, 120_000);
  }
});
