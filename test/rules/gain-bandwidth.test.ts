// Rule 'gain-bandwidth': the gbw claim against the unity-gain frequency of
// A(jω). Expected figures: |A(j2πf)| = 1 solved by bisection on the closed-form
// A(s) of test/rules/support/closed-form.ts (no code of the tool), and the
// one-pole estimate gm1/(2π·cc) (Gray, Hurst, Lewis, Meyer, ch. 9) where the
// test shows the exact figure is not it.
import { describe, expect, it } from 'vitest';
import { unityGainHz } from './support/closed-form';
import { type Expected, expectFindings } from './support/expect';
import { BASE, type SpecInput, correctedClaimText, designChangeSpecs, designOf, run, variant, withValues } from './support/spec';

const RULE = 'gain-bandwidth';
const gbwOf = (s: SpecInput): number => unityGainHz(designOf(s))!;
const GBW = gbwOf(BASE); // 23.6 MHz

interface Row {
  name: string;
  spec: SpecInput;
  expected: (spec: SpecInput) => Expected[];
}

const rows: Row[] = [
  { name: 'a typical claim 2.6 % off', spec: variant({ gbw: '23 MHz' }), expected: () => [] },
  { name: 'a typical claim 9.2 % above the model (tolerance relative to the claim)', spec: variant({ gbw: '26 MHz' }), expected: () => [] },
  {
    name: 'a typical claim 12.6 % above the model',
    spec: variant({ gbw: '27 MHz' }),
    expected: () => [{ severity: 'error', at: { claim: 'gbw' }, computed: GBW, within: 1e-7, claimed: { typ: 27e6 }, says: ['gain-bandwidth claimed 27 MHz', 'model gives 23.6 MHz', '13 % low', 'tolerance ±10 %'] }],
  },
  { name: 'a typical claim 9.8 % below the model', spec: variant({ gbw: '21.5 MHz' }), expected: () => [] },
  {
    name: 'a typical claim 12 % below the model',
    spec: variant({ gbw: '21 MHz' }),
    expected: () => [{ severity: 'error', at: { claim: 'gbw' }, computed: GBW, within: 1e-7, says: ['12 % high'] }],
  },
  { name: 'a claim in rad/s within tolerance (148 Mrad/s = 23.55 MHz)', spec: variant({ gbw: '148 Mrad/s' }), expected: () => [] },
  {
    name: 'a claim in rad/s outside tolerance, converted by 2π',
    spec: variant({ gbw: '120 Mrad/s' }),
    expected: () => [{ severity: 'error', at: { claim: 'gbw' }, computed: GBW, within: 1e-7, claimed: { typ: 120e6 / (2 * Math.PI) }, says: ['120 Mrad/s'] }],
  },
  { name: 'a min bound with room', spec: variant({ gbw: '{min: 21 MHz}' }), expected: () => [] },
  {
    name: 'a min bound that holds by 4.4 % (< 5 %): thin-margin warning',
    spec: variant({ gbw: '{min: 22.6 MHz}' }),
    expected: () => [{ severity: 'warning', at: { claim: 'gbw', needle: '22.6 MHz' }, computed: GBW, within: 1e-7, claimed: { min: 22.6e6 }, says: ['holds', 'only 4.4 % above the bound'] }],
  },
  {
    name: 'a min bound that fails',
    spec: variant({ gbw: '{min: 24 MHz}' }),
    expected: () => [{ severity: 'error', at: { claim: 'gbw', needle: '24 MHz' }, computed: GBW, within: 1e-7, says: ['≥ 24 MHz', '1.7 % short'] }],
  },
  {
    name: 'a max bound that holds by 3.7 %: thin-margin warning',
    spec: variant({ gbw: '{max: 24.5 MHz}' }),
    expected: () => [{ severity: 'warning', at: { claim: 'gbw', needle: '24.5 MHz' }, computed: GBW, within: 1e-7 }],
  },
  {
    name: 'a max bound that fails',
    spec: variant({ gbw: '{max: 20 MHz}' }),
    expected: () => [{ severity: 'error', at: { claim: 'gbw', needle: '20 MHz' }, computed: GBW, within: 1e-7, says: ['≤ 20 MHz', '18 % over'] }],
  },
  {
    name: 'a claim of the one-pole estimate gm1/(2π·cc) where p2 is close: the exact figure decides',
    spec: variant({ gbw: '95 MHz' }, { params: { cc: '300 fF' }, conditions: { cl: '10 pF' } }),
    expected: (s) => [{ severity: 'error', at: { claim: 'gbw' }, computed: gbwOf(s), within: 1e-7 }],
  },
  { name: 'β does not change the gain-bandwidth of A itself', spec: variant({ gbw: '23.6 MHz' }, { conditions: { cl: '2 pF', beta: '0.25' } }), expected: () => [] },
  {
    name: 'a nulling resistor: the exact response with rz',
    spec: variant({ gbw: '30 MHz' }, { params: { rz: '300 Ω' } }),
    expected: (s) => [{ severity: 'error', at: { claim: 'gbw' }, computed: gbwOf(s), within: 1e-7 }],
  },
  {
    name: 'no unity-gain frequency when A0 < 1: the claim fails with the reason',
    spec: variant({ gbw: '1 MHz' }, { params: { gm1: '0.2 µS', r1: '1 kΩ' } }),
    expected: () => [{ severity: 'error', at: { claim: 'gbw' }, computed: null, says: ['no gain-bandwidth', '|A| stays below 1'] }],
  },
  {
    name: 'a min bound at the worst corner of a gm1 range',
    spec: variant({ gbw: '{min: 22 MHz}' }, { params: { gm1: '180 µS ±10%' } }),
    expected: (s) => [{ severity: 'error', at: { claim: 'gbw', needle: '22 MHz' }, computed: gbwOf(withValues(s, { params: { gm1: '162 µS' } })), within: 1e-7, says: ['at the corner gm1 min'] }],
  },
];

