// Datasheet tables (SPEC-FORMAT §3): header matching, aliases, units from the
// Unit column or the cell, empty cells, per-row conditions, positions, conflicts.
import { describe, expect, it } from 'vitest';
import { checkText } from '../../src/check';
import { readDocument } from '../../src/pipeline';

const front = `---
polecheck: 1
block: strand-table-test
topology: two-stage-miller
params:
  gm1: 240 µS
  r1: 3.3 MΩ
  c1: 60 fF
  gm2: 2.4 mS
  r2: 120 kΩ
  c2: 150 fF
  cc: 1.5 pF
  i1: 24 µA
  i2: 200 µA
conditions:
  cl: 3 pF
---
`;
// Line numbers below count from here: the front matter takes lines 1–17.

const read = (body: string) => {
  const r = readDocument('t.md', front + body);
  if (r.kind !== 'spec' || !r.spec) throw new Error('not a spec');
  return { claims: r.spec.claims, findings: r.findings };
};

describe('datasheet tables', () => {
  it('reads rows by symbol or parameter name, with units from the Unit column or the cell', () => {
    const { claims, findings } = read(`
| parameter | SYMBOL | Min | Typ | Max | Unit |
|---|---|---|---|---|---|
| Open-loop gain | A0 | 100 | 107 | — | dB |
| Unity-gain bandwidth | | | 25 MHz | | |
| Something | PM | 65 | | | ° |
|   Slew   rate  |  | | 16|  | V/µs |
`);
    expect(findings).toEqual([]);
    expect(claims.map((c) => c.key)).toEqual(['dc_gain', 'gbw', 'phase_margin', 'slew_rate']);
    expect(claims[0].min!.quantity.value).toBe(100);
    expect(claims[0].typ!.quantity.value).toBe(107);
    expect(claims[0].max).toBeUndefined(); // an em dash is an empty cell
    expect(claims[1].typ!.quantity.value).toBe(25e6);
    expect(claims[2].min!.quantity.value).toBe(60 + 5);
    expect(claims[3].typ!.quantity.value).toBe(16e6);
    // Positions point at the number in the cell: line 21 is the first body row.
    expect(claims[0].typ!.pos).toMatchObject({ line: 21, column: 31 });
    expect(claims[3].typ!.pos).toMatchObject({ line: 24 });
    expect(claims.every((c) => c.source === 'table')).toBe(true);
  });

  it('leaves tables without a Parameter column or without Min/Typ/Max alone', () => {
    expect(read(`
| Port | Min |
|---|---|
| GBW | 3 |

| Parameter | Value |
|---|---|
| GBW | 25 MHz |
`).claims).toEqual([]);
  });

  it('reads per-row conditions, several separated by commas or semicolons', () => {
    const { claims, findings } = read(`
| Parameter | Conditions | Min | Unit |
|---|---|---|---|
| Phase margin | CL = 10 pF, β = 0.5; RL = 2 kΩ | 50 | deg |
| Phase margin | TA = 25 °C | 60 | deg |
`);
    expect(claims[0].conditions!.values).toEqual({ cl: 10e-12, beta: 0.5, rl: 2000 });
    expect(claims[1].conditions).toBeUndefined();
    // A condition outside the model is a warning at its place: the row is judged without it.
    expect(findings.map((f) => [f.severity, f.rule, f.message.includes('TA')])).toEqual([['warning', 'table', true]]);
  });

  it('reports a bad cell at its place and names the expected unit', () => {
    const { findings } = read(`
| Parameter | Typ | Unit |
|---|---|---|
| GBW | 25 | pF |
| Phase margin | sixty | deg |
| Gain margin | | |
| Phase margn | 60 | deg |
| Slew rate | 10 | V/µs |
`);
    const rows = findings.map((f) => `${f.line}:${f.column} ${f.severity} ${f.rule}`);
    expect(rows).toEqual(['21:9 error wrong-unit', '22:18 error wrong-unit', '23:3 note table', '24:3 note table']);
    expect(findings[0].message).toMatch(/frequency in Hz/);
    expect(findings[3].message).toMatch(/did you mean `Phase margin`/);
  });

  it('flags a misspelt model condition and warns at supply and temperature conditions', () => {
    const { findings } = read(`
| Parameter | Conditions | Typ | Unit |
|---|---|---|---|
| GBW | CLL = 10 pF | 25 | MHz |
| GBW | VDD = 1.8 V, T = 25 °C | 25 | MHz |
`);
    expect(findings.map((f) => `${f.line}:${f.column} ${f.severity} ${f.rule}`)).toEqual([
      '21:9 error unknown-key',
      '22:9 warning table',
      '22:22 warning table',
    ]);
  });

  it('checks every row at its own conditions, with findings at the cell', () => {
    const r = checkText('t.md', `${front}
| Parameter | Conditions | Min | Typ | Unit |
|---|---|---|---|---|
| Phase margin | CL = 3 pF | 65 | | ° |
| Phase margin | CL = 20 pF | 60 | | ° |
| Slew rate | CL = 20 pF | | 16 | V/µs |
`);
    const f = r.findings.map((x) => `${x.line}:${x.column} ${x.severity} ${x.rule}`);
    // 3 pF holds (72°); at 20 pF the phase margin falls well below 60° and the
    // slew rate becomes (i2 − i1)/(c2 + cl) = 176 µA / (150 fF + 20 pF) = 8.73 V/µs (Allen & Holberg).
    expect(f).toContain('22:31 error phase-margin');
    expect(f).toContain('23:30 error slew-rate');
    expect(f.some((x) => x.startsWith('21:'))).toBe(false);
    const sr = r.findings.find((x) => x.rule === 'slew-rate')!;
    expect(sr.computed).toBeCloseTo(176e-6 / (150e-15 + 20e-12), 0);
    expect(sr.message).toContain('cl = 20.0 pF');
    expect(sr.suggestions[0]).toMatch(/the Typ cell of `Slew rate` should read `8.7 V\/µs`/);
  });

  it('reports a claim stated twice at the same conditions with values that cannot both hold', () => {
    const r = checkText('t.md', `${front.replace('conditions:', 'claims:\n  gbw: 25 MHz\nconditions:')}
| Parameter | Conditions | Min | Typ | Max | Unit |
|---|---|---|---|---|---|
| GBW | | | 20 | | MHz |
| GBW | CL = 3 pF | | 24 | | MHz |
| PM | | 70 | | | ° |
| PM | CL = 3 pF | | | 65 | ° |
`);
    const conflicts = r.findings.filter((f) => f.rule === 'conflicting-claims');
    // 25 MHz ± 10 % and 20 MHz ± 10 % do not overlap; 24 MHz overlaps 25 MHz;
    // ≥ 70° and ≤ 65° exclude each other.
    // The front matter gains two lines here (claims:, gbw:), so the rows start at line 23.
    expect(conflicts.map((f) => `${f.line}:${f.column}`)).toEqual(['23:13', '26:24']);
    expect(conflicts[0].related?.[0]).toMatchObject({ line: 16 }); // `gbw: 25 MHz` in the front matter
    expect(conflicts[1].related?.[0]).toMatchObject({ line: 25 });
  });
});
