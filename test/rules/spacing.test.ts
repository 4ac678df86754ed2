// Rules 'second-pole-spacing' and 'rhp-zero-spacing' (common practice: p2 at
// least 2.2× and a right-half-plane zero at least 10× above the loop
// crossover; Allen & Holberg, "CMOS Analog Circuit Design", ch. 6). Whether a
// design breaks them is decided here from the closed form: p2 from
// 1 + a1·s + a2·s², z = gm2/(2π·cc·(1 − gm2·rz)), the crossover |β·A| = 1 by
// bisection on the closed-form A(s).
import { describe, expect, it } from 'vitest';
import type { CheckOptions } from '../../src/check';
import { phaseMargin, polesHzAny, rhpZeroHz } from './support/closed-form';
import { type Expected, expectFindings } from './support/expect';
import { BASE, type SpecInput, designOf, run, variant } from './support/spec';

const fcOf = (s: SpecInput): number => phaseMargin(designOf(s))!.fcHz;
const p2Of = (s: SpecInput): number => polesHzAny(designOf(s))![1];
const zOf = (s: SpecInput): number | null => rhpZeroHz(designOf(s));

// A heavily loaded variant: p2 drops to 0.63× the crossover.
const HEAVY = { params: { cc: '600 fF' }, conditions: { cl: '10 pF' } };
// A weak output stage: z = gm2/(2π·cc) = 159 MHz, 6.8× the crossover.
const WEAK = { params: { gm2: '1.2 mS', r2: '200 kΩ' } };

interface Row {
  name: string;
  rule: 'second-pole-spacing' | 'rhp-zero-spacing';
  spec: SpecInput;
  options?: CheckOptions;
  /** The independent decision: the ratio the rule compares with its threshold. */
  ratio: (s: SpecInput) => number | null;
  threshold: number;
  expected: (s: SpecInput) => Expected[];
}

const p2Ratio = (s: SpecInput) => p2Of(s) / fcOf(s);
const zRatio = (s: SpecInput) => {
  const z = zOf(s);
  return z === null ? null : z / fcOf(s);
};

