// The front-matter schema (SPEC-FORMAT §1, §2): for each way a spec can be
// written wrong, the exact reader finding (rule id, line, column, message
// fragment); for each way it may be written right, no reader finding.
//
// Every case edits one line of BASE and keeps the line count, so the line
// numbers in the table are those of the listing below. A "removed" key is
// replaced by a comment line.

import { describe, expect, it } from 'vitest';
import { checkText } from '../../src/check';
import type { Finding } from '../../src/verdicts/findings';
import { readDocument } from '../../src/pipeline';

// The ADC driver of the (invented) KX-4 strain-gauge front end.
//  1 ---                                    15   i1: 24 µA
//  2 polecheck: 1                           16   i2: 200 µA
//  3 block: kx4-adc-driver                  17 conditions:
//  4 title: ADC driver, KX-4 front end      18   cl: 3 pF
//  5 topology: two-stage-miller             19   rl: 20 kΩ
//  6 params:                                20   beta: 1
//  7   gm1: 240 µS                          21 claims:
//  8   r1: 1.8 MΩ                           22   dc_gain: 85 dB
//  9   c1: 60 fF                            23   gbw: 24 MHz
// 10   gm2: 2.4 mS                          24   phase_margin: {min: 60 deg}
// 11   r2: 120 kΩ                           25   slew_rate: 16 V/µs
// 12   c2: 150 fF                           26 ---
// 13   cc: 1.5 pF                           27
// 14   rz: 420 Ω                            28 The driver settles the sampling capacitor …
const BASE = [
  '---',
  'polecheck: 1',
  'block: kx4-adc-driver',
  'title: ADC driver, KX-4 front end',
  'topology: two-stage-miller',
  'params:',
  '  gm1: 240 µS',
  '  r1: 1.8 MΩ',
  '  c1: 60 fF',
  '  gm2: 2.4 mS',
  '  r2: 120 kΩ',
  '  c2: 150 fF',
  '  cc: 1.5 pF',
  '  rz: 420 Ω',
  '  i1: 24 µA',
  '  i2: 200 µA',
  'conditions:',
  '  cl: 3 pF',
  '  rl: 20 kΩ',
  '  beta: 1',
  'claims:',
  '  dc_gain: 85 dB',
  '  gbw: 24 MHz',
  '  phase_margin: {min: 60 deg}',
  '  slew_rate: 16 V/µs',
  '---',
  '',
  'The driver settles the sampling capacitor of the 24-bit converter.',
  '',
];

/** BASE with some lines (1-based) replaced; the line count stays the same. */
function doc(edits: Record<number, string> = {}): string {
  const lines = [...BASE];
  for (const [n, text] of Object.entries(edits)) {
    const i = Number(n) - 1;
    if (i < 0 || i >= lines.length) throw new Error(`no line ${n}`);
    lines[i] = text;
  }
  return lines.join('\n');
}
const removed = (what: string) => `  # ${what} not given yet`;

/** The findings of the reader (not of the engineering rules). */
const READER_RULES = new Set(['unknown-key', 'wrong-unit', 'invalid-value', 'missing-param', 'missing-value', 'front-matter', 'yaml-syntax']);
const readerFindings = (text: string): Finding[] => checkText('kx4-adc-driver.md', text).findings.filter((f) => READER_RULES.has(f.rule));

interface Expect {
  rule: string;
  line: number;
  column: number;
  message: RegExp;
  suggestion?: RegExp;
}

function expectFindings(text: string, expected: Expect[]): void {
  const got = readerFindings(text);
  const shown = JSON.stringify(got.map((f) => `${f.rule} ${f.line}:${f.column} ${f.message}`), null, 2);
  expect(got.map((f) => [f.rule, f.line, f.column]), shown).toEqual(expected.map((e) => [e.rule, e.line, e.column]));
  got.forEach((f, i) => {
    expect(f.severity).toBe('error');
    expect(f.message).toMatch(expected[i].message);
    if (expected[i].suggestion) expect(f.suggestions.join('\n')).toMatch(expected[i].suggestion!);
  });
}

