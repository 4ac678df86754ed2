// Every design change polecheck suggests, re-applied in ngspice 39 (Debian
// package `ngspice`). Seeded specs of every topology with a loop (two-stage
// Miller with and without rz, the single-stage OTA plain, with a cascode, a
// mirror or both, the three-stage nested-Miller block) and the common-source
// stage, each with one or two claims off on purpose (./failing-specs.ts), are
// checked with `checkText`; for every `design` fix of every finding the
// changed design is written as a netlist by the reference harness's writers
// (./netlist.ts, ./topologies/netlist.ts) and run through ngspice
// (./loop-reference.ts: tf, pz, a refined AC sweep, and the pz of the closed
// loop, the input driven by vin − β·vout through a controlled source), at the
// front matter's point and at every table row's own conditions. Checked, each
// against its source:
// - the printed values are the `changes` (SPEC-FORMAT §4: "exactly the values
//   printed in the text");
// - each figure of `gives` against ngspice within the harness's bars (DC gain
//   0.01 dB, frequencies and poles 0.1 %, phase margin 0.1°, gain margin
//   0.01 dB); margins of a loop ngspice finds unstable must be withheld
//   (null); slew rate against its formula (SPEC-FORMAT §2; Allen & Holberg);
//   input capacitance against ngspice's source current (./topologies/ngspice.ts);
// - `stable` against the closed-loop poles ngspice finds (any Re ≥ 0:
//   unstable), at every operating point;
// - `breaks` (and each broken figure) and `meetsAll` against every statement
//   of the spec judged with ngspice's figures and the default tolerances
//   (src/verdicts/verdict.ts, SPEC-FORMAT §2).
// A figure within its bar of a verdict's edge is a knife edge: either verdict
// is accepted there, and counted. The counts are printed; any wrong statement
// fails the test, listed with its spec, its fix and what ngspice says.

import { describe, expect, it } from 'vitest';
import { checkText } from '../../src/check';
import type { Finding, Fix } from '../../src/verdicts/findings';
import { type Kind, parseQuantity } from '../../src/quantity';
import type { ClaimEntry } from '../../src/spec/types';
import type { Values } from '../../src/topologies/types';
import { DEFAULT_TOLERANCES, judge, toleranceFor } from '../../src/verdicts/verdict';
import { recheck } from '../../src/verdicts/points';
import { elementsOf, failingSpecs, slewRateOf, topologyOf, type GeneratedSpec, type Statement } from './failing-specs';
import { rootHz, runLoops, type LoopJob, type LoopReference } from './loop-reference';
import { ngspiceAvailable, ngspiceVersion } from './ngspice';
import type { CommonSourceDesign } from './topologies/designs';
import { measureInputCapacitance } from './topologies/ngspice';

const available = ngspiceAvailable();
if (!available && !process.env.CI) console.warn('ngspice not installed: live design-change checks skipped (apt-get install -y ngspice)');

const SEED = 2024;
const SPECS = 220;
/** Specs with a ranged load or param, checked over a grid of the box and at the worst points polecheck names. */
const RANGED = 30;
/** The reference harness's bars (DEVELOPERS.md, test/reference). */
const BAR = { db: 0.01, rel: 1e-3, deg: 0.1 };

type Design = Extract<Fix, { kind: 'design' }>;

interface Point {
  values: Values;
  job: LoopJob;
}

interface Case {
  spec: GeneratedSpec;
  finding: Finding;
  fix: Design;
  front: Point;
  /** Every point simulated for this change. */
  points: Point[];
  /** The points each statement is judged at, by "key:line:bound". */
  at: Map<string, Point[]>;
}

const kindOf = (topology: string, key: string): Kind => {
  const t = topologyOf(topology);
  return [...t.params, ...t.conditions, ...t.claims].find((s) => s.key === key)!.kind;
};

