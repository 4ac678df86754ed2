// The engine against recorded ngspice results for the single-stage,
// common-source and three-stage nested-Miller topologies
// (test/fixtures/ngspice-topologies.json; source: ngspice 39 .tf, .pz and AC
// analyses; regenerate with `npx tsx test/reference/topologies/generate.ts`).
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import type { CommonSourceDesign, SingleStageDesign, ThreeStageDesign } from './designs';
import { evaluate } from '../../../src/model/model';
import { commonSource } from '../../../src/topologies/common-source';
import { compare, valuesOf, within, worst, type Errors } from './compare';
import { FIXTURE, TOPOLOGY_IDS, type FixtureEntry, type TopologiesFixture } from './generate';
import type { AnyDesign } from './ngspice';

const fixture = JSON.parse(readFileSync(FIXTURE, 'utf8')) as TopologiesFixture;

describe(`engine vs ${fixture.source}`, () => {
  it('covers every case the brief asks for', () => {
    const ss = fixture.topologies['single-stage'].map((x) => x.design as SingleStageDesign);
    const cs = fixture.topologies['common-source'].map((x) => x.design as CommonSourceDesign);
    const nmc = fixture.topologies['three-stage-nested-miller'].map((x) => x.design as ThreeStageDesign);
    for (const ds of [ss, cs, nmc]) {
      expect(ds.length).toBeGreaterThanOrEqual(25);
      expect(ds.filter((d) => d.rl !== undefined).length).toBeGreaterThan(5);
      expect(ds.filter((d) => d.rl === undefined).length).toBeGreaterThan(5);
      expect(ds.filter((d) => d.cl === 0).length).toBeGreaterThan(1);
    }
    for (const cas of [false, true]) {
      for (const mir of [false, true]) {
        expect(ss.filter((d) => (d.gm_cas !== undefined) === cas && (d.gm_mirror !== undefined) === mir).length, `cascode ${cas}, mirror ${mir}`).toBeGreaterThanOrEqual(5);
      }
    }
    expect(ss.filter((d) => d.beta < 1).length).toBeGreaterThan(5);
    expect(nmc.filter((d) => d.beta < 1).length).toBeGreaterThan(5);
    expect(cs.filter((d) => d.rs === 0).length).toBeGreaterThan(3);
    expect(cs.filter((d) => d.rs > 0).length).toBeGreaterThan(10);
    const nearButterworth = nmc.filter((d) => {
      const r1 = d.cc1 / ((4 * d.gm1 * d.cl) / d.gm3);
      const r2 = d.cc2 / ((2 * d.gm2 * d.cl) / d.gm3);
      return d.cl >= 5e-12 && r1 > 0.79 && r1 < 1.26 && r2 > 0.79 && r2 < 1.26;
    });
    expect(nearButterworth.length).toBeGreaterThanOrEqual(nmc.length / 3 - 1);
    // The recordings are usable: every design but the documented ones has consistent pz output.
    for (const kind of TOPOLOGY_IDS) {
      const entries = fixture.topologies[kind] as FixtureEntry<AnyDesign>[];
      expect(entries.filter((e) => e.ngspice.pzFailed).map((e) => e.design.id), kind).toEqual([]);
    }
  });

  it('the comparison fails when the engine is handed a slightly different design', () => {
    // 0.3 % off one element moves some figure past the 0.1 % bar (or the DC gain past 0.01 dB: 0.026 dB).
    const off = (kind: (typeof TOPOLOGY_IDS)[number], i: number, key: string) => {
      const { design, ngspice } = (fixture.topologies[kind] as FixtureEntry<AnyDesign>[])[i];
      const d = { ...design, [key]: (design as unknown as Record<string, number>)[key] * 1.003 } as AnyDesign;
      return within(compare(kind, d, ngspice));
    };
    expect(off('single-stage', 0, 'gm')).not.toEqual([]);
    expect(off('single-stage', 3, 'c_mirror')).not.toEqual([]);
    expect(off('common-source', 0, 'cgd')).not.toEqual([]);
    expect(off('three-stage-nested-miller', 0, 'cc2')).not.toEqual([]);
    expect(off('three-stage-nested-miller', 1, 'gm3')).not.toEqual([]);
  });

  it('common-source with rs = 0 and no drain capacitance: |A| > 1 at every frequency, so no unity-gain frequency and no loop crossover', () => {
    // A = (s·cgd − gm)/(1/rout + s·cgd): |A|² = (ω²cgd² + gm²)/(1/rout² + ω²cgd²) > 1 for gm·rout > 1, tending to 1.
    const { design, ngspice } = fixture.topologies['common-source'].find((x) => x.design.id === 'edge-cs-no-drain-cap')!;
    expect(ngspice.unityGainHz).toBeNull();
    expect(ngspice.diagnostics.acLastPointDb).toBeGreaterThan(0);
    const m = evaluate(commonSource, valuesOf(design));
    expect(m.exact.gbw.value, `engine: ${m.exact.gbw.notes?.[0]?.slice(0, 160)}…`).toBeNull();
    expect(m.loop.crossoversHz.length).toBe(0);
  });

  for (const kind of TOPOLOGY_IDS) {
    describe(kind, () => {
      const all: { id: string; e: Errors }[] = [];
      for (const { design, ngspice } of fixture.topologies[kind] as FixtureEntry<AnyDesign>[]) {
        it(`agrees on ${design.id}`, () => {
          const e = compare(kind, design, ngspice);
          all.push({ id: design.id, e });
          expect(within(e)).toEqual([]);
        });
      }
      it('prints the worst agreement', () => {
        console.log(`${kind}: worst agreement with the ngspice fixture over ${all.length} designs:`, worst(all));
      });
    });
  }
});