describe('the base spec', () => {
  it('is read without any finding at all (it is consistent with its model)', () => {
    const r = checkText('kx4-adc-driver.md', doc());
    expect(r.skipped).toBe(false);
    expect(r.findings).toEqual([]);
    expect(r.spec?.block).toBe('kx4-adc-driver');
    expect([...r.spec!.params.keys()]).toEqual(['gm1', 'r1', 'c1', 'gm2', 'r2', 'c2', 'cc', 'rz', 'i1', 'i2']);
    expect(r.spec!.claims.map((c) => c.key)).toEqual(['dc_gain', 'gbw', 'phase_margin', 'slew_rate']);
  });
});

type Row = [name: string, edits: Record<number, string>, expected: Expect[]];

const UNKNOWN_KEYS: Row[] = [
  ['a misspelt top-level key', { 3: 'blok: kx4-adc-driver' }, [{ rule: 'unknown-key', line: 3, column: 1, message: /unknown key `blok` in the front matter; did you mean `block`\?/, suggestion: /rename `blok` to `block`/ }]],
  ['a misspelt param', { 14: '  r_z: 420 Ω' }, [{ rule: 'unknown-key', line: 14, column: 3, message: /unknown key `r_z` in `params`; did you mean `rz`\?/, suggestion: /rename `r_z` to `rz`/ }]],
  ['a misspelt condition', { 20: '  betta: 1' }, [{ rule: 'unknown-key', line: 20, column: 3, message: /unknown key `betta` in `conditions`; did you mean `beta`\?/ }]],
  ['a misspelt claim', { 25: '  slewrate: 16 V/µs' }, [{ rule: 'unknown-key', line: 25, column: 3, message: /unknown key `slewrate` in the claims of `two-stage-miller`; did you mean `slew_rate`\?/ }]],
  ['a misspelt claim bound', { 24: '  phase_margin: {mni: 60 deg}' }, [{ rule: 'unknown-key', line: 24, column: 18, message: /unknown key `mni` in the claim `phase_margin`; did you mean `min`\?/ }]],
  ['a misspelt range bound of a param', { 10: '  gm2: {tpy: 2.4 mS, min: 2.1 mS}' }, [{ rule: 'unknown-key', line: 10, column: 9, message: /unknown key `tpy` in the range of `gm2`; did you mean `typ`\?/ }]],
  ['a key far from every valid one lists them', { 18: '  load_capacitance: 3 pF' }, [{ rule: 'unknown-key', line: 18, column: 3, message: /unknown key `load_capacitance` in `conditions`; expected one of `cl`, `rl`, `beta`/ }]],
  ['a misspelt topology', { 5: 'topology: two-stage-miler' }, [{ rule: 'unknown-key', line: 5, column: 11, message: /unknown topology `two-stage-miler`; did you mean `two-stage-miller`\?/, suggestion: /topology: two-stage-miller/ }]],
  ['a topology polecheck does not know', { 5: 'topology: folded-cascode' }, [{ rule: 'unknown-key', line: 5, column: 11, message: /unknown topology `folded-cascode`; known: two-stage-miller/ }]],
];

const FORMAT: Row[] = [
  ['an unsupported format version', { 2: 'polecheck: 2' }, [{ rule: 'front-matter', line: 2, column: 12, message: /unsupported format version `polecheck: 2`; this polecheck reads version 1/ }]],
  ['a version written as a decimal', { 2: 'polecheck: 1.1' }, [{ rule: 'front-matter', line: 2, column: 12, message: /unsupported format version/ }]],
  ['no topology', { 5: '# topology to be decided' }, [{ rule: 'front-matter', line: 1, column: 1, message: /needs `topology:`, one of `two-stage-miller`/ }]],
  ['params written as a list', { 6: 'params: [gm1, r1]', 7: '#', 8: '#', 9: '#', 10: '#', 11: '#', 12: '#', 13: '#', 14: '#', 15: '#', 16: '#', 25: '#' }, [
    // One error: the section is not a mapping (the params it should hold are not reported one by one).
    { rule: 'front-matter', line: 6, column: 9, message: /`params` must be a mapping/ },
  ]],
];