describe(`${RULE}: claims against |A(j2πf)| = 1 of the closed form`, () => {
  it('the reference design crosses unity at 23.6 MHz, 1.2 % below gm1/(2π·cc)', () => {
    expect(GBW / 1e6).toBeCloseTo(23.5997, 3);
    expect(GBW / (180e-6 / (2 * Math.PI * 1.2e-12))).toBeCloseTo(0.9885, 3);
  });
  for (const row of rows) {
    it(row.name, () => {
      expectFindings(run(row.spec), RULE, row.expected(row.spec));
    });
  }

  it('says how far off a claim 23× too low is in plain numbers (2260 %), not in exponent notation', () => {
    const [f] = run(variant({ gbw: '1 MHz' })).of(RULE);
    expect(f.message).toMatch(/\(\d+ % high, tolerance ±10 %\)/);
    expect(f.message).not.toMatch(/\de[+-]\d/);
  });
});

describe(`${RULE}: suggestions`, () => {
  it('restates a failing claim in MHz at the author\'s precision; the restated claim passes', () => {
    const spec = variant({ gbw: '30 MHz' });
    const [f] = run(spec).of(RULE);
    expect(correctedClaimText(f.suggestions)).toEqual(['gbw: 24 MHz']);
    expect(run(withValues(spec, { claims: { gbw: '24 MHz' } })).of(RULE)).toEqual([]);
  });

  it('restates a failing rad/s claim in rad/s', () => {
    const [f] = run(variant({ gbw: '120 Mrad/s' })).of(RULE);
    expect(correctedClaimText(f.suggestions)).toEqual(['gbw: 148 Mrad/s']); // 23.60 MHz · 2π = 148.3 Mrad/s
  });

  it('proposes cc and gm1 for a claim above the model; each change, applied, meets the claim', () => {
    const spec = variant({ gbw: '30 MHz' });
    const [f] = run(spec).of(RULE);
    const changes = designChangeSpecs(spec, f.suggestions);
    expect(changes.map((c) => c.suggestion.split(' = ')[0]).sort()).toEqual(['cc', 'gm1']);
    for (const c of changes) {
      // Independent check on the closed form: within ±10 % of 30 MHz.
      expect(Math.abs(gbwOf(c.spec) - 30e6) / 30e6, c.suggestion).toBeLessThanOrEqual(0.1);
      expect(run(c.spec).of(RULE), c.suggestion).toEqual([]);
    }
  });

  it('aims a failing min bound past the thin margin: the change leaves no finding at all', () => {
    const spec = variant({ gbw: '{min: 26 MHz}' });
    const [f] = run(spec).of(RULE);
    const changes = designChangeSpecs(spec, f.suggestions);
    expect(changes.length).toBeGreaterThan(0);
    for (const c of changes) {
      expect(gbwOf(c.spec), c.suggestion).toBeGreaterThanOrEqual(26e6 * 1.05);
      expect(run(c.spec).of(RULE), c.suggestion).toEqual([]);
    }
  });

  it('names the conflict when the only change that meets the gbw breaks another claim', () => {
    const spec = variant({ gbw: '30 MHz', phase_margin: '{min: 77 deg}', dc_gain: '99.6 dB' }, { params: { cc: '1.2 pF' } });
    const [f] = run(spec).of(RULE);
    for (const c of designChangeSpecs(spec, f.suggestions)) {
      const clean = /the other claims still hold/.test(c.suggestion);
      const others = run(c.spec).errors.filter((e) => e.rule !== RULE);
      expect(others.length === 0, `${c.suggestion} → ${others.map((o) => o.message).join('; ')}`).toBe(clean);
    }
  });
});
