// Rule 'prefix-slip': a param outside its plausible range by exactly a factor
// one wrong SI prefix explains. The plausible ranges are the topology's
// (two-stage-miller: gm 100 nS…1 S, r1 1 kΩ…10 GΩ, r2 100 Ω…10 GΩ,
// c1/c2 0.1 fF…100 pF, cc 10 fF…100 pF, rz 1 Ω…10 MΩ, currents 1 nA…100 mA);
// the expected "did you mean" values are the written numbers with the prefix
// changed by hand.
import { describe, expect, it } from 'vitest';
import { type Expected, expectFindings } from './support/expect';
import { BASE, type SpecInput, run, variant, withValues } from './support/spec';

const RULE = 'prefix-slip';

interface Row {
  name: string;
  spec: SpecInput;
  expected: Expected[];
  /** The values the findings propose, in order. */
  meant?: string[];
}

const slip = (params: Record<string, string>, conditions?: Record<string, string>) => variant({}, { params, conditions });

const rows: Row[] = [
  { name: 'the reference design: every param plausible', spec: BASE, expected: [] },
  {
    name: 'r1 in mΩ for MΩ: the case slip of the written prefix comes first',
    spec: slip({ r1: '2.2 mΩ' }),
    expected: [{ severity: 'warning', at: { param: 'r1' }, says: ['r1 = 2.2 mΩ is implausible for first-stage output resistance', 'did you mean 2.2 MΩ?'] }],
    meant: ['r1: 2.2 MΩ'],
  },
  {
    name: 'r2 in mΩ: 150 MΩ (m ↔ M) is preferred to 150 kΩ, though both are plausible',
    spec: slip({ r2: '150 mΩ' }),
    expected: [{ severity: 'warning', at: { param: 'r2' }, says: ['did you mean 150 MΩ?'] }],
    meant: ['r2: 150 MΩ'],
  },
  {
    name: 'cc in nF for pF',
    spec: slip({ cc: '1.2 nF' }),
    expected: [{ severity: 'warning', at: { param: 'cc' }, says: ['Miller compensation capacitor', 'did you mean 1.2 pF?'] }],
    meant: ['cc: 1.2 pF'],
  },
  {
    name: 'i2 in mA for µA',
    spec: slip({ i2: '200 mA' }),
    expected: [{ severity: 'warning', at: { param: 'i2' }, says: ['did you mean 200 µA?'] }],
    meant: ['i2: 200 µA'],
  },
  {
    name: 'each end of a range is checked, each at its own value',
    spec: slip({ cc: '{min: 1.0 pF, max: 1.4 nF}' }),
    expected: [{ severity: 'warning', at: { param: 'cc', needle: '1.4 nF' }, says: ['cc = 1.4 nF'] }],
    meant: ['cc: 1.4 pF'],
  },
  {
    name: 'a range whose two ends slipped: one warning per written value',
    spec: slip({ cc: '{min: 1.0 nF, max: 1.4 nF}' }),
    expected: [
      { severity: 'warning', at: { param: 'cc', needle: '1.0 nF' }, says: ['cc = 1.0 nF'] },
      { severity: 'warning', at: { param: 'cc', needle: '1.4 nF' }, says: ['cc = 1.4 nF'] },
    ],
    meant: ['cc: 1.0 pF', 'cc: 1.4 pF'],
  },
  {
    name: 'a ±% range written as one value: one warning for the one written value',
    spec: slip({ r1: '2.2 mΩ ±10%' }),
    expected: [{ severity: 'warning', at: { param: 'r1' }, says: ['r1 = 2.2 mΩ'] }],
    meant: ['r1: 2.2 MΩ'],
  },
  { name: 'a plausible but unusual value is left alone (c1 = 45 pF)', spec: slip({ c1: '45 pF' }), expected: [] },
  { name: 'conditions are not checked: a 2 nF load is a real load', spec: slip({}, { cl: '2 nF' }), expected: [] },
];

describe(`${RULE}: implausible params by a prefix factor`, () => {
  for (const row of rows) {
    it(row.name, () => {
      const r = run(row.spec);
      const got = expectFindings(r, RULE, row.expected);
      for (const f of got) expect(f.claim).toBeNull();
      if (row.meant) expect(got.map((f) => /write `([^`]+)`/.exec(f.suggestions[0])?.[1])).toEqual(row.meant);
    });
  }

  it('applying the suggestion removes the warning', () => {
    for (const [key, written] of [['r1', '2.2 mΩ'], ['cc', '1.2 nF'], ['i2', '200 mA']] as const) {
      const spec = slip({ [key]: written });
      const [f] = run(spec).of(RULE);
      const meant = /write `\w+: ([^`]+)`/.exec(f.suggestions[0])![1];
      expect(run(withValues(spec, { params: { [key]: meant } })).of(RULE), `${key}: ${meant}`).toEqual([]);
    }
  });
});