const MISSING: Row[] = [
  ['a missing required param, reported at `params:`', { 9: removed('c1') }, [{ rule: 'missing-param', line: 6, column: 1, message: /missing param `c1` \(first-stage output node capacitance\)/, suggestion: /add `c1: .+` \(your value\) under `params:`/ }]],
  ['two missing required params', { 7: removed('gm1'), 13: removed('cc') }, [
    { rule: 'missing-param', line: 6, column: 1, message: /missing param `gm1`/ },
    { rule: 'missing-param', line: 6, column: 1, message: /missing param `cc`/ },
  ]],
  ['slew_rate claimed without i1', { 15: removed('i1') }, [{ rule: 'missing-param', line: 25, column: 3, message: /the claim `slew_rate` needs `i1` \(first-stage tail current\), not given/, suggestion: /add `i1:` under `params:`/ }]],
  ['slew_rate claimed without i1 and i2', { 15: removed('i1'), 16: removed('i2') }, [
    { rule: 'missing-param', line: 25, column: 3, message: /needs `i1` \(first-stage tail current\) and `i2` \(second-stage bias current\)/ },
  ]],
];

const UNITS: Row[] = [
  ['a wrong dimension names the expected unit', { 13: '  cc: 1.2 MHz' }, [{ rule: 'wrong-unit', line: 13, column: 11, message: /`cc: 1.2 MHz`: expected a capacitance in F, e.g. `1.2 pF`; `1.2 MHz` is a frequency/ }]],
  ['a wrong dimension in a condition', { 19: '  rl: 20 kHz' }, [{ rule: 'wrong-unit', line: 19, column: 10, message: /expected a resistance in Ω/ }]],
  ['a wrong dimension in a claim', { 23: '  gbw: 24 MV/s' }, [{ rule: 'wrong-unit', line: 23, column: 11, message: /expected a frequency in Hz/ }]],
  ['a bare number for a capacitance', { 13: '  cc: 1.5' }, [{ rule: 'wrong-unit', line: 13, column: 10, message: /expected a capacitance in F, e.g. `1.2 pF`; `1.5` has no unit/ }]],
  ['a bare number for a transconductance', { 7: '  gm1: 0.00024' }, [{ rule: 'wrong-unit', line: 7, column: 15, message: /expected a conductance in S.*has no unit/ }]],
  ['a bare number for a claim', { 23: '  gbw: 24' }, [{ rule: 'wrong-unit', line: 23, column: 10, message: /expected a frequency in Hz.*has no unit/ }]],
  ['a mapping where a claim value is expected is no quantity', { 14: '  rz: [420 Ω, 500 Ω]' }, [{ rule: 'wrong-unit', line: 14, column: 7, message: /`rz` expects a resistance such as `2.2 MΩ`, not a list/ }]],
];

const PHYSICS: Row[] = [
  ['a zero transconductance', { 7: '  gm1: 0 S' }, [{ rule: 'invalid-value', line: 7, column: 8, message: /`gm1` \(first-stage \(input pair\) transconductance\) must be positive; got `0 S`/ }]],
  ['a negative resistance', { 8: '  r1: -1 kΩ' }, [{ rule: 'invalid-value', line: 8, column: 7, message: /`r1` \(first-stage output resistance\) must be positive; got `-1 kΩ`/ }]],
  ['a negative load capacitance', { 18: '  cl: -3 pF' }, [{ rule: 'invalid-value', line: 18, column: 7, message: /`cl` \(load capacitance\) must be zero or positive/ }]],
  ['a zero compensation capacitor', { 13: '  cc: 0 pF' }, [{ rule: 'invalid-value', line: 13, column: 7, message: /`cc` .* must be positive/ }]],
  ['a feedback factor above 1', { 20: '  beta: 1.5' }, [{ rule: 'invalid-value', line: 20, column: 9, message: /`beta` .* cannot exceed 1; got `1.5`/ }]],
  ['a feedback factor of 0', { 20: '  beta: 0' }, [{ rule: 'invalid-value', line: 20, column: 9, message: /`beta` .* must be positive/ }]],
  ['a feedback factor above 100 %', { 20: '  beta: 120%' }, [{ rule: 'invalid-value', line: 20, column: 9, message: /cannot exceed 1/ }]],
  ['`open` for a param that cannot be absent', { 8: '  r1: open' }, [{ rule: 'wrong-unit', line: 8, column: 7, message: /`r1: open`/ }]],
];

