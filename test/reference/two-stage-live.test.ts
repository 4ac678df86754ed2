// Re-runs ngspice (Debian package `ngspice`) on every design of the fixture,
// so the comparison with the engine cannot go stale: the live results must
// match both the engine (within the bars) and the recorded fixture.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { compare, within, worst, type Errors } from './compare';
import { FIXTURE, type FixtureFile } from './generate';
import { ngspiceAvailable, ngspiceVersion, runTwoStage } from './ngspice';

const fixture = JSON.parse(readFileSync(FIXTURE, 'utf8')) as FixtureFile;
const available = ngspiceAvailable();
if (!available && !process.env.CI) console.warn('ngspice not installed: live reference tests skipped (apt-get install -y ngspice)');

describe.runIf(available || process.env.CI)('engine vs ngspice, run live', () => {
  it('has ngspice installed', () => {
    expect(available, 'ngspice missing: apt-get install -y ngspice').toBe(true);
  });

  const all: Errors[] = [];
  it(`agrees with ngspice ${available ? ngspiceVersion() : ''} on all ${fixture.designs.length} fixture designs`, () => {
    const failures: string[] = [];
    for (const { design, ngspice: recorded } of fixture.designs) {
      const live = runTwoStage(design);
      const e = compare(design, live);
      all.push(e);
      for (const p of within(e)) failures.push(`${design.id}: ${p}`);
      // The recording must still describe what ngspice computes today.
      if (Math.abs(live.dcGainDb - recorded.dcGainDb) > 1e-6) failures.push(`${design.id}: fixture DC gain is stale`);
      if (Math.abs((live.phaseMarginDeg ?? 0) - (recorded.phaseMarginDeg ?? 0)) > 1e-4) failures.push(`${design.id}: fixture phase margin is stale`);
    }
    console.log(`worst agreement with live ngspice over ${all.length} designs:`, worst(all));
    expect(failures).toEqual([]);
  }, 240_000);
});
