// Stability and margins against ngspice 39 (Debian package `ngspice`), run
// live: open-loop-unstable three-stage nested-Miller blocks (gm3 < gm2),
// ordinary two-stage designs, conditionally stable multipath networks and
// inverting networks (./stability-cases.ts). For every case polecheck's model
// (through `checkText`) is compared with ngspice (./loop-reference.ts):
// - the stability verdict and the closed-loop poles against the `.pz` of the
//   closed loop (input driven by vin − β·vout; any pole with Re ≥ 0 is
//   unstable), itself checked against the Nyquist count Z = P + N on ngspice's
//   AC sweep (Franklin, Powell, Emami-Naeini, "Feedback Control of Dynamic
//   Systems", §6.3);
// - an unstable loop: both margins withheld (no value, not "unbounded"), the
//   open-loop reading kept beside them and equal to ngspice's, and both margin
//   claims failing as errors;
// - a stable loop: the phase margin (0.1°) and the gain-increase margin
//   (0.01 dB, "unbounded" exactly when ngspice finds no phase crossing with
//   |βA| < 1) against ngspice's refined AC sweep; the gain-reduction margin of a
//   conditionally stable loop (and its note) against the same;
// - the margins' meaning: the gain factors they state are where ngspice's
//   closed-loop poles cross the jω axis (a closed-loop `.pz` at β·k·0.99 and
//   β·k·1.01 lies on either side of the change of stability).
// Bars: the reference harness's (0.1 %, 0.1°, 0.01 dB).

import { describe, expect, it } from 'vitest';
import { checkText } from '../../src/check';
import { closedLoopPoles, nyquistAtGain, runLoops, type LoopReference } from './loop-reference';
import { ngspiceAvailable, ngspiceVersion } from './ngspice';
import { stabilityCases, type StabilityCase } from './stability-cases';

const available = ngspiceAvailable();
if (!available && !process.env.CI) console.warn('ngspice not installed: live stability checks skipped (apt-get install -y ngspice)');

const BAR = { rel: 1e-3, deg: 0.1, db: 0.01 };
const mag = (p: { re: number; im: number }) => Math.hypot(p.re, p.im);

interface Outcome {
  c: StabilityCase;
  ref: LoopReference;
  problems: string[];
  stable: boolean;
  conditional: boolean;
  /** polecheck's gain-increase and gain-reduction margins (dB), where it states them. */
  increaseDb: number | null;
  reductionDb: number | null;
}

let outcomes: Outcome[] | undefined;

async function run(): Promise<Outcome[]> {
  if (outcomes) return outcomes;
  const cases = stabilityCases(11);
  const refs = await runLoops(cases.map((c) => c.job));
  outcomes = cases.map((c) => check(c, refs.get(c.id)!));
  return outcomes;
}