const RANGES: Row[] = [
  ['a range with min above max', { 10: '  gm2: {min: 2.7 mS, max: 2.1 mS}' }, [{ rule: 'invalid-value', line: 10, column: 14, message: /the range of `gm2` has min 2.7 mS above max 2.1 mS/ }]],
  ['a range whose typ lies outside it', { 10: '  gm2: {min: 2.1 mS, typ: 3 mS, max: 2.7 mS}' }, [{ rule: 'invalid-value', line: 10, column: 27, message: /the typical value of `gm2` lies outside its range/ }]],
  ['a range with only min', { 14: '  rz: {min: 300 Ω}' }, [{ rule: 'invalid-value', line: 14, column: 7, message: /the range of `rz` gives only min: a param needs typ, or both min and max/ }]],
  ['an empty range', { 14: '  rz: {}' }, [{ rule: 'invalid-value', line: 14, column: 7, message: /needs at least one of min, typ, max/ }]],
  ['a range whose bound has the wrong unit', { 10: '  gm2: {min: 2.1 mS, max: 2.7 mΩ}' }, [{ rule: 'wrong-unit', line: 10, column: 31, message: /`gm2.max: 2.7 mΩ`: expected a conductance in S/ }]],
  ['a range reaching zero where zero is forbidden', { 7: '  gm1: {min: 0 S, max: 260 µS}' }, [{ rule: 'invalid-value', line: 7, column: 14, message: /must be positive; got `0 S`/ }]],
  ['a tolerance of 100 % reaches zero', { 7: '  gm1: 240 µS ±100 %' }, [{ rule: 'invalid-value', line: 7, column: 8, message: /`gm1` .* must be positive/ }]],
  ['a tolerance above 100 %', { 14: '  rz: 420 Ω ±150 %' }, [{ rule: 'wrong-unit', line: 14, column: 14, message: /a tolerance of `150%` is out of range \(0 to 100%\)/ }]],
  ['a tolerance without a percent sign', { 14: '  rz: 420 Ω ±15' }, [{ rule: 'wrong-unit', line: 14, column: 16, message: /a tolerance must be a percentage, e.g. `±15%`/ }]],
  ['a feedback-factor range above 1', { 20: '  beta: {min: 0.9, max: 1.1}' }, [{ rule: 'invalid-value', line: 20, column: 25, message: /cannot exceed 1; got `1.1`/ }]],
  // Fails at the time of writing: the `±` form checks typ and min against the
  // physical limits but not max, so `beta: 0.95 ±10 %` is accepted and the
  // corners are evaluated at β = 1.045 (the `{min, max}` form above is refused).
  ['a feedback-factor tolerance reaching above 1', { 20: '  beta: 0.95 ±10 %' }, [{ rule: 'invalid-value', line: 20, column: 9, message: /cannot exceed 1/ }]],
  ['a claim with min above max', { 23: '  gbw: {min: 30 MHz, max: 20 MHz}' }, [{ rule: 'invalid-value', line: 23, column: 14, message: /the claim `gbw` has min above max/ }]],
  // Fails at the time of writing: a claim's typ outside its own bounds is
  // accepted (params with the same mistake are refused, see above), and the
  // claim is then judged as if it made sense.
  ['a claim whose typ lies outside its own bounds', { 23: '  gbw: {min: 20 MHz, typ: 35 MHz, max: 30 MHz}' }, [{ rule: 'invalid-value', line: 23, column: 27, message: /typ/ }]],
  ['a tolerance on a claim (claims take bounds, not tolerances)', { 23: '  gbw: 24 MHz ±10 %' }, [{ rule: 'wrong-unit', line: 23, column: 15, message: /a tolerance is only accepted where a range is allowed/ }]],
];

// SPEC-FORMAT §2: "Negative or zero values where physics forbids them are
// errors." A frequency or a slew rate cannot be zero or negative, and a
// claimed one is a typing slip, not a claim to judge.
// Fails at the time of writing: such claims are judged against the model
// ("claimed 0 Hz … (Infinity % high)", "claimed -24 MHz … (2.0e+2 % high)").
const IMPOSSIBLE_CLAIMS: Row[] = [
  ['a negative gain-bandwidth claim', { 23: '  gbw: -24 MHz' }, [{ rule: 'invalid-value', line: 23, column: 8, message: /gbw/ }]],
  ['a zero gain-bandwidth claim', { 23: '  gbw: 0 Hz' }, [{ rule: 'invalid-value', line: 23, column: 8, message: /gbw/ }]],
  ['a negative slew-rate bound', { 25: '  slew_rate: {min: -16 V/µs}' }, [{ rule: 'invalid-value', line: 25, column: 20, message: /slew_rate/ }]],
];

