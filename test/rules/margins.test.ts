// Rules 'phase-margin' and 'gain-margin': claims against the loop gain β·A.
// Expected figures come from the closed-form A(s) of support/closed-form.ts:
// the crossover |β·A| = 1 by bisection, PM = 180° + ∠β·A there with the phase
// unwrapped along a fine grid from DC, and GM = −20·log10|β·A| where that
// phase reaches −180°. No code of the tool computes them.
import { describe, expect, it } from 'vitest';
import { gainMargin, phaseMargin } from './support/closed-form';
import { type Expected, expectFindings } from './support/expect';
import { BASE, type SpecInput, correctedClaimText, designChangeSpecs, designOf, run, variant, withValues } from './support/spec';

const pmOf = (s: SpecInput): number => phaseMargin(designOf(s))!.pmDeg;
const gmOf = (s: SpecInput): number => gainMargin(designOf(s))!.gmDb;
const PM = pmOf(BASE); // 77.90°
const GM = gmOf(BASE); // 22.54 dB
const DEG = { within: 1e-6, absolute: true } as const;

interface Row {
  name: string;
  rule: 'phase-margin' | 'gain-margin';
  spec: SpecInput;
  expected: (spec: SpecInput) => Expected[];
}

const rows: Row[] = [
  { name: 'a typical claim within ±3°', rule: 'phase-margin', spec: variant({ phase_margin: '76 deg' }), expected: () => [] },
  {
    name: 'a typical claim 3.9° below the model',
    rule: 'phase-margin',
    spec: variant({ phase_margin: '74 deg' }),
    expected: () => [{ severity: 'error', at: { claim: 'phase_margin' }, computed: PM, ...DEG, claimed: { typ: 74 }, says: ['phase margin claimed 74 deg', 'model gives 77.9°', 'tolerance ±3.0°'] }],
  },
  {
    name: 'a typical claim in ° 3.1° above the model',
    rule: 'phase-margin',
    spec: variant({ phase_margin: '81°' }),
    expected: () => [{ severity: 'error', at: { claim: 'phase_margin' }, computed: PM, ...DEG }],
  },
  { name: 'a min bound 2.9° below the model', rule: 'phase-margin', spec: variant({ phase_margin: '{min: 75 deg}' }), expected: () => [] },
  {
    name: 'a min bound held by 0.9° (< 1.5°): thin-margin warning',
    rule: 'phase-margin',
    spec: variant({ phase_margin: '{min: 77 deg}' }),
    expected: () => [{ severity: 'warning', at: { claim: 'phase_margin', needle: '77 deg' }, computed: PM, ...DEG, claimed: { min: 77 }, says: ['holds', 'only 0.90° above the bound'] }],
  },
  {
    name: 'a min bound that fails',
    rule: 'phase-margin',
    spec: variant({ phase_margin: '{min: 80°}' }),
    expected: () => [{ severity: 'error', at: { claim: 'phase_margin', needle: '80°' }, computed: PM, ...DEG, says: ['≥ 80°', '2.1° short'] }],
  },
  {
    name: 'a max bound held by 1.1°: thin-margin warning',
    rule: 'phase-margin',
    spec: variant({ phase_margin: '{max: 79 deg}' }),
    expected: () => [{ severity: 'warning', at: { claim: 'phase_margin', needle: '79 deg' }, computed: PM, ...DEG }],
  },
  {
    name: 'a max bound that fails',
    rule: 'phase-margin',
    spec: variant({ phase_margin: '{max: 75 deg}' }),
    expected: () => [{ severity: 'error', at: { claim: 'phase_margin', needle: '75 deg' }, computed: PM, ...DEG, says: ['2.9° over'] }],
  },
  {
    name: 'β = 0.5: the crossover moves down and the margin up',
    rule: 'phase-margin',
    spec: variant({ phase_margin: '{min: 85 deg}' }, { conditions: { cl: '2 pF', beta: '0.5' } }),
    expected: (s) => [{ severity: 'error', at: { claim: 'phase_margin', needle: '85 deg' }, computed: pmOf(s), ...DEG, says: ['β = 0.5'] }],
  },
  {
    name: 'a nulling resistor below 1/gm2: the three-pole loop',
    rule: 'phase-margin',
    spec: variant({ phase_margin: '{min: 85 deg}' }, { params: { rz: '300 Ω' } }),
    expected: (s) => [{ severity: 'error', at: { claim: 'phase_margin', needle: '85 deg' }, computed: pmOf(s), ...DEG }],
  },
  {
    name: 'a min bound over a load range fails at the corner cl max',
    rule: 'phase-margin',
    spec: variant({ phase_margin: '{min: 65 deg}' }, { conditions: { cl: '{min: 1 pF, max: 8 pF}' } }),
    expected: (s) => [{ severity: 'error', at: { claim: 'phase_margin', needle: '65 deg' }, computed: pmOf(withValues(s, { conditions: { cl: '8 pF' } })), ...DEG, says: ['at the corner cl max (cl = 8.00 pF, β = 1)'] }],
  },
  {
    name: 'a tiny cc with a heavy load: 4° of margin, computed exactly',
    rule: 'phase-margin',
    spec: variant({ phase_margin: '{min: 45 deg}' }, { params: { cc: '20 fF' }, conditions: { cl: '20 pF' } }),
    expected: (s) => [{ severity: 'error', at: { claim: 'phase_margin', needle: '45 deg' }, computed: pmOf(s), ...DEG }],
  },
  {
    name: 'no crossover (|βA| < 1 everywhere): the claim fails, the figure is missing',
    rule: 'phase-margin',
    spec: variant({ phase_margin: '{min: 45 deg}' }, { params: { gm2: '24 µS', r2: '10 kΩ' }, conditions: { cl: '2 pF', beta: '0.005' } }),
    expected: () => [{ severity: 'error', at: { claim: 'phase_margin', needle: '45 deg' }, computed: null, says: ['no phase margin', '|βA| stays below 1'] }],
  },
  { name: 'a min bound with room', rule: 'gain-margin', spec: variant({ gain_margin: '{min: 20 dB}' }), expected: () => [] },
  {
    name: 'a min bound held by 0.34 dB: thin-margin warning',
    rule: 'gain-margin',
    spec: variant({ gain_margin: '{min: 22.2 dB}' }),
    expected: () => [{ severity: 'warning', at: { claim: 'gain_margin', needle: '22.2 dB' }, computed: GM, ...DEG, claimed: { min: 22.2 } }],
  },
  {
    name: 'a min bound that fails',
    rule: 'gain-margin',
    spec: variant({ gain_margin: '{min: 25 dB}' }),
    expected: () => [{ severity: 'error', at: { claim: 'gain_margin', needle: '25 dB' }, computed: GM, ...DEG, says: ['gain margin claimed ≥ 25 dB', '2.5 dB short'] }],
  },
  { name: 'a typical claim within ±1 dB', rule: 'gain-margin', spec: variant({ gain_margin: '22 dB' }), expected: () => [] },
  {
    name: 'a typical claim 2.5 dB low',
    rule: 'gain-margin',
    spec: variant({ gain_margin: '20 dB' }),
    expected: () => [{ severity: 'error', at: { claim: 'gain_margin' }, computed: GM, ...DEG }],
  },
  {
    name: 'β = 0.5 adds 6.02 dB',
    rule: 'gain-margin',
    spec: variant({ gain_margin: '22.5 dB' }, { conditions: { cl: '2 pF', beta: '0.5' } }),
    expected: (s) => [{ severity: 'error', at: { claim: 'gain_margin' }, computed: gmOf(s), ...DEG }],
  },
  { name: 'rz > 1/gm2: the phase never reaches −180°, unbounded, any min holds', rule: 'gain-margin', spec: variant({ gain_margin: '{min: 10 dB}' }, { params: { rz: '1 kΩ' } }), expected: () => [] },
  {
    name: 'rz > 1/gm2: a typical value of an unbounded margin fails',
    rule: 'gain-margin',
    spec: variant({ gain_margin: '30 dB' }, { params: { rz: '1 kΩ' } }),
    expected: () => [{ severity: 'error', at: { claim: 'gain_margin' }, computed: null, says: ['gives no gain margin', 'unbounded'] }],
  },
  {
    name: 'rz > 1/gm2: a max bound on an unbounded margin fails',
    rule: 'gain-margin',
    spec: variant({ gain_margin: '{max: 40 dB}' }, { params: { rz: '1 kΩ' } }),
    expected: () => [{ severity: 'error', at: { claim: 'gain_margin', needle: '40 dB' }, computed: null }],
  },
  {
    // typical rz = 350 Ω: GM 37.0 dB; the rz min corner lower still; the rz max corner (1 kΩ > 1/gm2) unbounded.
    name: 'a max bound over an rz range whose upper end makes the margin unbounded fails at that corner',
    rule: 'gain-margin',
    spec: variant({ gain_margin: '{max: 40 dB}' }, { params: { rz: '{min: 300 Ω, typ: 350 Ω, max: 1 kΩ}' } }),
    expected: () => [{ severity: 'error', at: { claim: 'gain_margin', needle: '40 dB' }, computed: null, says: ['at the corner rz max'] }],
  },
];