/** Each statement's figure per ngspice at its point (margins withheld for an unstable loop, as the trade defines them). */
function referenceFigure(spec: GeneratedSpec, key: string, ref: LoopReference, values: Values, cin: () => number): { value: number | null; unbounded?: boolean } {
  switch (key) {
    case 'dc_gain':
      return { value: ref.dcGainDb };
    case 'gbw':
      return { value: ref.unityGainHz };
    case 'bandwidth':
      return { value: ref.bandwidthHz };
    case 'p1':
    case 'p2': {
      const p = ref.poles[key === 'p1' ? 0 : 1];
      return { value: p ? rootHz(p) : null };
    }
    case 'rhp_zero': {
      const z = ref.zeros.find((x) => x.re > 0);
      return { value: z ? rootHz(z) : null };
    }
    case 'phase_margin':
      return { value: ref.stable ? ref.phaseMarginDeg : null };
    case 'gain_margin':
      return ref.stable && ref.gainIncreaseDb === null ? { value: null, unbounded: true } : { value: ref.stable ? ref.gainIncreaseDb : null };
    case 'slew_rate':
      return { value: slewRateOf(spec.topology, values) };
    case 'input_capacitance':
      return { value: cin() };
  }
  throw new Error(`no reference for ${key}`);
}

/** Within the bar of the figure's kind. */
function agrees(kind: Kind, a: number | null, b: number | null, exact = false): boolean {
  if (a === null || b === null) return a === b;
  if (exact) return Math.abs(a - b) <= 1e-9 * Math.abs(b);
  if (kind === 'gain') return Math.abs(a - b) <= BAR.db;
  if (kind === 'angle') return Math.abs(a - b) <= BAR.deg;
  return Math.abs(a - b) <= BAR.rel * Math.abs(b);
}

/** The figure moved by its bar, both ways: a verdict that changes within it is a knife edge. */
function outcomes(s: Statement, kind: Kind, fig: { value: number | null; unbounded?: boolean }): Set<'fails' | 'ok'> {
  const entry = { [s.bound]: { quantity: { value: s.value } } } as unknown as ClaimEntry;
  const t = toleranceFor(kind, DEFAULT_TOLERANCES);
  const shifts = fig.value === null ? [0] : kind === 'gain' ? [-BAR.db, 0, BAR.db] : kind === 'angle' ? [-BAR.deg, 0, BAR.deg] : [-BAR.rel * fig.value, 0, BAR.rel * fig.value];
  const out = new Set<'fails' | 'ok'>();
  for (const d of shifts) {
    const v = fig.value === null ? null : fig.value + d;
    out.add(judge(entry, v, fig.unbounded ? { value: null, unit: 'dB', method: 'frequency-search', how: '', unbounded: true } : undefined, t)[0].outcome === 'fails' ? 'fails' : 'ok');
  }
  return out;
}

/** "cc = 1.98 pF and gm2 = 2.15 mS (now …)": the values as printed, read back. */
function printedChanges(text: string, topology: string): Record<string, number | null> {
  const out: Record<string, number | null> = {};
  for (const part of text.split(' (')[0].split(' and ')) {
    const m = /^(\w+) = (.+)$/.exec(part.trim());
    if (!m) continue;
    const q = parseQuantity(m[2], kindOf(topology, m[1]));
    out[m[1]] = q.ok ? q.quantity.value : null;
  }
  return out;
}

/** Log-spaced levels over [lo, hi], ends included. */
const levels = ([lo, hi]: [number, number], n: number): number[] => Array.from({ length: n }, (_, i) => lo * (hi / lo) ** (i / (n - 1)));

/** Every combination of the ranged keys' levels (7 for one key, 4 × 4 for two). */
function grid(ranges: Record<string, [number, number]>): Values[] {
  const keys = Object.keys(ranges);
  const n = keys.length === 1 ? 7 : 4;
  let out: Values[] = [{}];
  for (const k of keys) out = out.flatMap((v) => levels(ranges[k], n).map((x) => ({ ...v, [k]: x })));
  return keys.length ? out : [];
}

interface Run {
  specs: GeneratedSpec[];
  failingSeen: number;
  cases: Case[];
  jobs: number;
  /** Problems with one suggestion against ngspice (empty: it holds); knife edges met on the way are added to `edges`. */
  verify(c: Case, fix: Design, edges?: string[]): string[];
}

