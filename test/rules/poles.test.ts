// Rules 'dominant-pole' (p1) and 'second-pole' (p2): claims against the exact
// poles. Expected figures: for rz = 0 the roots of 1 + a1·s + a2·s², with
// a1 = r1(c1 + cc) + r2'(c2' + cc) + gm2·r1·r2'·cc and
// a2 = r1·r2'·(c1·c2' + cc·(c1 + c2')) (Gray, Hurst, Lewis, Meyer, ch. 9,
// re-derived by hand), checked through Vieta: p1·p2 = 1/(4π²·a2) and
// p1 + p2 = a1/(2π·a2); with rz, the roots of the multiplied-out cubic
// denominator (support/closed-form.ts).
import { describe, expect, it } from 'vitest';
import { denominator, polesHz, polesHzAny } from './support/closed-form';
import { type Expected, expectFindings } from './support/expect';
import { BASE, type SpecInput, correctedClaimText, designChangeSpecs, designOf, run, variant, withValues } from './support/spec';

const poles = (s: SpecInput): number[] => polesHzAny(designOf(s))!;
const [P1, P2] = polesHz(designOf(BASE))!; // 250 Hz, 171 MHz

interface Row {
  name: string;
  rule: 'dominant-pole' | 'second-pole';
  spec: SpecInput;
  expected: (spec: SpecInput) => Expected[];
}

const rows: Row[] = [
  { name: 'p1 claimed within 10 %', rule: 'dominant-pole', spec: variant({ p1: '230 Hz' }), expected: () => [] },
  {
    name: 'p1 claimed 12 % high',
    rule: 'dominant-pole',
    spec: variant({ p1: '280 Hz' }),
    expected: () => [{ severity: 'error', at: { claim: 'p1' }, computed: P1, claimed: { typ: 280 }, says: ['dominant pole claimed 280 Hz', 'model gives 250 Hz', '11 % low'] }],
  },
  { name: 'p1 claimed in rad/s (1571 rad/s = 250.0 Hz)', rule: 'dominant-pole', spec: variant({ p1: '1571 rad/s' }), expected: () => [] },
  { name: 'p1 below a max bound with room', rule: 'dominant-pole', spec: variant({ p1: '{max: 300 Hz}' }), expected: () => [] },
  {
    name: 'p1 within 5 % of a max bound: thin-margin warning',
    rule: 'dominant-pole',
    spec: variant({ p1: '{max: 260 Hz}' }),
    expected: () => [{ severity: 'warning', at: { claim: 'p1', needle: '260 Hz' }, computed: P1, claimed: { max: 260 }, says: ['only 3.9 % below the bound'] }],
  },
  {
    name: 'p1 above a max bound',
    rule: 'dominant-pole',
    spec: variant({ p1: '{max: 240 Hz}' }),
    expected: () => [{ severity: 'error', at: { claim: 'p1', needle: '240 Hz' }, computed: P1, says: ['≤ 240 Hz', '4.2 % over'] }],
  },
  {
    name: 'p1 with a nulling resistor (three poles): the lowest root of the cubic',
    rule: 'dominant-pole',
    spec: variant({ p1: '300 Hz' }, { params: { rz: '1 kΩ' } }),
    expected: (s) => [{ severity: 'error', at: { claim: 'p1' }, computed: poles(s)[0], within: 1e-8 }],
  },
  { name: 'p2 claimed within 10 %', rule: 'second-pole', spec: variant({ p2: '171 MHz' }), expected: () => [] },
  {
    name: 'p2 claimed 18 % low',
    rule: 'second-pole',
    spec: variant({ p2: '140 MHz' }),
    expected: () => [{ severity: 'error', at: { claim: 'p2' }, computed: P2, claimed: { typ: 140e6 }, says: ['second pole claimed 140 MHz', 'model gives 171 MHz'] }],
  },
  {
    name: 'p2 with a nulling resistor: the second root of the cubic',
    rule: 'second-pole',
    spec: variant({ p2: '171 MHz' }, { params: { rz: '5 kΩ' } }),
    // rz = 5 kΩ brings the third pole down to 490 MHz and pushes p2 to 261 MHz
    expected: (s) => [{ severity: 'error', at: { claim: 'p2' }, computed: poles(s)[1], within: 1e-8 }],
  },
  {
    name: 'p2 min bound over a load range: fails at the corner cl max',
    rule: 'second-pole',
    spec: variant({ p2: '{min: 120 MHz}' }, { conditions: { cl: '{min: 1 pF, max: 5 pF}' } }),
    expected: (s) => [{ severity: 'error', at: { claim: 'p2', needle: '120 MHz' }, computed: poles(withValues(s, { conditions: { cl: '5 pF' } }))[1], says: ['at the corner cl max', 'cl = 5.00 pF'] }],
  },
  {
    name: 'p2 typical claim over a load range: checked at the midpoint load (3 pF)',
    rule: 'second-pole',
    spec: variant({ p2: '30 MHz' }, { conditions: { cl: '{min: 1 pF, max: 5 pF}' } }),
    expected: (s) => [{ severity: 'error', at: { claim: 'p2' }, computed: poles(withValues(s, { conditions: { cl: '3 pF' } }))[1], says: ['cl = 3.00 pF'] }],
  },
  {
    name: 'p2 within 5 % above a min bound: thin-margin warning',
    rule: 'second-pole',
    spec: variant({ p2: '{min: 165 MHz}' }),
    expected: () => [{ severity: 'warning', at: { claim: 'p2', needle: '165 MHz' }, computed: P2 }],
  },
];