const YAML: Row[] = [
  ['a duplicate param', { 15: '  cc: 1.8 pF' }, [{ rule: 'yaml-syntax', line: 15, column: 3, message: /front matter is not valid YAML: duplicated mapping key/ }]],
  ['a duplicate top-level key', { 4: 'topology: two-stage-miller' }, [{ rule: 'yaml-syntax', line: 5, column: 1, message: /duplicated mapping key/ }]],
  ['a duplicate bound in a flow map', { 24: '  phase_margin: {min: 60 deg, min: 45 deg}' }, [{ rule: 'yaml-syntax', line: 24, column: 31, message: /duplicated mapping key/ }]],
  ['a key without a colon before the closing fence', { 16: '  i2 200 µA', 17: '#', 18: '#', 19: '#', 20: '#', 21: '#', 22: '#', 23: '#', 24: '#', 25: '#' }, [{ rule: 'yaml-syntax', line: 16, column: 12, message: /front matter is not valid YAML: expected ':' after a mapping key/ }]],
  ['an over-indented key', { 14: '    rz: 420 Ω' }, [{ rule: 'yaml-syntax', line: 14, column: 7, message: /bad indentation of a mapping entry/ }]],
  ['a tab in the indentation', { 14: '\trz: 420 Ω' }, [{ rule: 'yaml-syntax', line: 14, column: 1, message: /tab characters must not be used in indentation/ }]],
];

const TAGS: Row[] = [
  ['a JavaScript function tag', { 14: '  rz: !!js/function "function () { globalThis.__polecheckTagRan = true; return 420 }"' }, [{ rule: 'yaml-syntax', line: 14, column: 7, message: /unknown scalar tag .*js\/function/ }]],
  ['a JavaScript regexp tag', { 14: '  rz: !!js/regexp /420/' }, [{ rule: 'yaml-syntax', line: 14, column: 7, message: /unknown scalar tag .*js\/regexp/ }]],
  ['a JavaScript undefined tag', { 14: '  rz: !!js/undefined ""' }, [{ rule: 'yaml-syntax', line: 14, column: 7, message: /unknown scalar tag .*js\/undefined/ }]],
  ['a Python object tag', { 5: 'topology: !!python/object/apply:os.system two-stage-miller' }, [{ rule: 'yaml-syntax', line: 5, column: 11, message: /unknown scalar tag .*python/ }]],
  ['a local tag', { 14: '  rz: !resistor 420 Ω' }, [{ rule: 'yaml-syntax', line: 14, column: 7, message: /unknown scalar tag !<!resistor>/ }]],
  ['a set tag on a mapping', { 14: '  rz: !!set {420 Ω}' }, [{ rule: 'yaml-syntax', line: 14, column: 7, message: /unknown mapping tag/ }]],
];