/** Every spec checked, every changed design simulated once (memoized across the tests below). */
let run: Run | undefined;
async function getRun(): Promise<Run> {
  if (run) return run;
  const specs = [...failingSpecs(SEED, SPECS), ...failingSpecs(SEED + 1, RANGED, { ranged: true })];
  const cases: Case[] = [];
  const jobs = new Map<string, LoopJob>();
  const pointOf = (spec: GeneratedSpec, values: Values): Point => {
    const id = `${spec.id}:${JSON.stringify(values)}`;
    if (!jobs.has(id)) jobs.set(id, { id, ...elementsOf(spec.topology, values, spec.id), beta: values.beta ?? 1 });
    return { values, job: jobs.get(id)! };
  };
  let failingSeen = 0;
  const t0 = Date.now();
  for (const spec of specs) {
    const r = checkText(`${spec.id}.md`, spec.text);
    if (!r.model) throw new Error(`${spec.id}: no model: ${JSON.stringify(r.findings.filter((f) => f.claim === null))}`);
    if (r.findings.some((f) => f.claim && f.verdict?.outcome === 'fails')) failingSeen++;
    const rowConditions = [...new Map(spec.statements.filter((s) => s.row).map((s) => [JSON.stringify(s.conditions), s.conditions])).values()];
    for (const finding of r.findings) {
      for (const fix of finding.fixes ?? []) {
        if (fix.kind !== 'design') continue;
        const base = { ...spec.values, ...fix.changes };
        // A ranged param that is changed keeps its spread around the new value (src/verdicts/points.ts withParams, SPEC-FORMAT §2).
        const ranges: Record<string, [number, number]> = {};
        for (const [k, [lo, hi]] of Object.entries(spec.ranges)) {
          const f = k in fix.changes ? fix.changes[k] / spec.values[k] : 1;
          ranges[k] = [lo * f, hi * f];
        }
        const at = new Map<string, Point[]>();
        const front = pointOf(spec, base);
        for (const s of spec.statements) {
          const own = pointOf(spec, { ...base, ...s.conditions });
          at.set(`${s.key}:${s.line}:${s.bound}`, s.bound === 'typ' || !Object.keys(ranges).length ? [own] : [own, ...grid(ranges).map((g) => pointOf(spec, { ...base, ...g }))]);
        }
        // Where polecheck says a bound fails or the loop is unstable inside the box, that point is simulated too: ngspice must agree there.
        if (Object.keys(ranges).length) {
          for (const j of recheck(r.spec!, fix.changes, undefined).judged) {
            if (j.verdict.outcome !== 'fails' && j.stability === 'stable') continue;
            const list = at.get(`${j.entry.key}:${j.entry.keyPos.line}:${j.verdict.bound}`);
            if (list) list.push(pointOf(spec, { ...base, ...j.values }));
          }
        }
        const points = [front, ...rowConditions.map((c) => pointOf(spec, { ...base, ...c })), ...[...at.values()].flat()];
        cases.push({ spec, finding, fix, front, points: [...new Set(points)], at });
      }
    }
  }

  const t1 = Date.now();
  const refs = await runLoops([...jobs.values()]);
  console.log(`polecheck ${t1 - t0} ms, ngspice ${Date.now() - t1} ms (${jobs.size} points)`);
  const cinMemo = new Map<string, number>();
  const cinOf = (spec: GeneratedSpec, p: Point) => () => {
    let c = cinMemo.get(p.job.id);
    if (c === undefined) {
      const v = p.values;
      const d: CommonSourceDesign = { id: spec.id, gm: v.gm, rout: v.rout, cgs: v.cgs, cgd: v.cgd, cdb: v.cdb, rs: v.rs ?? 0, cl: v.cl ?? 0, ...(v.rl !== undefined ? { rl: v.rl } : {}) };
      c = measureInputCapacitance(d, Math.min(...refs.get(p.job.id)!.poles.map((x) => Math.hypot(x.re, x.im)))).farads;
      cinMemo.set(p.job.id, c);
    }
    return c;
  };
  const figureAt = (spec: GeneratedSpec, key: string, p: Point) => referenceFigure(spec, key, refs.get(p.job.id)!, p.values, cinOf(spec, p));

  function verify(c: Case, fix: Design, edges: string[] = []): string[] {
    const { spec, finding } = c;
    const problems: string[] = [];
    // The printed values are the changes (SPEC-FORMAT §4).
    const printed = printedChanges(fix.text, spec.topology);
    for (const [k, v] of Object.entries(fix.changes)) if (printed[k] === undefined || printed[k] === null || !agrees('ratio', printed[k], v, true)) problems.push(`${k} printed as ${printed[k]}, changes say ${v}`);
    // Each figure of `gives` at the front matter's point.
    for (const [key, given] of Object.entries(fix.gives)) {
      const want = figureAt(spec, key, c.front);
      if (!agrees(kindOf(spec.topology, key), given, want.value, key === 'slew_rate')) problems.push(`gives ${key} = ${given}, ngspice ${want.value}${want.unbounded ? ' (unbounded)' : ''}`);
    }
    // The closed loop at every point simulated (ngspice's closed-loop poles). An
    // open-loop stage (common-source: its topology states no feedback factor) has no loop to be unstable.
    const hasLoop = topologyOf(spec.topology).conditions.some((k) => k.key === 'beta');
    const refAt = c.points.map((p) => refs.get(p.job.id)!);
    // The reference agrees with itself: ngspice's closed-loop pz and the Nyquist count on its AC sweep.
    for (const r of refAt) if (!r.consistent) problems.push(`reference: ngspice's closed-loop pz (${r.rhpClosed} poles with Re ≥ 0) and the Nyquist count (${r.nyquistRhp}) disagree at ${r.id}`);
    const stable = !hasLoop || refAt.every((r) => r.stable);
    const edge = hasLoop && refAt.some((r) => r.edge < 1e-6);
    if (fix.stable !== stable) {
      if (edge) edges.push(`${spec.id}: stability on a knife edge (${fix.text})`);
      else if (!hasLoop) problems.push('stable: false for an open-loop stage (its topology states no feedback factor): there is no closed loop to be unstable');
      else problems.push(`stable: ${fix.stable}, ngspice's closed-loop poles: ${refAt.filter((r) => !r.stable).map((r) => `${r.rhpClosed} pole(s) with Re ≥ 0 at ${r.id}`).join('; ') || 'stable at every point'}`);
    }
    if (stable && /closed loop is not stable/.test(fix.text) && !edge) problems.push('the text says the closed loop is not stable');
    // Every statement judged with ngspice's figures: typical values at their point, bounds at every point of the box simulated.
    const isTarget = (s: Statement) => s.key === finding.claim && s.line === finding.line && s.bound === finding.verdict?.bound;
    let allHold: boolean | 'edge' = true;
    const mustBreak: Statement[] = [];
    const mayBreak: Statement[] = [];
    for (const s of spec.statements) {
      const pts = c.at.get(`${s.key}:${s.line}:${s.bound}`)!;
      const kind = kindOf(spec.topology, s.key);
      let status: 'holds' | 'edge' | 'fails' = 'holds';
      let worst: { value: number | null } | null = null;
      for (const p of pts) {
        const fig = figureAt(spec, s.key, p);
        const o = outcomes(s, kind, fig);
        if (o.size === 1 && o.has('fails')) {
          status = 'fails';
          worst = fig;
        } else if (o.size > 1 && status === 'holds') status = 'edge';
      }
      if (status === 'edge') {
        edges.push(`${spec.id}: ${s.key} (line ${s.line}) within its bar of ${s.bound} ${s.value}`);
        if (allHold === true) allHold = 'edge';
        if (!isTarget(s)) mayBreak.push(s);
      } else if (status === 'fails') {
        allHold = false;
        if (!isTarget(s)) mustBreak.push(s);
        else if (!/the claim itself still fails/.test(fix.text)) problems.push(`the claim itself fails in ngspice (${s.key} ${worst!.value} vs ${s.bound} ${s.value})`);
      } else if (isTarget(s) && /the claim itself still fails/.test(fix.text)) problems.push('says the claim itself still fails; it holds in ngspice at every point simulated');
      // A broken statement's figure where polecheck judged it: the typical point, or the worst point of the box (simulated last).
      const listed = fix.breaks.find((b) => b.claim === s.key && b.line === s.line);
      if (listed) {
        const fig = figureAt(spec, s.key, pts[pts.length - 1]);
        if (!agrees(kind, listed.value, fig.value, s.key === 'slew_rate')) problems.push(`breaks ${s.key} (line ${s.line}) at ${listed.value}, ngspice ${fig.value} there`);
      }
    }
    for (const s of mustBreak) if (!fix.breaks.some((b) => b.claim === s.key && b.line === s.line)) problems.push(`${s.key} (line ${s.line}) fails in ngspice but is not listed in breaks`);
    for (const b of fix.breaks) if (!mustBreak.some((s) => s.key === b.claim && s.line === b.line) && !mayBreak.some((s) => s.key === b.claim && s.line === b.line)) problems.push(`breaks lists ${b.claim} (line ${b.line}), which holds in ngspice at every point simulated`);
    if (allHold !== 'edge' && !edge && fix.meetsAll !== (allHold === true && stable)) problems.push(`meetsAll: ${fix.meetsAll}, ngspice: ${allHold === true && stable}`);
    return problems;
  }
  run = { specs, failingSeen, cases, jobs: jobs.size, verify };
  return run;
}

