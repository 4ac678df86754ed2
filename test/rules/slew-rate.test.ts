// Rule 'slew-rate': the slew_rate claim against SR = min(i1/cc, (i2 − i1)/(c2 + cl))
// (Allen & Holberg, "CMOS Analog Circuit Design", ch. 6 — the two limits as
// recalled from memory), computed here from the written currents.
import { describe, expect, it } from 'vitest';
import { slewRate } from './support/closed-form';
import { type Expected, expectFindings } from './support/expect';
import { BASE, type SpecInput, correctedClaimText, designChangeSpecs, designOf, run, variant, withValues } from './support/spec';

const RULE = 'slew-rate';
const srOf = (s: SpecInput): number => slewRate(designOf(s));
const SR = srOf(BASE); // min(20 µA/1.2 pF, 180 µA/2 pF) = 16.67 V/µs, the first stage limits

interface Row {
  name: string;
  spec: SpecInput;
  expected: (spec: SpecInput) => Expected[];
}

const rows: Row[] = [
  { name: 'the internal limit i1/cc claimed', spec: variant({ slew_rate: '16 V/µs' }), expected: () => [] },
  { name: 'the same in kV/ms', spec: variant({ slew_rate: '16.7 kV/ms' }), expected: () => [] },
  {
    name: 'a claim 20 % high',
    spec: variant({ slew_rate: '20 V/µs' }),
    expected: () => [{ severity: 'error', at: { claim: 'slew_rate' }, computed: SR, within: 1e-12, claimed: { typ: 20e6 }, says: ['slew rate claimed 20 V/µs', 'model gives 16.7 V/µs', '17 % low'] }],
  },
  {
    name: 'a heavy load: the output stage limits, (i2 − i1)/(c2 + cl) = 8.95 V/µs',
    spec: variant({ slew_rate: '16 V/µs' }, { conditions: { cl: '20 pF' } }),
    expected: (s) => [{ severity: 'error', at: { claim: 'slew_rate' }, computed: srOf(s), within: 1e-12, says: ['model gives 8.95 V/µs'] }],
  },
  { name: 'cl = 0: only the first stage limits', spec: variant({ slew_rate: '16.7 V/µs' }, { conditions: { cl: '0 F' } }), expected: () => [] },
  { name: 'a min bound with room', spec: variant({ slew_rate: '{min: 15 V/µs}' }), expected: () => [] },
  {
    name: 'a min bound held by 4.2 %: thin-margin warning',
    spec: variant({ slew_rate: '{min: 16 V/µs}' }),
    expected: () => [{ severity: 'warning', at: { claim: 'slew_rate', needle: '16 V/µs' }, computed: SR, within: 1e-12, says: ['only 4.2 % above the bound'] }],
  },
  {
    name: 'a min bound that fails at the corner i1 min of a current range',
    spec: variant({ slew_rate: '{min: 15 V/µs}' }, { params: { i1: '20 µA ±15%' } }),
    expected: (s) => [{ severity: 'error', at: { claim: 'slew_rate', needle: '15 V/µs' }, computed: srOf(withValues(s, { params: { i1: '17 µA' } })), within: 1e-12, says: ['at the corner i1 min'] }],
  },
  {
    name: 'a max bound that fails',
    spec: variant({ slew_rate: '{max: 12 V/µs}' }),
    expected: () => [{ severity: 'error', at: { claim: 'slew_rate', needle: '12 V/µs' }, computed: SR, within: 1e-12 }],
  },
  {
    name: 'i2 ≤ i1: no slew rate, the claim fails with the reason',
    spec: variant({ slew_rate: '16 V/µs' }, { params: { i2: '15 µA' } }),
    expected: () => [{ severity: 'error', at: { claim: 'slew_rate' }, computed: null, says: ['gives no slew rate', 'must exceed i1'] }],
  },
];

it(`${RULE}: names the currents of an i2 ≤ i1 design with their units (15 µA, 20 µA), not as raw amperes`, () => {
  const [f] = run(variant({ slew_rate: '16 V/µs' }, { params: { i2: '15 µA' } })).of(RULE);
  expect(f.message).toMatch(/i2 \(15(\.0)? µA\) must exceed i1 \(20(\.0)? µA\)/);
});

describe(`${RULE}: claims against min(i1/cc, (i2 − i1)/(c2 + cl))`, () => {
  it('the reference design slews at 16.67 V/µs', () => {
    expect(SR).toBeCloseTo(16.6667e6, -2);
  });
  for (const row of rows) {
    it(row.name, () => {
      expectFindings(run(row.spec), RULE, row.expected(row.spec));
    });
  }

  it('without i1 and i2 the claim is an input error at the claim key, not a slew-rate finding', () => {
    const params = { ...BASE.params };
    delete params.i1;
    delete params.i2;
    const r = run({ ...variant({ slew_rate: '16 V/µs' }), params });
    expect(r.of(RULE)).toEqual([]);
    const missing = r.of('missing-param');
    // One input error names both missing currents.
    expect(missing.map((f) => [f.severity, f.line, f.column])).toEqual([['error', r.keyAt('claims', 'slew_rate').line, 3]]);
    expect(missing[0].message).toMatch(/`i1` .* and `i2`/);
  });
});

describe(`${RULE}: suggestions`, () => {
  it('restates a failing claim in the author\'s unit; the restated claim passes', () => {
    const spec = variant({ slew_rate: '25 V/µs' });
    const [f] = run(spec).of(RULE);
    expect(correctedClaimText(f.suggestions)).toEqual(['slew_rate: 17 V/µs']);
    expect(run(withValues(spec, { claims: { slew_rate: '17 V/µs' } })).of(RULE)).toEqual([]);
  });

  it('proposes the i1 that reaches the claim (i1 = SR·cc = 30 µA for 25 V/µs); applied, it holds', () => {
    const spec = variant({ slew_rate: '25 V/µs' });
    const [f] = run(spec).of(RULE);
    const changes = designChangeSpecs(spec, f.suggestions);
    expect(changes.map((c) => c.suggestion.split(' = ')[0])).toContain('i1');
    for (const c of changes) {
      expect(Math.abs(srOf(c.spec) - 25e6) / 25e6, c.suggestion).toBeLessThanOrEqual(0.1);
      expect(run(c.spec).of(RULE), c.suggestion).toEqual([]);
    }
    const i1 = changes.find((c) => c.suggestion.startsWith('i1'))!;
    expect(Math.abs(designOf(i1.spec).i1! - 30e-6) / 30e-6).toBeLessThan(0.1);
  });

  it('with a heavy load, proposes the i2 that reaches the claim (i2 = i1 + SR·cl = 340 µA)', () => {
    const spec = variant({ slew_rate: '16 V/µs' }, { conditions: { cl: '20 pF' } });
    const [f] = run(spec).of(RULE);
    const changes = designChangeSpecs(spec, f.suggestions);
    const i2 = changes.find((c) => c.suggestion.startsWith('i2'));
    expect(i2, f.suggestions.join(' | ')).toBeDefined();
    expect(Math.abs(designOf(i2!.spec).i2! - 340e-6) / 340e-6).toBeLessThan(0.1);
    expect(run(i2!.spec).of(RULE)).toEqual([]);
  });
});
