// Rule 'hand-estimate-drift': a typical claim that agrees with the first-order
// estimate while the estimate is far from the exact figure. The hand formulas
// are evaluated here independently (Gray, Hurst, Lewis, Meyer, ch. 9; Allen &
// Holberg, ch. 6): GBW ≈ gm1/(2π·cc), p2 ≈ gm2·cc/(2π·(c1·c2' + cc·(c1 + c2'))),
// z = gm2/(2π·cc), PM ≈ 90° − atan(β·GBW/p2) − atan(β·GBW/z); the exact
// figures come from the closed-form A(s).
import { describe, expect, it } from 'vitest';
import type { CheckOptions } from '../../src/check';
import { phaseMargin, unityGainHz } from './support/closed-form';
import { type Expected, expectFindings } from './support/expect';
import { type SpecInput, designOf, run, variant } from './support/spec';

const RULE = 'hand-estimate-drift';
const DEG = 180 / Math.PI;

function hand(s: SpecInput) {
  const d = designOf(s);
  const c2 = d.c2 + (d.cl ?? 0);
  const beta = d.beta ?? 1;
  const gbw = d.gm1 / (2 * Math.PI * d.cc);
  const p2 = (d.gm2 * d.cc) / (2 * Math.PI * (d.c1 * c2 + d.cc * (d.c1 + c2)));
  const z = d.gm2 / (2 * Math.PI * d.cc);
  return { gbw, p2, pm: 90 - Math.atan((beta * gbw) / p2) * DEG - Math.atan((beta * gbw) / z) * DEG };
}
const exactGbw = (s: SpecInput) => unityGainHz(designOf(s))!;
const exactPm = (s: SpecInput) => phaseMargin(designOf(s))!.pmDeg;

// cc = 600 fF with a 10 pF load: hand GBW 47.7 MHz against the exact 34.1 MHz (40 % off),
// hand PM 31.9° against the exact 42.9°.
const HEAVY = { params: { cc: '600 fF' }, conditions: { cl: '10 pF' } };

interface Row {
  name: string;
  spec: SpecInput;
  options?: CheckOptions;
  expected: (s: SpecInput) => Expected[];
}

const rows: Row[] = [
  {
    name: 'gbw claimed at the hand estimate, 40 % off the exact figure',
    spec: variant({ gbw: '48 MHz' }, HEAVY),
    expected: (s) => [{ severity: 'warning', at: { claim: 'gbw' }, computed: exactGbw(s), within: 1e-7, says: ['gbw 48 MHz matches the hand estimate 47.7 MHz', '40 % off the exact 34.1 MHz'] }],
  },
  { name: 'gbw claimed at the exact figure', spec: variant({ gbw: '34 MHz' }, HEAVY), expected: () => [] },
  { name: 'gbw claimed at neither: the claim rule reports it, this rule does not', spec: variant({ gbw: '60 MHz' }, HEAVY), expected: () => [] },
  {
    name: 'the {typ: …} form is a typical claim too',
    spec: variant({ gbw: '{typ: 48 MHz, min: 20 MHz}' }, HEAVY),
    expected: (s) => [{ severity: 'warning', at: { claim: 'gbw', needle: '48 MHz' }, computed: exactGbw(s), within: 1e-7 }],
  },
  { name: 'a bound is not compared with the hand estimate', spec: variant({ gbw: '{min: 45 MHz}' }, HEAVY), expected: () => [] },
  {
    name: 'phase margin claimed at the two-pole estimate, 11° off',
    spec: variant({ phase_margin: '32 deg' }, HEAVY),
    expected: (s) => [{ severity: 'warning', at: { claim: 'phase_margin' }, computed: exactPm(s), within: 1e-6, absolute: true, says: ['matches the hand estimate 31.9°', '11° off the exact 42.9°'] }],
  },
  { name: 'option drift = 0.5: a 40 % drift is tolerated', spec: variant({ gbw: '48 MHz' }, HEAVY), options: { rules: { [RULE]: { options: { drift: 0.5 } } } }, expected: () => [] },
  {
    name: 'option drift = 0.3: a 40 % drift is flagged',
    spec: variant({ gbw: '48 MHz' }, HEAVY),
    options: { rules: { [RULE]: { options: { drift: 0.3 } } } },
    expected: (s) => [{ severity: 'warning', at: { claim: 'gbw' }, computed: exactGbw(s), within: 1e-7 }],
  },
  { name: 'the reference design: the hand GBW is 1.2 % off, nothing to say', spec: variant({ gbw: '23.9 MHz', phase_margin: '78 deg' }), expected: () => [] },
  { name: 'dc_gain: the hand formula is exact for this network', spec: variant({ dc_gain: '99.6 dB' }, HEAVY), expected: () => [] },
];

describe(`${RULE}: claims that match the first-order formulas where those do not apply`, () => {
  it('the independent hand figures of the heavy variant', () => {
    const s = variant({}, HEAVY);
    const h = hand(s);
    expect(h.gbw / 1e6).toBeCloseTo(47.746, 3);
    expect(h.pm).toBeCloseTo(31.93, 2);
    expect(Math.abs(h.gbw - exactGbw(s)) / exactGbw(s)).toBeGreaterThan(0.1); // drift 40 %
    expect(Math.abs(h.pm - exactPm(s))).toBeGreaterThan(3); // drift > 10 tolerances × 0.1
  });
  for (const row of rows) {
    it(row.name, () => {
      const r = run(row.spec, row.options);
      expectFindings(r, RULE, row.expected(row.spec));
      // The claim rule reports the wrong figure beside each drift warning.
      for (const f of r.of(RULE)) expect(r.errors.some((e) => e.line === f.line && e.column === f.column && e.claim === f.claim)).toBe(true);
    });
  }

  it('says a drift of 170 % in plain numbers, not in exponent notation', () => {
    // gm1/(2π·150 fF) = 191 MHz against the exact 71.5 MHz with a 10 pF load
    const [f] = run(variant({ gbw: '190 MHz' }, { params: { cc: '150 fF' }, conditions: { cl: '10 pF' } })).of(RULE);
    expect(f.message).toMatch(/which is \d+ % off the exact/);
    expect(f.message).not.toMatch(/\de[+-]\d/);
  });

  it('suggests stating the exact figure, with its number', () => {
    const [f] = run(variant({ gbw: '48 MHz' }, HEAVY)).of(RULE);
    expect(f.suggestions).toEqual(['state the exact figure, 34.1 MHz, or say in the text that the figure is a first-order estimate']);
  });
});