describe.runIf(available || process.env.CI)('design changes re-applied in ngspice', () => {
  it('has ngspice installed', () => expect(available, 'ngspice missing: apt-get install -y ngspice').toBe(true));

  it(`every design change of ${SPECS} seeded failing specs (and ${RANGED} ranged ones) holds in ngspice ${available ? ngspiceVersion() : ''}`, async () => {
    const { specs, failingSeen, cases, jobs, verify } = await getRun();
    const wrong: string[] = [];
    const knifeEdges: string[] = [];
    const tally = new Map<string, { verified: number; wrong: number }>();
    const seen = { meetsAll: 0, breaks: 0, unstable: 0, rows: 0, ranged: 0 };
    for (const c of cases) {
      const { spec, finding, fix } = c;
      const problems = verify(c, fix, knifeEdges);
      if (fix.meetsAll) seen.meetsAll++;
      if (fix.breaks.length) seen.breaks++;
      if (!fix.stable) seen.unstable++;
      if (spec.statements.some((s) => s.row)) seen.rows++;
      if (Object.keys(spec.ranges).length) seen.ranged++;
      const key = `${spec.topology} (${spec.variant.replace(/, ranged .*/, ', ranged')})`;
      const t = tally.get(key) ?? { verified: 0, wrong: 0 };
      if (problems.length) {
        t.wrong++;
        wrong.push(`${spec.id}, finding ${finding.rule} at line ${finding.line}: "${fix.text}"\n    changes ${JSON.stringify(fix.changes)}\n    ${problems.join('\n    ')}\n${spec.text.split('\n---\n')[0]}\n---`);
      } else t.verified++;
      tally.set(key, t);
    }
    const verified = [...tally.values()].reduce((a, t) => a + t.verified, 0);
    console.log(
      `design changes re-applied in ngspice: ${cases.length} suggestions from ${specs.length} specs (${failingSeen} with a failing claim), ${jobs} points simulated\n` +
        `  verified ${verified}, wrong ${wrong.length}, knife edges accepted ${knifeEdges.length}\n` +
        `  of them: ${seen.meetsAll} meet every claim, ${seen.breaks} list broken claims, ${seen.unstable} say the loop is unstable, ${seen.rows} from specs with a table row, ${seen.ranged} from ranged specs\n` +
        [...tally].sort().map(([k, t]) => `  ${k}: ${t.verified} verified, ${t.wrong} wrong`).join('\n'),
    );
    if (knifeEdges.length) console.log(`knife edges:\n  ${knifeEdges.join('\n  ')}`);
    if (wrong.length) console.log(`wrong suggestions (the first 30 with their spec):\n${wrong.map((w, i) => (i < 30 ? w : w.split('\n---\n')[0])).join('\n\n')}`);
    expect(failingSeen).toBeGreaterThanOrEqual(200);
    expect(cases.length).toBeGreaterThanOrEqual(200);
    expect(wrong.length, `wrong suggestions (listed above):\n${wrong.slice(0, 3).join('\n\n')}`).toBe(0);
  }, 600_000);

  // The check itself can fail: suggestions it accepts, each altered in one way, must be flagged.
  it('flags a suggestion whose figures, stability, side effects or printed values are altered', async () => {
    const { cases, verify } = await getRun();
    const sound = cases.filter((c) => c.fix.breaks.length > 0 && verify(c, c.fix).length === 0 && topologyOf(c.spec.topology).conditions.some((k) => k.key === 'beta')).slice(0, 12);
    expect(sound.length).toBeGreaterThan(5);
    for (const c of sound) {
      const f = c.fix;
      const key = Object.keys(f.gives).find((k) => f.gives[k] !== null)!;
      const alter: Array<[string, Design]> = [
        [`${key} in gives 1 % off`, { ...f, gives: { ...f.gives, [key]: f.gives[key]! * 1.01 + (f.gives[key] === 0 ? 1 : 0) } }],
        ['stable flipped', { ...f, stable: !f.stable }],
        ['a broken claim left out', { ...f, breaks: f.breaks.slice(1) }],
        ['meetsAll flipped', { ...f, meetsAll: !f.meetsAll }],
        ['a change not as printed', { ...f, changes: Object.fromEntries(Object.entries(f.changes).map(([k, v]) => [k, v * 1.002])) }],
      ];
      for (const [what, fix] of alter) expect(verify(c, fix).length, `${c.spec.id}: ${what} (${f.text})`).toBeGreaterThan(0);
    }
  }, 600_000);
});