function check(c: StabilityCase, ref: LoopReference): Outcome {
  const problems: string[] = [];
  const r = checkText(`${c.id}.md`, c.text);
  const m = r.model;
  if (!m) return { c, ref, problems: [`no model: ${JSON.stringify(r.findings)}`], stable: ref.stable, conditional: false, increaseDb: null, reductionDb: null };
  const loop = m.loop;
  // The reference agrees with itself: closed-loop pz against the Nyquist count on the sweep.
  if (!ref.consistent) problems.push(`reference: closed-loop pz has ${ref.rhpClosed} right-half-plane poles, the Nyquist count ${ref.nyquistRhp}`);
  // The verdict and the closed-loop poles.
  if (loop.stability !== (ref.stable ? 'stable' : 'unstable')) problems.push(`stability ${loop.stability}, ngspice: ${ref.rhpClosed} closed-loop pole(s) with Re ≥ 0`);
  if (ref.closedPoles) {
    const theirs = [...ref.closedPoles].sort((a, b) => mag(a) - mag(b));
    const ours = [...loop.closedLoopPoles];
    if (ours.length !== theirs.length) problems.push(`${ours.length} closed-loop poles, ngspice ${theirs.length}`);
    for (const p of theirs) {
      const near = Math.min(...ours.map((q) => Math.hypot(q.re - p.re, q.im - p.im) / mag(p)));
      if (!(near < BAR.rel)) problems.push(`closed-loop pole ${p.re}${p.im >= 0 ? '+' : ''}${p.im}j of ngspice is ${near.toExponential(2)} away from polecheck's`);
    }
  }
  const pm = m.exact.phase_margin;
  const gm = m.exact.gain_margin;
  const findings = (claim: string) => r.findings.filter((f) => f.claim === claim && f.verdict?.outcome === 'fails' && f.severity === 'error');
  let conditional = false;
  const reductions = loop.phaseCrossings.filter((x) => x.loopDb >= 0).map((x) => x.loopDb);
  if (!ref.stable) {
    // Margins of an unstable loop are withheld; the open-loop reading is kept beside them.
    if (pm.value !== null) problems.push(`unstable loop, yet a phase margin of ${pm.value}°`);
    if (gm.value !== null || gm.unbounded) problems.push(`unstable loop, yet a gain margin of ${gm.unbounded ? '"unbounded"' : `${gm.value} dB`}`);
    if (ref.phaseMarginDeg !== null && !(Math.abs((pm.openLoop ?? NaN) - ref.phaseMarginDeg) <= BAR.deg)) problems.push(`open-loop phase reading ${pm.openLoop}, ngspice ${ref.phaseMarginDeg}`);
    if (!findings('phase_margin').length) problems.push('phase_margin {min: 20 deg} does not fail as an error on an unstable loop');
    if (!findings('gain_margin').length) problems.push('gain_margin {min: 3 dB} does not fail as an error on an unstable loop');
  } else {
    if (ref.phaseMarginDeg === null ? pm.value !== null : !(Math.abs((pm.value ?? NaN) - ref.phaseMarginDeg) <= BAR.deg)) problems.push(`phase margin ${pm.value}, ngspice ${ref.phaseMarginDeg}`);
    if (ref.gainIncreaseDb === null) {
      if (!(gm.value === null && gm.unbounded)) problems.push(`gain margin ${gm.value} (unbounded: ${gm.unbounded}), ngspice finds no phase crossing with |βA| < 1`);
    } else if (!(Math.abs((gm.value ?? NaN) - ref.gainIncreaseDb) <= BAR.db)) problems.push(`gain margin ${gm.value} dB, ngspice ${ref.gainIncreaseDb} dB`);
    // The gain-reduction margin of a conditionally stable loop.
    const note = gm.notes?.find((n) => n.startsWith('conditionally stable'));
    const ours = reductions;
    if (ref.gainReductionDb !== null) {
      conditional = true;
      if (!(Math.abs(Math.min(...ours) - ref.gainReductionDb) <= BAR.db)) problems.push(`gain-reduction margin ${Math.min(...ours)} dB, ngspice ${ref.gainReductionDb} dB`);
      const said = note ? Number(/by ([\d.]+) dB/.exec(note)?.[1]) : NaN;
      if (!(Math.abs(said - ref.gainReductionDb) <= 0.05 + BAR.db)) problems.push(`gain-reduction note "${note}", ngspice ${ref.gainReductionDb.toFixed(2)} dB`);
    } else if (note || ours.length) problems.push(`says "${note}", ngspice finds no phase crossing with |βA| ≥ 1`);
    // Verdicts of the margin claims follow the margins (SPEC-FORMAT §2, min bounds).
    const pmFails = ref.phaseMarginDeg === null || ref.phaseMarginDeg < 20;
    if (pmFails !== findings('phase_margin').length > 0 && (ref.phaseMarginDeg === null || Math.abs(ref.phaseMarginDeg - 20) > BAR.deg)) problems.push(`phase_margin {min: 20 deg}: ${pmFails ? 'holds' : 'fails'} though ngspice gives ${ref.phaseMarginDeg}`);
    const gmFails = ref.gainIncreaseDb !== null && ref.gainIncreaseDb < 3;
    if (gmFails !== findings('gain_margin').length > 0 && (ref.gainIncreaseDb === null || Math.abs(ref.gainIncreaseDb - 3) > BAR.db)) problems.push(`gain_margin {min: 3 dB}: ${gmFails ? 'holds' : 'fails'} though ngspice gives ${ref.gainIncreaseDb}`);
  }
  return { c, ref, problems, stable: ref.stable, conditional, increaseDb: ref.stable ? gm.value : null, reductionDb: ref.stable && reductions.length ? Math.min(...reductions) : null };
}