const rows: Row[] = [
  { name: 'the reference design (p2 = 7.2× f_c)', rule: 'second-pole-spacing', spec: variant({ p2: '171 MHz' }), ratio: p2Ratio, threshold: 2.2, expected: () => [] },
  {
    name: 'a heavy load, p2 claimed: the warning sits on the p2 key',
    rule: 'second-pole-spacing',
    spec: variant({ gbw: '30 MHz', phase_margin: '{min: 30 deg}', p2: '23 MHz' }, HEAVY),
    ratio: p2Ratio,
    threshold: 2.2,
    expected: (s) => [{ severity: 'warning', at: { claimKey: 'p2' }, computed: p2Of(s), within: 1e-8, says: [`is ${p2Ratio(s).toPrecision(2)}× the loop crossover`, 'above 2.2×'] }],
  },
  {
    name: 'a heavy load, no p2 claim: on the phase_margin key',
    rule: 'second-pole-spacing',
    spec: variant({ gbw: '30 MHz', phase_margin: '{min: 30 deg}' }, HEAVY),
    ratio: p2Ratio,
    threshold: 2.2,
    expected: (s) => [{ severity: 'warning', at: { claimKey: 'phase_margin' }, computed: p2Of(s), within: 1e-8 }],
  },
  {
    name: 'a heavy load, only gbw claimed: on the gbw key',
    rule: 'second-pole-spacing',
    spec: variant({ dc_gain: '99.6 dB', gbw: '30 MHz' }, HEAVY),
    ratio: p2Ratio,
    threshold: 2.2,
    expected: (s) => [{ severity: 'warning', at: { claimKey: 'gbw' }, computed: p2Of(s), within: 1e-8 }],
  },
  {
    name: 'a heavy load, none of those claimed: on `params:`',
    rule: 'second-pole-spacing',
    spec: variant({ dc_gain: '99.6 dB' }, HEAVY),
    ratio: p2Ratio,
    threshold: 2.2,
    expected: (s) => [{ severity: 'warning', at: { top: 'params' }, claim: null, computed: p2Of(s), within: 1e-8 }],
  },
  {
    name: 'the same load in a gain of 10 (β = 0.1): the loop crossover falls below p2/2.2',
    rule: 'second-pole-spacing',
    spec: variant({ p2: '23 MHz' }, { ...HEAVY, conditions: { cl: '10 pF', beta: '0.1' } }),
    ratio: p2Ratio,
    threshold: 2.2,
    expected: () => [],
  },
  {
    name: 'option ratio = 10: the reference design (7.2×) is flagged',
    rule: 'second-pole-spacing',
    spec: variant({ p2: '171 MHz' }),
    options: { rules: { 'second-pole-spacing': { options: { ratio: 10 } } } },
    ratio: p2Ratio,
    threshold: 10,
    expected: (s) => [{ severity: 'warning', at: { claimKey: 'p2' }, computed: p2Of(s), within: 1e-8, says: ['above 10×'] }],
  },
  {
    name: 'level configured to error',
    rule: 'second-pole-spacing',
    spec: variant({ p2: '23 MHz' }, HEAVY),
    options: { rules: { 'second-pole-spacing': { level: 'error' } } },
    ratio: p2Ratio,
    threshold: 2.2,
    expected: (s) => [{ severity: 'error', at: { claimKey: 'p2' }, computed: p2Of(s), within: 1e-8 }],
  },
  { name: 'the reference design (z = 13.5× f_c)', rule: 'rhp-zero-spacing', spec: variant({ rhp_zero: '318 MHz' }), ratio: zRatio, threshold: 10, expected: () => [] },
  {
    name: 'a weak output stage, rhp_zero claimed: on the rhp_zero key, with the phase it costs',
    rule: 'rhp-zero-spacing',
    spec: variant({ phase_margin: '{min: 60 deg}', rhp_zero: '159 MHz' }, WEAK),
    ratio: zRatio,
    threshold: 10,
    expected: (s) => [{
      severity: 'warning',
      at: { claimKey: 'rhp_zero' },
      computed: zOf(s)!,
      within: 1e-8,
      says: [`only ${zRatio(s)!.toPrecision(2)}× the loop crossover`, `costs about ${((Math.atan(fcOf(s) / zOf(s)!) * 180) / Math.PI).toFixed(1)}° of phase`],
    }],
  },
  {
    name: 'a weak output stage, no rhp_zero claim: on the phase_margin key',
    rule: 'rhp-zero-spacing',
    spec: variant({ gbw: '23 MHz', phase_margin: '{min: 60 deg}' }, WEAK),
    ratio: zRatio,
    threshold: 10,
    expected: (s) => [{ severity: 'warning', at: { claimKey: 'phase_margin' }, computed: zOf(s)!, within: 1e-8 }],
  },
  {
    name: 'a weak output stage, only gbw claimed: on the gbw key',
    rule: 'rhp-zero-spacing',
    spec: variant({ gbw: '23 MHz' }, WEAK),
    ratio: zRatio,
    threshold: 10,
    expected: (s) => [{ severity: 'warning', at: { claimKey: 'gbw' }, computed: zOf(s)!, within: 1e-8 }],
  },
  {
    name: 'a weak output stage, no related claim: on `params:`',
    rule: 'rhp-zero-spacing',
    spec: variant({}, WEAK),
    ratio: zRatio,
    threshold: 10,
    expected: (s) => [{ severity: 'warning', at: { top: 'params' }, claim: null, computed: zOf(s)!, within: 1e-8 }],
  },
  {
    name: 'rz = 1/gm2 (2.5 mS, 400 Ω) cancels the zero: nothing to space',
    rule: 'rhp-zero-spacing',
    spec: variant({ phase_margin: '{min: 60 deg}' }, { params: { gm2: '2.5 mS', r2: '200 kΩ', rz: '400 Ω' } }),
    ratio: zRatio,
    threshold: 10,
    expected: () => [],
  },
  {
    name: 'rz > 1/gm2 puts the zero in the left half-plane: not flagged',
    rule: 'rhp-zero-spacing',
    spec: variant({ phase_margin: '{min: 60 deg}' }, { params: { ...WEAK.params, rz: '2 kΩ' } }),
    ratio: zRatio,
    threshold: 10,
    expected: () => [],
  },
  {
    name: 'the weak stage in a gain of 4 (β = 0.25): the crossover falls, the zero is 27× above it',
    rule: 'rhp-zero-spacing',
    spec: variant({ phase_margin: '{min: 60 deg}' }, { ...WEAK, conditions: { cl: '2 pF', beta: '0.25' } }),
    ratio: zRatio,
    threshold: 10,
    expected: () => [],
  },
  {
    name: 'option ratio = 20: the reference design (13.5×) is flagged',
    rule: 'rhp-zero-spacing',
    spec: variant({ rhp_zero: '318 MHz' }),
    options: { rules: { 'rhp-zero-spacing': { options: { ratio: 20 } } } },
    ratio: zRatio,
    threshold: 20,
    expected: (s) => [{ severity: 'warning', at: { claimKey: 'rhp_zero' }, computed: zOf(s)!, within: 1e-8, says: ['above 20×'] }],
  },
];

describe('spacing rules, decided by the closed-form p2, z and crossover', () => {
  for (const row of rows) {
    it(`${row.rule}: ${row.name}`, () => {
      // The row's expectation must agree with the independent ratio.
      const ratio = row.ratio(row.spec);
      const breaks = ratio !== null && ratio < row.threshold;
      expect(breaks, `ratio ${ratio}`).toBe(row.expected(row.spec).length > 0);
      // A rule of thumb is not about one claim: `claim` is null wherever the warning sits (SPEC-FORMAT §4).
      expectFindings(run(row.spec, row.options), row.rule, row.expected(row.spec).map((e) => ({ ...e, claim: null })));
    });
  }

  it('the reference design breaks neither rule and draws no finding at all', () => {
    const r = run(variant({ dc_gain: '99.6 dB', gbw: '23.6 MHz', p1: '250 Hz', p2: '171 MHz', rhp_zero: '318 MHz', phase_margin: '{min: 75 deg}', gain_margin: '{min: 20 dB}', slew_rate: '16.7 V/µs' }));
    expect(r.findings.map((f) => `${f.rule}: ${f.message}`)).toEqual([]);
    expect(BASE.params.gm2).toBe('2.4 mS');
  });
});
