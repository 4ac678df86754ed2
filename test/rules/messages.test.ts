// Messages that make the verdict visible: the digits of a deviation next to its
// tolerance, a figure computed without a stated load, side effects in the
// claim's own unit, each once.
import { describe, expect, it } from 'vitest';
import { checkText } from '../../src/check';
import { offBy } from '../../src/verdicts/verdict';
import { BASE, run, variant, withValues } from './support/spec';

describe('deviation digits', () => {
  it('a claim 10.3 % off with a ±10 % tolerance does not read "10 % high"', () => {
    // 9 MHz claimed, 9.93 MHz computed: (9.93 − 9)/9 = 10.33 %.
    expect(offBy({ bound: 'typ', outcome: 'fails', claimed: 9e6, delta: 0.93e6 }, 9.93e6, 'frequency', { value: 0.1, relative: true })).toBe('10.3 % high');
    // Far from the tolerance, two digits are enough.
    expect(offBy({ bound: 'typ', outcome: 'fails', claimed: 9e6, delta: 2e6 }, 11e6, 'frequency', { value: 0.1, relative: true })).toBe('22 % high');
    // An angle 3.004° off a ±3° tolerance.
    expect(offBy({ bound: 'typ', outcome: 'fails', claimed: 60, delta: 3.004 }, 63.004, 'angle', { value: 3, relative: false })).toMatch(/^3\.00[0-9]*° high$/);
  });
});

describe('a figure computed without a stated load', () => {
  const noLoad = `---
polecheck: 1
block: strand-noload
topology: two-stage-miller
params:
  gm1: 180 µS
  r1: 2.2 MΩ
  c1: 45 fF
  gm2: 1.6 mS
  r2: 150 kΩ
  c2: 120 fF
  cc: 1.2 pF
claims:
  gbw: 40 MHz
---
`;
  it('says the figure assumes no load capacitance', () => {
    const f = checkText('t.md', noLoad).findings.find((x) => x.rule === 'gain-bandwidth')!;
    expect(f.message).toMatch(/assumes no load capacitance: the document states no cl/);
  });
  it('says nothing of it when cl is stated', () => {
    const f = run(variant({ gbw: '40 MHz' })).of('gain-bandwidth')[0];
    expect(f.message).not.toMatch(/assumes no load/);
  });
});

describe('side effects of a design change', () => {
  it('are named once each, in the unit the claim was written in', () => {
    const spec = withValues(BASE, { claims: { gbw: '40 MHz', dc_gain: '7696 V/V', phase_margin: '{min: 60 deg}' } });
    const [f] = run(spec).of('gain-bandwidth');
    for (const fix of f.fixes ?? []) {
      if (fix.kind !== 'design') continue;
      const claims = fix.breaks.map((b) => `${b.claim}:${b.line}`);
      expect(new Set(claims).size, fix.text).toBe(claims.length);
      if (fix.breaks.some((b) => b.claim === 'dc_gain')) expect(fix.text, fix.text).toMatch(/dc_gain (becomes|still fails at) [0-9.]+ V\/V/);
    }
  });
});
