// The closed-loop and time-domain figures against ngspice (Debian package
// `ngspice`), run live on seeded designs of every topology with a loop:
// `.tran` with `meas tran` for overshoot, rise time and settling time, `.ac`
// with `meas ac` for the closed-loop bandwidth and peaking, `tf` for the
// closed-loop DC gain (./ngspice.ts), and the settling of a large step with
// the input pair's current limited by its tail (a behavioural B source).
// Bars are those of ./compare.ts. Two ngspice processes at a time.
import { describe, expect, it } from 'vitest';
import { ngspiceAvailable, ngspiceVersion } from '../ngspice';
import { LOOP_TOPOLOGIES, MIN_PM_DEG, loopCases } from './cases';
import { BARS, type LargeStepErrors, type SmallSignalErrors, largeStep, smallSignal } from './compare';
import { pool } from './ngspice';

const available = ngspiceAvailable();
if (!available && !process.env.CI) console.warn('ngspice not installed: live closed-loop reference tests skipped (apt-get install -y ngspice)');

/** Designs per topology for the small-signal checks, and for the slew-limited ones (built-in topologies: the network states no tail). */
const SMALL = 40;
const LARGE = 20;

const worstOf = <T extends object>(rows: T[]): Partial<Record<keyof T, number>> => {
  const w: Partial<Record<keyof T, number>> = {};
  for (const r of rows) for (const [k, v] of Object.entries(r)) if (typeof v === 'number') w[k as keyof T] = Math.max(w[k as keyof T] ?? 0, v);
  return w;
};

describe.runIf(available || process.env.CI)('closed loop against ngspice, run live', () => {
  it('has ngspice installed', () => {
    expect(available, 'ngspice missing: apt-get install -y ngspice').toBe(true);
  });

  for (const topology of LOOP_TOPOLOGIES) {
    it(`${topology}: overshoot, rise, settling, bandwidth, peaking and gain agree with ngspice ${available ? ngspiceVersion() : ''} on ${SMALL} seeded designs`, async () => {
      const { cases, drawn, passedOver } = loopCases(topology, SMALL);
      expect(cases.length).toBe(SMALL);
      // Most drafts are usable: a harness that passed over most of them would test little.
      expect(passedOver.length, `passed over (PM < ${MIN_PM_DEG}° or unstable): ${passedOver.join(', ')}`).toBeLessThan(drawn / 4);
      const rows: SmallSignalErrors[] = await pool(cases.map((c) => () => smallSignal(c)));
      const failures: string[] = [];
      for (const r of rows) {
        for (const p of r.problems) failures.push(`${r.id}: ${p}`);
        if (r.overshootPp > BARS.overshootPp) failures.push(`${r.id}: overshoot off by ${r.overshootPp} pp`);
        if (r.riseRel > BARS.riseRel) failures.push(`${r.id}: rise time off by ${r.riseRel}`);
        if (r.settleRel > BARS.settleRel) failures.push(`${r.id}: settling time off by ${r.settleRel}`);
        if (r.bandwidthRel > BARS.bandwidthRel) failures.push(`${r.id}: closed-loop bandwidth off by ${r.bandwidthRel}`);
        if (r.peakingDb > BARS.peakingDb) failures.push(`${r.id}: peaking off by ${r.peakingDb} dB`);
        if (r.gainDb > BARS.gainDb) failures.push(`${r.id}: closed-loop gain off by ${r.gainDb} dB`);
      }
      console.log(`${topology}: worst agreement with ngspice over ${rows.length} closed loops:`, worstOf(rows));
      expect(failures).toEqual([]);
    }, 120_000);

    if (topology === 'network') continue;
    it(`${topology}: slew-limited settling agrees with ngspice's behavioural pair on ${LARGE} seeded designs`, async () => {
      const { cases } = loopCases(topology, LARGE);
      const rows: LargeStepErrors[] = await pool(cases.map((c) => () => largeStep(c)));
      const failures: string[] = [];
      for (const r of rows) {
        for (const p of r.problems) failures.push(`${r.id}: ${p}`);
        if (r.settleRel > BARS.slewSettleRel) failures.push(`${r.id}: settling after the large step off by ${r.settleRel}`);
      }
      // The step must actually slew in most designs, or the check would test the linear path only.
      const slewed = rows.filter((r) => r.peakDrive > 1).length;
      expect(slewed, 'designs whose input pair was driven beyond its linear range').toBeGreaterThanOrEqual(rows.length / 2);
      console.log(`${topology}: slew-limited settling, ${slewed} of ${rows.length} slewing, worst ${worstOf(rows).settleRel}`);
      expect(failures).toEqual([]);
    }, 120_000);
  }
});