describe('dominant-pole and second-pole against the closed-form denominator', () => {
  it('the closed-form poles of the reference design satisfy Vieta', () => {
    const { a1, a2 } = denominator(designOf(BASE));
    expect(P1 * P2 * 4 * Math.PI ** 2 * a2).toBeCloseTo(1, 12);
    expect(((P1 + P2) * 2 * Math.PI * a2) / a1).toBeCloseTo(1, 12);
    expect(P1).toBeCloseTo(249.98, 2);
    expect(P2 / 1e6).toBeCloseTo(171.006, 3);
  });

  it('the p1 and p2 the tool reports satisfy Vieta on a1, a2 (to 1e-9)', () => {
    for (const cl of ['0 F', '2 pF', '20 pF']) {
      const spec = variant({ p1: '1 kHz', p2: '1 GHz' }, { conditions: { cl } });
      const r = run(spec);
      const p1 = r.of('dominant-pole')[0].computed!;
      const p2 = r.of('second-pole')[0].computed!;
      const { a1, a2 } = denominator(designOf(spec));
      expect(Math.abs(p1 * p2 * 4 * Math.PI ** 2 * a2 - 1), `cl ${cl}`).toBeLessThan(1e-9);
      expect(Math.abs(((p1 + p2) * 2 * Math.PI * a2) / a1 - 1), `cl ${cl}`).toBeLessThan(1e-9);
    }
  });

  for (const row of rows) {
    it(`${row.rule}: ${row.name}`, () => {
      expectFindings(run(row.spec), row.rule, row.expected(row.spec));
    });
  }
});

describe('dominant-pole and second-pole: suggestions', () => {
  it('dominant-pole: restates p1 and proposes a cc that puts p1 within 10 % of the claim', () => {
    const spec = variant({ p1: '200 Hz' });
    const [f] = run(spec).of('dominant-pole');
    expect(correctedClaimText(f.suggestions)).toEqual(['p1: 250 Hz']);
    const changes = designChangeSpecs(spec, f.suggestions);
    expect(changes.map((c) => c.suggestion.split(' = ')[0])).toEqual(['cc']);
    for (const c of changes) {
      expect(Math.abs(poles(c.spec)[0] - 200) / 200, c.suggestion).toBeLessThanOrEqual(0.1);
      expect(run(c.spec).of('dominant-pole'), c.suggestion).toEqual([]);
    }
  });

  it('second-pole: proposes a gm2 that puts p2 within 10 % of the claim', () => {
    const spec = variant({ p2: '250 MHz' });
    const [f] = run(spec).of('second-pole');
    expect(correctedClaimText(f.suggestions)).toEqual(['p2: 171 MHz']);
    const changes = designChangeSpecs(spec, f.suggestions);
    expect(changes.map((c) => c.suggestion.split(' = ')[0])).toEqual(['gm2']);
    for (const c of changes) {
      expect(Math.abs(poles(c.spec)[1] - 250e6) / 250e6, c.suggestion).toBeLessThanOrEqual(0.1);
      expect(run(c.spec).of('second-pole'), c.suggestion).toEqual([]);
    }
  });

  it('a p1 claim in rad/s is restated in rad/s', () => {
    const [f] = run(variant({ p1: '2000 rad/s' })).of('dominant-pole');
    expect(correctedClaimText(f.suggestions)).toEqual(['p1: 1571 rad/s']); // 249.98 Hz · 2π = 1570.7 rad/s
  });
});
