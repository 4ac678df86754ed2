// bandwidth, input-capacitance, compensation-sizing and conflicting-claims.
import { describe, expect, it } from 'vitest';
import { checkText } from '../../src/check';

const cs = (claims: string, conditions = '  rs: 5 kΩ\n  cl: 150 fF') => `---
polecheck: 1
block: strand-cs-test
topology: common-source
params:
  gm: 2.5 mS
  rout: 12 kΩ
  cgs: 180 fF
  cgd: 25 fF
  cdb: 40 fF
conditions:
${conditions}
claims:
${claims}
---
`;
const of = (text: string, rule: string) => checkText('t.md', text).findings.filter((f) => f.rule === rule);

describe("'input-capacitance'", () => {
  // Miller (Razavi, ch. 6): exact in the low-frequency limit, C_in = cgs + cgd·(1 + gm·rout).
  const miller = 180e-15 + 25e-15 * (1 + 2.5e-3 * 12e3);
  it('computes the Miller capacitance and fails a claim of cgs + cgd', () => {
    const f = of(cs('  input_capacitance: 205 fF'), 'input-capacitance');
    expect(f).toHaveLength(1);
    expect(f[0]).toMatchObject({ severity: 'error', line: 15, column: 3, claim: 'input_capacitance', unit: 'F' });
    expect(Math.abs(f[0].computed! - miller) / miller).toBeLessThan(1e-6);
  });
  it('passes the Miller value, and a load resistor lowers it through rout ∥ rl', () => {
    expect(of(cs('  input_capacitance: 955 fF'), 'input-capacitance')).toEqual([]);
    const withRl = 180e-15 + 25e-15 * (1 + 2.5e-3 * ((12e3 * 12e3) / 24e3));
    expect(of(cs(`  input_capacitance: ${(withRl * 1e15).toFixed(1)} fF`, '  rs: 5 kΩ\n  cl: 150 fF\n  rl: 12 kΩ'), 'input-capacitance')).toEqual([]);
  });
});

describe("'bandwidth'", () => {
  it('matches the closed-form −3 dB point of the one-pole stage driven by an ideal source', () => {
    // rs = 0: A(s) = (s·cgd − gm)/(1/rout + s·(cgd + cd)); |A|² = A0²/2 solved for ω.
    const gm = 2.5e-3, rout = 12e3, cgd = 25e-15, cd = 40e-15 + 150e-15;
    const a0 = gm * rout;
    const w2 = (gm * gm - (a0 * a0) / (2 * rout * rout)) / ((a0 * a0 * (cgd + cd) ** 2) / 2 - cgd * cgd);
    const f3 = Math.sqrt(w2) / (2 * Math.PI);
    const f = of(cs('  bandwidth: 1 GHz', '  cl: 150 fF'), 'bandwidth');
    expect(f).toHaveLength(1);
    expect(Math.abs(f[0].computed! - f3) / f3).toBeLessThan(1e-9);
    expect(of(cs(`  bandwidth: ${(f3 / 1e6).toFixed(1)} MHz`, '  cl: 150 fF'), 'bandwidth')).toEqual([]);
  });
});

const nmc = (cc1: string, cc2: string) => `---
polecheck: 1
block: strand-nmc-test
topology: three-stage-nested-miller
params:
  gm1: 80 µS
  r1: 3 MΩ
  c1: 40 fF
  gm2: 300 µS
  r2: 1.5 MΩ
  c2: 60 fF
  gm3: 6 mS
  r3: 30 kΩ
  c3: 500 fF
  cc1: ${cc1}
  cc2: ${cc2}
conditions:
  cl: 50 pF
---
`;

describe("'compensation-sizing'", () => {
  it('warns when cc2 is far from the Butterworth placement and the margin is below 60°', () => {
    const f = of(nmc('2.7 pF', '15 pF'), 'compensation-sizing');
    expect(f.map((x) => `${x.line}:${x.column} ${x.severity}`)).toEqual(['16:8 warning']); // at the value of cc2
    // Guide: cc1 = 4·(80 µ/6 m)·50.5 pF = 2.69 pF, cc2 = 2·(300 µ/6 m)·50.5 pF = 5.05 pF (Leung & Mok, from memory).
    expect(f[0].suggestions[0]).toMatch(/cc1 = 2\.69 pF, cc2 = 5\.05 pF gives a phase margin of 5\d\.\d°/);
  });
  it('stays quiet at the guide, and far from it when the margin is healthy', () => {
    expect(of(nmc('2.7 pF', '5.1 pF'), 'compensation-sizing')).toEqual([]);
    expect(of(nmc('2.7 pF', '1.5 pF'), 'compensation-sizing')).toEqual([]); // about 81°
  });
});

describe("'conflicting-claims'", () => {
  const spec = (table: string, front = '  gbw: 10 MHz') => `---
polecheck: 1
block: strand-conflict-test
topology: two-stage-miller
params:
  gm1: 150 µS
  r1: 4.7 MΩ
  c1: 40 fF
  gm2: 1.5 mS
  r2: 220 kΩ
  c2: 90 fF
  cc: 2.2 pF
conditions:
  cl: 8 pF
claims:
${front}
---

| Parameter | Min | Typ | Max | Unit |
| --- | --- | --- | --- | --- |
${table}
`;
  it('reports typical values whose tolerance bands do not overlap, at the second statement', () => {
    const f = of(spec('| GBW | | 7.5 | | MHz |'), 'conflicting-claims');
    expect(f.map((x) => `${x.line}:${x.column}`)).toEqual(['21:11']); // the Typ cell
    expect(f[0].related).toEqual([expect.objectContaining({ line: 16, column: 3 })]); // `gbw:` in the front matter
  });
  it('accepts overlapping statements and statements at other conditions', () => {
    expect(of(spec('| GBW | | 9.5 | | MHz |'), 'conflicting-claims')).toEqual([]); // 10 ± 1 and 9.5 ± 0.95 overlap
    expect(of(spec('| Phase margin | 70 | | | ° |\n| Phase margin | | | 65 | ° |', '  dc_gain: 83 dB'), 'conflicting-claims')).toHaveLength(1);
  });
});
