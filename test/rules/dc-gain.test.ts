// Rule 'dc-gain': the DC gain claim against the nodal solve at DC. Expected
// figures come from A0 = gm1·r1·gm2·r2' (r2' = r2 ∥ rl), exact for this
// network because the capacitors are open at DC (Gray, Hurst, Lewis, Meyer,
// "Analysis and Design of Analog Integrated Circuits", ch. 9).
import { describe, expect, it } from 'vitest';
import { dcGainDb } from './support/closed-form';
import { type Expected, expectFindings } from './support/expect';
import { BASE, type SpecInput, correctedClaimText, designChangeSpecs, designOf, run, variant, withValues } from './support/spec';

const RULE = 'dc-gain';
const A0 = dcGainDb(designOf(BASE)); // 20·log10(180 µS · 2.2 MΩ · 2.4 mS · 100 kΩ) = 20·log10(95040)

interface Row {
  name: string;
  spec: SpecInput;
  expected: (spec: SpecInput) => Expected[];
}

const claims = variant;

const rows: Row[] = [
  { name: 'a typical dB claim within ±1 dB', spec: claims({ dc_gain: '99 dB' }), expected: () => [] },
  {
    name: 'a typical dB claim 1.44 dB above the model',
    spec: claims({ dc_gain: '101 dB' }),
    expected: () => [{ severity: 'error', at: { claim: 'dc_gain' }, computed: A0, claimed: { typ: 101 }, says: ['DC gain claimed 101 dB', 'model gives 99.6 dB', 'tolerance ±1.0 dB'] }],
  },
  {
    name: 'a typical dB claim below the model by more than the tolerance',
    spec: claims({ dc_gain: '98 dB' }),
    expected: () => [{ severity: 'error', at: { claim: 'dc_gain' }, computed: A0, claimed: { typ: 98 } }],
  },
  { name: 'a V/V claim within tolerance (95 000 V/V = 99.55 dB)', spec: claims({ dc_gain: '95000 V/V' }), expected: () => [] },
  {
    name: 'a V/V claim outside tolerance, compared in dB',
    spec: claims({ dc_gain: '60000 V/V' }),
    expected: () => [{ severity: 'error', at: { claim: 'dc_gain' }, computed: A0, claimed: { typ: 20 * Math.log10(60000) }, says: ['60000 V/V'] }],
  },
  {
    name: 'a resistive load: the claim of the unloaded gain fails, r2 ∥ rl sets A0',
    spec: claims({ dc_gain: '99.5 dB' }, { conditions: { cl: '2 pF', rl: '25 kΩ' } }),
    expected: (s) => [{ severity: 'error', at: { claim: 'dc_gain' }, computed: dcGainDb(designOf(s)), says: ['rl = 25.0 kΩ'] }],
  },
  { name: 'rl: open is no load', spec: claims({ dc_gain: '99.5 dB' }, { conditions: { cl: '2 pF', rl: 'open' } }), expected: () => [] },
  { name: 'a min bound that holds by more than half the tolerance', spec: claims({ dc_gain: '{min: 95 dB}' }), expected: () => [] },
  {
    name: 'a min bound that holds by 0.36 dB: thin-margin warning',
    spec: claims({ dc_gain: '{min: 99.2 dB}' }),
    expected: () => [{ severity: 'warning', at: { claim: 'dc_gain', needle: '99.2 dB' }, computed: A0, claimed: { min: 99.2 }, says: ['holds', 'only 0.36 dB above the bound'] }],
  },
  {
    name: 'a min bound that fails',
    spec: claims({ dc_gain: '{min: 100 dB}' }),
    expected: () => [{ severity: 'error', at: { claim: 'dc_gain', needle: '100 dB' }, computed: A0, claimed: { min: 100 }, says: ['≥ 100 dB', '0.44 dB short'] }],
  },
  { name: 'a max bound that holds', spec: claims({ dc_gain: '{max: 102 dB}' }), expected: () => [] },
  {
    name: 'a max bound that holds by 0.44 dB: thin-margin warning',
    spec: claims({ dc_gain: '{max: 100 dB}' }),
    expected: () => [{ severity: 'warning', at: { claim: 'dc_gain', needle: '100 dB' }, computed: A0 }],
  },
  {
    name: 'a max bound that fails',
    spec: claims({ dc_gain: '{max: 99 dB}' }),
    expected: () => [{ severity: 'error', at: { claim: 'dc_gain', needle: '99 dB' }, computed: A0, says: ['≤ 99 dB', 'over'] }],
  },
  {
    name: 'min and max together: only the failing bound is reported, at its own value',
    spec: claims({ dc_gain: '{min: 100 dB, max: 105 dB}' }),
    expected: () => [{ severity: 'error', at: { claim: 'dc_gain', needle: '100 dB' }, computed: A0 }],
  },
  {
    name: 'a min bound at the worst corner of a gm2 range',
    spec: claims({ dc_gain: '{min: 99 dB}' }, { params: { gm2: '{min: 2 mS, typ: 2.4 mS, max: 2.8 mS}' } }),
    // the lowest gain is at gm2 min: 20·log10(180 µS · 2.2 MΩ · 2 mS · 100 kΩ) = 97.97 dB
    expected: () => [{ severity: 'error', at: { claim: 'dc_gain', needle: '99 dB' }, computed: 20 * Math.log10(180e-6 * 2.2e6 * 2e-3 * 100e3), says: ['at the corner gm2 min'] }],
  },
  {
    name: 'a typical claim is checked at the typical point only, not at the corners',
    spec: claims({ dc_gain: '99.5 dB' }, { params: { gm2: '{min: 2 mS, typ: 2.4 mS, max: 2.8 mS}' } }),
    expected: () => [],
  },
];

