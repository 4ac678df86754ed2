// The worst point the search reports, checked live against ngspice: the design
// at the reported worst values is written as a netlist by the reference harness
// (test/reference/netlist.ts, test/reference/topologies/netlist.ts) and its
// phase margin read off ngspice's AC analysis (test/reference/ngspice.ts,
// test/reference/topologies/ngspice.ts). The reported worst value must be
// ngspice's phase margin at that point within 0.05°. The cases are worst inside
// the box (see test/worst-case-dense.test.ts for how they were built).

import { afterAll, describe, expect, it } from 'vitest';
import { checkText } from '../src/check';
import { formatQuantity } from '../src/quantity';
import { TOPOLOGIES } from '../src/topologies';
import type { Values } from '../src/topologies/types';
import { worstCase } from '../src/model/worst-case';
import type { TwoStageDesign } from './reference/designs';
import { ngspiceAvailable, ngspiceVersion, runTwoStage } from './reference/ngspice';
import type { SingleStageDesign, ThreeStageDesign } from './reference/topologies/designs';
import { runTopology } from './reference/topologies/ngspice';

const available = ngspiceAvailable();
if (!available && !process.env.CI) console.warn('ngspice not installed: live worst-case checks skipped (apt-get install -y ngspice)');

type TopologyId = 'single-stage' | 'two-stage-miller' | 'three-stage-nested-miller';

interface Case {
  name: string;
  topology: TopologyId;
  fixed: Values;
  ranged: Record<string, [number, number]>;
}

const p = 1e-12;
const CASES: Case[] = [
  {
    name: 'one-stage OTA, mirror doublet, cl 0.3–5 pF',
    topology: 'single-stage',
    fixed: { gm: 180e-6, rout: 5e6, cout: 20e-15, gm_mirror: 400e-6, c_mirror: 2.2 * p },
    ranged: { cl: [0.3 * p, 5 * p] },
  },
  {
    name: 'one-stage OTA with a cascode, cl and c_mirror (diagonal valley)',
    topology: 'single-stage',
    fixed: { gm: 180e-6, rout: 5e6, cout: 20e-15, gm_mirror: 400e-6, gm_cas: 2e-3, c_cas: 200e-15 },
    ranged: { cl: [0.3 * p, 3 * p], c_mirror: [0.6 * p, 3 * p] },
  },
  {
    name: 'two-stage Miller with rz, gm1 and β',
    topology: 'two-stage-miller',
    fixed: { r1: 17.1e6, c1: 27e-15, gm2: 587e-6, r2: 797e3, c2: 802e-15, cc: 0.993 * p, cl: 2.48 * p, rz: 3.42e3, rl: 9.42e3 },
    ranged: { gm1: [0.6e-3, 3e-3], beta: [0.4, 1] },
  },
  {
    name: 'three-stage nested Miller, gm2',
    topology: 'three-stage-nested-miller',
    fixed: { gm1: 34e-6, r1: 132e3, c1: 64.4e-15, r2: 3.87e6, c2: 14.9e-15, gm3: 842e-6, r3: 231e3, c3: 375e-15, cc1: 0.77 * p, cc2: 5.31 * p, cl: 1.65 * p },
    ranged: { gm2: [40e-6, 250e-6] },
  },
];

function specText(c: Case): string {
  const t = TOPOLOGIES.find((x) => x.id === c.topology)!;
  const kind = (key: string) => [...t.params, ...t.conditions].find((s) => s.key === key)!.kind;
  const line = (key: string) => {
    const q = (x: number) => formatQuantity(x, kind(key), 6);
    const r = c.ranged[key];
    return r ? `  ${key}: {min: ${q(r[0])}, max: ${q(r[1])}}` : `  ${key}: ${q(c.fixed[key])}`;
  };
  const keys = [...Object.keys(c.fixed), ...Object.keys(c.ranged)];
  const isCondition = (k: string) => t.conditions.some((s) => s.key === k);
  return `---
polecheck: 1
block: live-${c.topology}
topology: ${c.topology}
params:
${keys.filter((k) => !isCondition(k)).map(line).join('\n')}
conditions:
${keys.filter(isCondition).map(line).join('\n')}
claims:
  phase_margin: {min: 1 deg}
---
`;
}

/** ngspice's phase margin of the design at these values. */
function ngspicePhaseMargin(topology: TopologyId, v: Values, id: string): number | null {
  const rl = v.rl !== undefined && Number.isFinite(v.rl) ? { rl: v.rl } : {};
  switch (topology) {
    case 'two-stage-miller': {
      const d: TwoStageDesign = { id, gm1: v.gm1, r1: v.r1, c1: v.c1, gm2: v.gm2, r2: v.r2, c2: v.c2, cc: v.cc, cl: v.cl ?? 0, beta: v.beta ?? 1, ...rl, ...(v.rz ? { rz: v.rz } : {}) };
      return runTwoStage(d).phaseMarginDeg;
    }
    case 'single-stage': {
      const d: SingleStageDesign = { id, gm: v.gm, rout: v.rout, cout: v.cout, cl: v.cl ?? 0, beta: v.beta ?? 1, ...rl };
      if (v.gm_cas !== undefined) Object.assign(d, { gm_cas: v.gm_cas, c_cas: v.c_cas });
      if (v.gm_mirror !== undefined) Object.assign(d, { gm_mirror: v.gm_mirror, c_mirror: v.c_mirror });
      return runTopology('single-stage', d).phaseMarginDeg ?? null;
    }
    case 'three-stage-nested-miller': {
      const d: ThreeStageDesign = {
        id, gm1: v.gm1, r1: v.r1, c1: v.c1, gm2: v.gm2, r2: v.r2, c2: v.c2, gm3: v.gm3, r3: v.r3, c3: v.c3, cc1: v.cc1, cc2: v.cc2, cl: v.cl ?? 0, beta: v.beta ?? 1, ...rl,
      };
      return runTopology('three-stage-nested-miller', d).phaseMarginDeg ?? null;
    }
  }
}

describe.runIf(available || process.env.CI)('worst points checked live against ngspice', () => {
  const seen: string[] = [];
  afterAll(() => {
    if (seen.length) console.log(`worst points vs ngspice:\n${seen.join('\n')}`);
  });
  it('has ngspice installed', () => {
    expect(available, 'ngspice missing: apt-get install -y ngspice').toBe(true);
  });

  for (const [i, c] of CASES.entries()) {
    it(`${c.name}: ngspice ${available ? ngspiceVersion() : ''} gives the reported worst phase margin at the reported point`, () => {
      const r = checkText('live.md', specText(c));
      const ctx = r.points![0].context;
      const w = worstCase(ctx, 'phase_margin', 'min');
      expect(w.value).not.toBeNull();
      // The cases are built to be worst inside: at least one key is reported by its value.
      expect(w.label).toMatch(/ = /);
      const spice = ngspicePhaseMargin(c.topology, w.values, `worst-${i}`);
      expect(spice).not.toBeNull();
      seen.push(`  ${c.name}: reported ${w.value!.toFixed(4)}° at ${w.label}, ngspice ${spice!.toFixed(4)}° (${(spice! - w.value!).toExponential(1)}°)`);
      expect(Math.abs(spice! - w.value!), `reported ${w.value}° at ${w.label}, ngspice ${spice}°`).toBeLessThanOrEqual(0.05);
    }, 60_000);
  }
});