describe('phase-margin and gain-margin against the closed-form loop gain', () => {
  it('the reference loop: PM 77.90° at 23.6 MHz, GM 22.54 dB', () => {
    expect(PM).toBeCloseTo(77.903, 3);
    expect(GM).toBeCloseTo(22.541, 3);
  });
  for (const row of rows) {
    it(`${row.rule}: ${row.name}`, () => {
      expectFindings(run(row.spec), row.rule, row.expected(row.spec));
    });
  }
});

describe('phase-margin and gain-margin: suggestions', () => {
  it('phase-margin: restates the bound on the safe side; the restated bound holds', () => {
    const spec = variant({ phase_margin: '{min: 80 deg}' });
    const [f] = run(spec).of('phase-margin');
    expect(correctedClaimText(f.suggestions)).toEqual(['phase_margin: {min: 77 deg}']);
    expect(run(withValues(spec, { claims: { phase_margin: '{min: 77 deg}' } })).errors).toEqual([]);
  });

  it('phase-margin: proposes the rz of the closed-form hints and more gm2; each, applied, meets the bound', () => {
    const spec = variant({ phase_margin: '{min: 80 deg}' });
    const [f] = run(spec).of('phase-margin');
    const changes = designChangeSpecs(spec, f.suggestions);
    const params = changes.map((c) => c.suggestion.split(' = ')[0]);
    expect(params).toContain('rz');
    expect(params).toContain('gm2');
    // rz = 1/gm2 = 417 Ω cancels the zero (Gray et al., ch. 9)
    expect(changes.some((c) => c.spec.params.rz === '417 Ω')).toBe(true);
    for (const c of changes) {
      expect(pmOf(c.spec), c.suggestion).toBeGreaterThanOrEqual(80);
      expect(run(c.spec).of('phase-margin').filter((x) => x.severity === 'error'), c.suggestion).toEqual([]);
    }
  });

  it('phase-margin: a design that beats its typical claim gets only the corrected claim', () => {
    const [f] = run(variant({ phase_margin: '70 deg' })).of('phase-margin');
    expect(correctedClaimText(f.suggestions)).toEqual(['phase_margin: 78 deg']);
    expect(designChangeSpecs(BASE, f.suggestions)).toEqual([]);
  });

  it('phase-margin: a missing figure gets no rewrite', () => {
    const spec = variant({ phase_margin: '{min: 45 deg}' }, { params: { gm2: '24 µS', r2: '10 kΩ' }, conditions: { cl: '2 pF', beta: '0.005' } });
    // No figure, nothing to restate; design changes that create a crossover may still be offered.
    expect(run(spec).of('phase-margin')[0].fixes?.filter((f) => f.kind === 'restate') ?? []).toEqual([]);
  });

  it('gain-margin: each proposed change, applied, meets the bound, and conflicts with other claims are named', () => {
    const spec = variant({ gain_margin: '{min: 25 dB}', phase_margin: '{min: 85 deg}' });
    const [f] = run(spec).of('gain-margin');
    const changes = designChangeSpecs(spec, f.suggestions);
    expect(changes.length).toBeGreaterThan(0);
    for (const c of changes) {
      const g = gainMargin(designOf(c.spec));
      expect(g === null || g.gmDb >= 25, c.suggestion).toBe(true);
      expect(run(c.spec).of('gain-margin').filter((x) => x.severity === 'error'), c.suggestion).toEqual([]);
      // The phase margin of 85° cannot be met by these changes (pmOf < 85), so each names the conflict.
      expect(pmOf(c.spec) < 85).toBe(/but then phase_margin becomes/.test(c.suggestion));
    }
    // Either some change meets every claim (checked above, applied), or the conflict is named.
    const meetsAll = (f.fixes ?? []).some((x) => x.kind === 'design' && x.meetsAll);
    expect(meetsAll || f.suggestions.some((s) => s.startsWith('no change of') && s.includes('gain_margin conflicts with phase_margin'))).toBe(true);
  });
});