describe(`${RULE}: claims against A0 = gm1·r1·gm2·(r2 ∥ rl)`, () => {
  it('the reference design gives 20·log10(95040) dB', () => {
    expect(A0).toBeCloseTo(99.558128552742, 9);
  });

  it('points at the claim key (SPEC-FORMAT §4): line 18, column 3 of the built spec, for a plain value and for a bound inside braces', () => {
    // Lines 1–17: fence, polecheck, block, topology, params: + 9 params, conditions: + cl, claims:.
    expect(run(variant({ dc_gain: '101 dB' })).of(RULE).map((f) => [f.line, f.column])).toEqual([[18, 3]]);
    // `  dc_gain: {min: 100 dB}`: a failing bound points at the claim key as well.
    expect(run(variant({ dc_gain: '{min: 100 dB}' })).of(RULE).map((f) => [f.line, f.column])).toEqual([[18, 3]]);
  });
  for (const row of rows) {
    it(row.name, () => {
      const r = run(row.spec);
      expectFindings(r, RULE, row.expected(row.spec));
    });
  }
});

describe(`${RULE}: suggestions`, () => {
  it('restates a failing dB claim in dB at the author\'s precision, and the restated claim passes', () => {
    const spec = claims({ dc_gain: '98 dB' });
    const [f] = run(spec).of(RULE);
    const restated = correctedClaimText(f.suggestions);
    expect(restated).toEqual(['dc_gain: 100 dB']); // 99.56 dB at the two digits of "98"
    const again = run(withValues(spec, { claims: { dc_gain: restated[0].split(': ')[1] } }));
    expect(again.of(RULE)).toEqual([]);
  });

  it('restates a failing V/V claim in V/V, and the restated claim passes', () => {
    const spec = claims({ dc_gain: '60000 V/V' });
    const [f] = run(spec).of(RULE);
    const [restated] = correctedClaimText(f.suggestions);
    const m = /^dc_gain: ([0-9.]+) V\/V$/.exec(restated);
    expect(m, restated).not.toBeNull();
    expect(Math.abs(Number(m![1]) - 95040) / 95040).toBeLessThan(0.01);
    expect(run(withValues(spec, { claims: { dc_gain: `${m![1]} V/V` } })).of(RULE)).toEqual([]);
  });

  it('proposes gm2, r2 or r1 for a claim above the model; each change, applied, makes the claim hold', () => {
    const spec = claims({ dc_gain: '103 dB' });
    const [f] = run(spec).of(RULE);
    const changes = designChangeSpecs(spec, f.suggestions);
    expect(changes.map((c) => Object.keys(c.spec.params).filter((k) => c.spec.params[k] !== spec.params[k])).flat().sort()).toEqual(['gm2', 'r1', 'r2']);
    for (const c of changes) {
      // Independent check: A0 is a product, so the changed param must scale it by 10^((103 − 99.56)/20) within ±1 dB.
      expect(Math.abs(dcGainDb(designOf(c.spec)) - 103), c.suggestion).toBeLessThanOrEqual(1);
      expect(run(c.spec).of(RULE), c.suggestion).toEqual([]);
    }
  });

  it('gives a design that beats its typical claim only the corrected claim, no design change', () => {
    const [f] = run(claims({ dc_gain: '97 dB' })).of(RULE);
    expect(correctedClaimText(f.suggestions)).toHaveLength(1);
    expect(designChangeSpecs(BASE, f.suggestions)).toEqual([]);
  });

  it('offers nothing for a thin margin, which holds', () => {
    const [f] = run(claims({ dc_gain: '{min: 99.2 dB}' })).of(RULE);
    expect(f.suggestions).toEqual([]);
  });

  it('gives a bound at a corner the model supports there, on the safe side', () => {
    const spec = claims({ dc_gain: '{min: 99 dB}' }, { params: { gm2: '{min: 2 mS, typ: 2.4 mS, max: 2.8 mS}' } });
    const [f] = run(spec).of(RULE);
    expect(correctedClaimText(f.suggestions)).toEqual(['dc_gain: {min: 97 dB}']); // 97.97 dB rounded down
    expect(run(withValues(spec, { claims: { dc_gain: '{min: 97 dB}' } })).errors).toEqual([]);
  });
});