describe('reader errors', () => {
  describe.each([
    ['unknown keys and topologies', UNKNOWN_KEYS],
    ['format version and sections', FORMAT],
    ['missing params', MISSING],
    ['units', UNITS],
    ['physical limits', PHYSICS],
    ['ranges and bounds', RANGES],
    ['impossible claims', IMPOSSIBLE_CLAIMS],
    ['YAML itself', YAML],
    ['YAML tags', TAGS],
  ] as Array<[string, Row[]]>)('%s', (_group, rows) => {
    it.each(rows)('%s', (_name, edits, expected) => {
      expectFindings(doc(edits), expected);
    });
  });

  // Fails at the time of writing: a key whose colon is missing (`rz 420 Ω`)
  // followed by another entry is read by YAML as the start of a multi-line
  // plain key, and the error ("a multiline key may not be an implicit key") is
  // placed at the colon of the NEXT line (15:5). The author's mistake, and the
  // line §1 asks for, is line 14.
  it('a key without a colon in the middle of a map is reported on its own line', () => {
    const f = readerFindings(doc({ 14: '  rz 420 Ω' }));
    expect(f.map((x) => x.rule)).toEqual(['yaml-syntax']);
    expect(f[0].line).toBe(14);
  });

  it('a tagged value is refused without ever being run', () => {
    const g = globalThis as { __polecheckTagRan?: boolean };
    delete g.__polecheckTagRan;
    const text = doc({ 14: '  rz: !!js/function "function () { globalThis.__polecheckTagRan = true; return 420 }"' });
    const r = checkText('kx4-adc-driver.md', text);
    expect(r.spec).toBeUndefined();
    expect(g.__polecheckTagRan).toBeUndefined();
    const read = readDocument('kx4-adc-driver.md', text);
    expect(read.kind === 'spec' && read.spec).toBeNull();
    expect(g.__polecheckTagRan).toBeUndefined();
  });

  it('an alias expansion bomb is refused at the alias that exceeds the limit', () => {
    const lines = ['  a: &a [kx, kx, kx, kx, kx, kx, kx, kx, kx]'];
    for (const n of 'bcdefghi') {
      const prev = String.fromCharCode(n.charCodeAt(0) - 1);
      lines.push(`  ${n}: &${n} [${Array(9).fill(`*${prev}`).join(', ')}]`);
    }
    const text = ['---', 'polecheck: 1', 'topology: two-stage-miller', 'params:', ...lines, '---', ''].join('\n');
    const f = readerFindings(text);
    expect(f).toHaveLength(1);
    expect(f[0].rule).toBe('yaml-syntax');
    expect(f[0].message).toMatch(/aliases/);
    expect(f[0].line).toBeGreaterThanOrEqual(5);
  });

  it('a front matter with no closing fence is an error at the opening fence', () => {
    const text = BASE.slice(0, 25).join('\n') + '\n\nThe closing fence was forgotten.\n';
    expectFindings(text, [{ rule: 'front-matter', line: 1, column: 1, message: /front matter has no closing `---` fence/ }]);
  });
});

describe('values that are allowed', () => {
  const accepted: Array<[string, Record<number, string>]> = [
    ['rz: 0 Ω (no nulling resistor)', { 14: '  rz: 0 Ω' }],
    ['cl: 0 F (no load)', { 18: '  cl: 0 F' }],
    ['cl: 0 pF', { 18: '  cl: 0 pF' }],
    ['c2: 0 fF (parasitic neglected)', { 12: '  c2: 0 fF' }],
    ['rl: open', { 19: '  rl: open' }],
    ['rl: "open" (quoted)', { 19: '  rl: "open"' }],
    ['beta: 0.5', { 20: '  beta: 0.5' }],
    ['beta: 50%', { 20: '  beta: 50%' }],
    ['a {min, typ, max} range', { 10: '  gm2: {min: 2.1 mS, typ: 2.4 mS, max: 2.7 mS}' }],
    ['a {min, max} range (typ is the midpoint)', { 18: '  cl: {min: 1 pF, max: 5 pF}' }],
    ['a cl range reaching zero', { 18: '  cl: {min: 0 F, max: 5 pF}' }],
    ['a `±15 %` tolerance', { 11: '  r2: 120 kΩ ±15 %' }],
    ['a `+/-15%` tolerance', { 11: '  r2: 120 kΩ +/-15%' }],
    ['quoted values', { 7: '  gm1: "240 µS"', 8: "  r1: '1.8 MΩ'" }],
    ['a quoted format version', { 2: 'polecheck: "1"' }],
    ['A/V for a transconductance, ohm spelt out', { 7: '  gm1: 240 µA/V', 8: '  r1: 1.8 megohm' }],
    ['a gain in V/V and a phase in °', { 22: '  dc_gain: 17800 V/V', 24: '  phase_margin: {min: 60°}' }],
    ['no block and no title', { 3: '# block', 4: '# title' }],
    ['no claims section', { 21: '#', 22: '#', 23: '#', 24: '#', 25: '#' }],
    ['no conditions section', { 17: '#', 18: '#', 19: '#', 20: '#' }],
  ];
  it.each(accepted)('%s', (_name, edits) => {
    expectFindings(doc(edits), []);
  });

  it('rl: open means no load resistor', () => {
    const r = checkText('kx4-adc-driver.md', doc({ 19: '  rl: open' }));
    expect(r.spec!.conditions.get('rl')!.open).toBe(true);
    expect(r.model!.values.rl).toBeUndefined();
  });

  it('a {min, max} range takes the midpoint as typical', () => {
    const cl = checkText('kx4-adc-driver.md', doc({ 18: '  cl: {min: 1 pF, max: 5 pF}' })).spec!.conditions.get('cl')!;
    expect(cl.typIsMidpoint).toBe(true);
    expect(cl.typ.quantity.value).toBeCloseTo(3e-12, 24);
    expect(cl.min!.quantity.value).toBe(1e-12);
    expect(cl.max!.quantity.value).toBe(5e-12);
  });

  it('a `±15 %` tolerance spans ±15 % of the typical value', () => {
    const r2 = checkText('kx4-adc-driver.md', doc({ 11: '  r2: 120 kΩ ±15 %' })).spec!.params.get('r2')!;
    expect(r2.typ.quantity.value).toBe(120e3);
    expect(r2.min!.quantity.value).toBeCloseTo(102e3, 6);
    expect(r2.max!.quantity.value).toBeCloseTo(138e3, 6);
  });
});

