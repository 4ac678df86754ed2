// Rule 'rhp-zero': the rhp_zero claim against the exact zeros. Expected
// figure: the numerator of the closed form, gm1·(gm2·(1 + s·cc·rz) − s·cc),
// has the single root z = gm2/(2π·cc·(1 − gm2·rz)), exact for this network
// (Gray, Hurst, Lewis, Meyer, ch. 9; re-derived by eliminating the node
// between cc and rz): in the right half-plane for rz < 1/gm2, absent for
// rz = 1/gm2, in the left half-plane beyond. It does not depend on the load.
import { describe, expect, it } from 'vitest';
import { rhpZeroHz } from './support/closed-form';
import { type Expected, expectFindings } from './support/expect';
import { BASE, type SpecInput, correctedClaimText, designChangeSpecs, designOf, run, variant, withValues } from './support/spec';

const RULE = 'rhp-zero';
const zeroOf = (s: SpecInput): number | null => rhpZeroHz(designOf(s));
const Z = zeroOf(BASE)!; // gm2/(2π·cc) = 2.4 mS/(2π·1.2 pF) = 318.3 MHz

interface Row {
  name: string;
  spec: SpecInput;
  expected: (spec: SpecInput) => Expected[];
}

const rows: Row[] = [
  { name: 'rz = 0: gm2/(2π·cc) claimed', spec: variant({ rhp_zero: '318 MHz' }), expected: () => [] },
  {
    name: 'rz = 0: a claim 21 % low',
    spec: variant({ rhp_zero: '250 MHz' }),
    expected: () => [{ severity: 'error', at: { claim: 'rhp_zero' }, computed: Z, claimed: { typ: 250e6 }, says: ['right-half-plane zero claimed 250 MHz', 'model gives 318 MHz'] }],
  },
  { name: 'the zero does not move with a resistive and capacitive load', spec: variant({ rhp_zero: '318 MHz' }, { conditions: { cl: '15 pF', rl: '10 kΩ' } }), expected: () => [] },
  {
    name: 'rz = 200 Ω: the zero moves up by 1/(1 − gm2·rz) = 1.92×; the old claim fails',
    spec: variant({ rhp_zero: '318 MHz' }, { params: { rz: '200 Ω' } }),
    expected: (s) => [{ severity: 'error', at: { claim: 'rhp_zero' }, computed: zeroOf(s)!, says: ['model gives 612 MHz'] }],
  },
  { name: 'rz = 200 Ω: the moved zero claimed', spec: variant({ rhp_zero: '612 MHz' }, { params: { rz: '200 Ω' } }), expected: () => [] },
  {
    name: 'rz = 1/gm2 exactly (2.5 mS, 400 Ω): no zero, the claim fails with the reason',
    spec: variant({ rhp_zero: '300 MHz' }, { params: { gm2: '2.5 mS', rz: '400 Ω' } }),
    expected: () => [{ severity: 'error', at: { claim: 'rhp_zero' }, computed: null, says: ['gives no right-half-plane zero'] }],
  },
  {
    name: 'rz > 1/gm2: the zero is in the left half-plane, a claim of an RHP zero fails',
    spec: variant({ rhp_zero: '318 MHz' }, { params: { rz: '1 kΩ' } }),
    expected: () => [{ severity: 'error', at: { claim: 'rhp_zero' }, computed: null, says: ['gives no right-half-plane zero', 'no zero in the right half-plane'] }],
  },
  {
    // No right-half-plane zero at all satisfies any lower bound on it (the zero moved to the left half-plane).
    name: 'rz > 1/gm2 and a min bound: no right-half-plane zero, so the lower bound holds',
    spec: variant({ rhp_zero: '{min: 1 GHz}' }, { params: { rz: '1 kΩ' } }),
    expected: () => [],
  },
  {
    name: 'rz > 1/gm2 and a max bound: no right-half-plane zero fails an upper bound',
    spec: variant({ rhp_zero: '{max: 1 GHz}' }, { params: { rz: '1 kΩ' } }),
    expected: () => [{ severity: 'error', at: { claim: 'rhp_zero', needle: '1 GHz' }, computed: null }],
  },
  { name: 'a min bound with room', spec: variant({ rhp_zero: '{min: 250 MHz}' }), expected: () => [] },
  {
    name: 'a min bound held by 2.7 %: thin-margin warning',
    spec: variant({ rhp_zero: '{min: 310 MHz}' }),
    expected: () => [{ severity: 'warning', at: { claim: 'rhp_zero', needle: '310 MHz' }, computed: Z, says: ['only 2.7 % above the bound'] }],
  },
  {
    name: 'a max bound that fails',
    spec: variant({ rhp_zero: '{max: 300 MHz}' }),
    expected: () => [{ severity: 'error', at: { claim: 'rhp_zero', needle: '300 MHz' }, computed: Z }],
  },
  {
    name: 'a min bound over a gm2 range: the worst corner is gm2 min',
    spec: variant({ rhp_zero: '{min: 300 MHz}' }, { params: { gm2: '2.4 mS ±10%' } }),
    expected: (s) => [{ severity: 'error', at: { claim: 'rhp_zero', needle: '300 MHz' }, computed: zeroOf(withValues(s, { params: { gm2: '2.16 mS' } }))!, says: ['at the corner gm2 min'] }],
  },
];

