// The engine against recorded ngspice results (test/fixtures/ngspice-two-stage.json,
// source: ngspice 39 AC and .pz analyses; regenerate with `npx tsx test/reference/generate.ts`).
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { compare, within, worst, type Errors } from './compare';
import { FIXTURE, type FixtureFile } from './generate';

const fixture = JSON.parse(readFileSync(FIXTURE, 'utf8')) as FixtureFile;

describe(`engine vs ${fixture.source}`, () => {
  it('covers at least 50 designs, with and without rz, with β < 1 and with rl', () => {
    const ds = fixture.designs.map((x) => x.design);
    expect(ds.length).toBeGreaterThanOrEqual(50);
    expect(ds.filter((d) => d.rz).length).toBeGreaterThan(10);
    expect(ds.filter((d) => !d.rz).length).toBeGreaterThan(10);
    expect(ds.filter((d) => d.beta < 1).length).toBeGreaterThan(10);
    expect(ds.filter((d) => d.rl !== undefined).length).toBeGreaterThan(10);
  });

  const all: Errors[] = [];
  for (const { design, ngspice } of fixture.designs) {
    it(`agrees on ${design.id}`, () => {
      const e = compare(design, ngspice);
      all.push(e);
      expect(within(e)).toEqual([]);
    });
  }

  it('prints the worst agreement', () => {
    console.log(`worst agreement with the ngspice fixture over ${all.length} designs:`, worst(all));
  });
});