describe.runIf(available || process.env.CI)('stability and margins against ngspice closed-loop poles', () => {
  it('has ngspice installed', () => expect(available, 'ngspice missing: apt-get install -y ngspice').toBe(true));

  it(`polecheck's verdicts, closed-loop poles and margins agree with ngspice ${available ? ngspiceVersion() : ''}`, async () => {
    const all = await run();
    const by = new Map<string, { n: number; stable: number; conditional: number; wrong: number }>();
    for (const o of all) {
      const t = by.get(o.c.family) ?? { n: 0, stable: 0, conditional: 0, wrong: 0 };
      t.n++;
      if (o.stable) t.stable++;
      if (o.conditional) t.conditional++;
      if (o.problems.length) t.wrong++;
      by.set(o.c.family, t);
    }
    const wrong = all.filter((o) => o.problems.length);
    const byPz = all.filter((o) => o.ref.closedPoles !== null).length;
    const openUnstable = all.filter((o) => o.ref.poles.some((p) => p.re >= 0));
    console.log(
      `stability cases against ngspice: ${all.length}, ${byPz} decided by ngspice's closed-loop pz (checked against the Nyquist count), ${all.length - byPz} by the Nyquist count alone; ${all.filter((o) => o.stable).length} stable, ${all.filter((o) => !o.stable).length} unstable, ${all.filter((o) => o.conditional).length} conditionally stable, ${openUnstable.length} unstable in the open loop of which ${openUnstable.filter((o) => o.stable).length} stable when closed); wrong ${wrong.length}\n` +
        [...by].map(([k, t]) => `  ${k}: ${t.n} cases, ${t.stable} stable, ${t.conditional} conditionally stable, ${t.wrong} wrong`).join('\n'),
    );
    if (wrong.length) console.log(wrong.map((o) => `${o.c.id}:\n    ${o.problems.join('\n    ')}\n${o.c.text}`).join('\n'));
    expect(all.length).toBeGreaterThanOrEqual(40);
    expect(all.filter((o) => o.stable).length).toBeGreaterThanOrEqual(10);
    expect(all.filter((o) => !o.stable).length).toBeGreaterThanOrEqual(10);
    expect(all.filter((o) => o.conditional).length).toBeGreaterThanOrEqual(3);
    expect(wrong.map((o) => `${o.c.id}: ${o.problems.join('; ')}`)).toEqual([]);
  }, 300_000);

  // The check itself can fail: with ngspice's verdict or margins altered, agreeing cases must be flagged.
  it('flags a case whose reference verdict or margin is altered', async () => {
    const all = await run();
    const sample = [...all.filter((o) => o.stable && o.ref.phaseMarginDeg !== null).slice(0, 6), ...all.filter((o) => !o.stable).slice(0, 6)];
    expect(sample.length).toBeGreaterThanOrEqual(10);
    for (const o of sample) {
      const flipped = { ...o.ref, stable: !o.ref.stable, rhpClosed: o.ref.stable ? 2 : 0, closedPoles: null, nyquistRhp: null };
      expect(check(o.c, flipped).problems.length, `${o.c.id}: stability flipped`).toBeGreaterThan(0);
      if (o.stable) expect(check(o.c, { ...o.ref, phaseMarginDeg: o.ref.phaseMarginDeg! + 0.3 }).problems.length, `${o.c.id}: phase margin 0.3° off`).toBeGreaterThan(0);
    }
  }, 300_000);

  it("the gain factors polecheck's margins state are where ngspice's closed-loop poles cross the jω axis", async () => {
    const all = await run();
    const wrong: string[] = [];
    let checked = 0;
    let fallbacks = 0;
    for (const o of all) {
      if (!o.stable) continue;
      // k > 1: the loop turns unstable just above; k < 1 (a conditionally stable loop): just below.
      const factors: Array<{ k: number; what: string }> = [];
      if (o.increaseDb !== null) factors.push({ k: 10 ** (o.increaseDb / 20), what: 'gain-increase margin' });
      if (o.reductionDb !== null) factors.push({ k: 10 ** (-o.reductionDb / 20), what: 'gain-reduction margin' });
      for (const { k, what } of factors) {
        const inside = k > 1 ? 0.99 : 1.01;
        const outside = k > 1 ? 1.01 : 0.99;
        const poles = closedLoopPoles(o.c.job, [o.c.job.beta * k * inside, o.c.job.beta * k * outside]);
        checked++;
        // ngspice's pz when it returns every pole; otherwise the Nyquist count on its AC sweep at that gain.
        const unstable = (i: number): boolean | null => {
          const p = poles[i];
          if (p && p.length === o.ref.poles.length && o.ref.openPzOk) return p.some((x) => x.re >= 0);
          fallbacks++;
          const z = nyquistAtGain(o.ref, k * [inside, outside][i]);
          return z === null ? null : z > 0;
        };
        const [a, b] = [unstable(0), unstable(1)];
        if (a !== false || b !== true) wrong.push(`${o.c.id}: ${what} ${(20 * Math.log10(k)).toFixed(3)} dB: closed loop at ${inside}·k ${a === null ? 'not solved' : a ? 'unstable' : 'stable'}, at ${outside}·k ${b === null ? 'not solved' : b ? 'unstable' : 'stable'}`);
      }
    }
    console.log(`margin gain factors checked against ngspice's closed-loop poles: ${checked} (${fallbacks} of the ${2 * checked} closed loops decided by the Nyquist count where pz returned too few poles), wrong ${wrong.length}`);
    expect(checked).toBeGreaterThanOrEqual(10);
    expect(wrong).toEqual([]);
  }, 300_000);
});