describe(`${RULE}: claims against z = gm2/(2π·cc·(1 − gm2·rz))`, () => {
  it('the reference zero is 318.31 MHz', () => {
    expect(Z / 1e6).toBeCloseTo(318.30989, 4);
  });
  for (const row of rows) {
    it(row.name, () => {
      expectFindings(run(row.spec), RULE, row.expected(row.spec));
    });
  }

  it('lists in its derivation exactly the one zero an rz = 0 network has (cl 7.5 pF, cc 1.1 pF, gm2 1.2 mS)', () => {
    // The numerator gm1·(gm2 − s·cc) has degree one: one finite zero, at gm2/(2π·cc) = 173.6 MHz.
    const spec = withValues(variant({ rhp_zero: '100 MHz' }), {
      params: { gm1: '160 µS', r1: '3 MΩ', c1: '70 fF', gm2: '1.2 mS', r2: '180 kΩ', c2: '250 fF', cc: '1.1 pF' },
      conditions: { cl: '7.5 pF' },
    });
    const [f] = run(spec).of(RULE);
    expect(f.computed! / zeroOf(spec)! - 1).toBeCloseTo(0, 9);
    const listed = /zeros: (.*)$/.exec(f.derivation!.how)![1].split(', ');
    expect(listed, f.derivation!.how).toHaveLength(1);
    expect(Math.abs(Number.parseFloat(listed[0]) / 1.7361e8 - 1), f.derivation!.how).toBeLessThan(1e-3);
  });
});

describe(`${RULE}: suggestions`, () => {
  // rz = (1 − gm2/(2π·cc·z))/gm2 from the closed form: 195.6 Ω for z = 600 MHz, whatever rz is now.
  for (const [now, params] of [['100 Ω', { rz: '100 Ω' }], ['none (rz = 0)', {}]] as const) {
    it(`proposes the rz that puts the zero at the claim, rz now ${now}; applied, the claim holds`, () => {
      const spec = variant({ rhp_zero: '600 MHz' }, { params });
      const [f] = run(spec).of(RULE);
      const changes = designChangeSpecs(spec, f.suggestions);
      expect(changes.map((c) => c.suggestion.split(' = ')[0]), f.suggestions.join(' | ')).toEqual(['rz']);
      for (const c of changes) {
        expect(Math.abs(zeroOf(c.spec)! - 600e6) / 600e6, c.suggestion).toBeLessThanOrEqual(0.1);
        expect(run(c.spec).of(RULE), c.suggestion).toEqual([]);
      }
      expect(f.suggestions.some((x) => x.startsWith('no value of rz')), 'no claim that no rz exists').toBe(false);
    });
  }

  it('restates a failing claim as the model gives it; the restated claim passes', () => {
    const spec = variant({ rhp_zero: '600 MHz' });
    const [f] = run(spec).of(RULE);
    expect(correctedClaimText(f.suggestions)).toEqual(['rhp_zero: 318 MHz']);
    expect(run(withValues(spec, { claims: { rhp_zero: '318 MHz' } })).of(RULE)).toEqual([]);
  });

  it('offers no rewrite of a claim whose zero does not exist', () => {
    const [f] = run(variant({ rhp_zero: '318 MHz' }, { params: { rz: '1 kΩ' } })).of(RULE);
    expect(correctedClaimText(f.suggestions)).toEqual([]);
  });
});