// A bare zero. SPEC-FORMAT §2 accepts a bare number "only for dimensionless
// quantities", yet zero is zero in every unit, and a designer writes `rz: 0`
// for "no nulling resistor" and `cl: 0` for "no load" without a second
// thought. The project brief lists `rz: 0` and `cl: 0` as allowed and
// `gm1: 0` as an error for being zero.
// The two acceptance tests fail at the time of writing ("`rz: 0`: expected a
// resistance in Ω …; `0` has no unit"): decide, then keep or drop them.
describe('a bare zero', () => {
  it.each([
    ['rz: 0', { 14: '  rz: 0' }],
    ['cl: 0', { 18: '  cl: 0' }],
  ] as Array<[string, Record<number, string>]>)('%s is accepted (zero needs no unit)', (_name, edits) => {
    expectFindings(doc(edits), []);
  });

  it('gm1: 0 is an error on its line, whichever reason is given', () => {
    const f = readerFindings(doc({ 7: '  gm1: 0' }));
    expect(f.map((x) => [x.severity, x.line])).toEqual([['error', 7]]);
    expect(['invalid-value', 'wrong-unit']).toContain(f[0].rule);
  });
});

describe('which Markdown files are specs (SPEC-FORMAT §1)', () => {
  const skipped: Array<[string, string]> = [
    ['a page with no front matter', '# KX-4 design notes\n\nNothing to check here.\n'],
    ['an empty file', ''],
    ['front matter without the `polecheck` key', '---\ntitle: KX-4 release notes\nauthor: bench team\n---\n\n# Notes\n'],
    ['broken front matter without the `polecheck` key', '---\ntitle: [KX-4 release notes\n---\n\n# Notes\n'],
    ['an empty front matter', '---\n---\n\n# Notes\n'],
    ['`polecheck: 1` in the body, not in front matter', '# Notes\n\npolecheck: 1\n'],
    ['`polecheck` nested under another key', '---\nmeta:\n  polecheck: 1\n---\n'],
    ['front matter that is a list', '---\n- polecheck: 1\n---\n'],
  ];
  it.each(skipped)('%s is skipped silently', (_name, text) => {
    expect(checkText('notes.md', text)).toEqual({ path: 'notes.md', skipped: true, findings: [] });
  });

  it('`polecheck: 1` with broken YAML is reported at the line where it breaks', () => {
    const text = '---\npolecheck: 1\ntopology: two-stage-miller\nparams:\n  gm1: 240 µS\n   r1: 1.8 MΩ\n  c1: 60 fF\n---\n';
    const r = checkText('kx4.md', text);
    expect(r.skipped).toBe(false);
    expect(r.findings.map((f) => [f.rule, f.severity, f.line])).toEqual([['yaml-syntax', 'error', 6]]);
  });

  // Fails at the time of writing: with CR-only line ends (classic Mac
  // editors) the front matter is not found, so a spec that has the key is
  // skipped silently — the linter then reports "all clear" for it. The line
  // index already counts a lone CR as a line end.
  it('a spec with CR-only line ends is not skipped silently', () => {
    const r = checkText('kx4-adc-driver.md', doc().replace(/\n/g, '\r'));
    expect(r.skipped).toBe(false);
  });
});
