// Design quantities and expressions: the grammar (accepted and rejected, with
// the exact place of each error), dimensions through the expression, cycles,
// names that shadow units, SPICE number habits, and the related places of a
// finding about a derived param. Expected values are worked by hand from the
// formulas named beside them (the square-law gm = 2·I/Vov and the parallel
// combination r1·r2/(r1 + r2), textbook circuit theory).

import { describe, expect, it } from 'vitest';
import { checkText } from '../../src/check';
import { typicalValues } from '../../src/model/evaluation';
import { compile, normalise, type Scope } from '../../src/spec/expressions';

/** A single-stage spec: design lines, then params (gm on line `gmLine`). */
function doc(design: string[], gm: string, extra: string[] = [], claims: string[] = ['  dc_gain: 64 dB']): string {
  return ['---', 'polecheck: 1', 'topology: single-stage', ...(design.length ? ['design:', ...design] : []), 'params:', '  rout: 8 MΩ', `  gm: ${gm}`, '  cout: 150 fF', ...extra, 'conditions:', '  cl: 3 pF', 'claims:', ...claims, '---', ''].join('\n');
}

const DESIGN = ['  i1: 20 µA', '  vov1: 200 mV', '  ro2: 12 MΩ', '  ro4: 24 MΩ', '  gm_id: 10 /V'];
// With DESIGN (5 lines from line 5), `gm:` stands on line 12, its value at column 7.
const GM_LINE = 12;

const gmOf = (text: string, design = DESIGN) => {
  const r = checkText('e.md', doc(design, text));
  // The reader's findings only: a claim may fail with the value (dc_gain is claimed for gm = 200 µS).
  return { r, gm: r.spec?.params.get('gm')?.typ.quantity.value, errors: r.findings.filter((f) => f.severity === 'error' && f.claim === null) };
};

describe('accepted expressions and their values', () => {
  // [as written, gm in S, how the value is worked]
  const cases: Array<[string, number, string]> = [
    ['2 * i1 / vov1', 2e-4, '2·20 µA / 200 mV (square law)'],
    ['2*i1/vov1', 2e-4, 'same without spaces'],
    ['gm_id * i1', 2e-4, '10 /V · 20 µA (gm/Id method)'],
    ['1 / (ro2 ∥ ro4)', 1 / 8e6, '1/(12 MΩ ∥ 24 MΩ) = 1/8 MΩ'],
    ['1 / (ro2 || ro4)', 1 / 8e6, 'the ASCII spelling of ∥'],
    ['(ro2 ∥ ro4)^-1', 1 / 8e6, 'a power of −1'],
    ['sqrt(2 * i1 * 1 mA/V^2)', Math.sqrt(2 * 20e-6 * 1e-3), 'gm = √(2·I·k), k = 1 mA/V²'],
    ['max(2 * i1 / vov1, 150 µS)', 2e-4, 'the larger of 200 µS and 150 µS'],
    ['min(2 * i1 / vov1, 150 µS)', 1.5e-4, 'the smaller'],
    ['abs(-2 * i1 / vov1)', 2e-4, 'magnitude'],
    ['200 µS + 0 * i1 / vov1', 2e-4, 'a sum of conductances'],
    ['250 μS − 50 uS', 2e-4, 'Greek mu, micro sign, ASCII u; the minus sign U+2212'],
    ['i1 / 100 mV', 2e-4, 'a quantity in a denominator'],
    ['2 · i1 / vov1', 2e-4, 'the middle dot as a product'],
  ];
  it.each(cases)('gm: %s', (text, want) => {
    const { gm, errors } = gmOf(text);
    expect(errors).toEqual([]);
    expect(gm).toBeCloseTo(want, 15);
    expect(Math.abs(gm! - want) / want).toBeLessThan(1e-12);
  });

  it('a design quantity may itself be an expression over others; order of keys does not matter', () => {
    const { gm, errors } = gmOf('gm_design', ['  gm_design: 2 * i_tail / 2 / vov', '  vov: 200 mV', '  i_tail: 40 µA']);
    expect(errors).toEqual([]);
    expect(gm).toBeCloseTo(2e-4, 15);
  });

  it('a plain spec reads no expression and computes no derivation', () => {
    const r = checkText('e.md', doc([], '200 µS'));
    expect(r.spec?.derived).toBeUndefined();
    expect(r.spec?.design).toBeUndefined();
  });
});

describe('rejected expressions, each at its place', () => {
  // [gm as written, column of the finding on line GM_LINE, rule, message fragment]
  const cases: Array<[string, number, string, string]> = [
    ['2 * i2 / vov1', 11, 'wrong-unit', 'unknown name `i2`'],
    ['2 * iq / vov1', 11, 'wrong-unit', 'did you mean `i1`?'],
    ['2 * i1 / vov1 +', 22, 'expression', 'cannot read the expression'],
    ['(2 * i1 / vov1', 21, 'expression', 'cannot read the expression'],
    ['ro2 | ro4', 11, 'expression', 'a single `|` is not an operator'],
    ['2 * i1 * vov1 ∥ 1 S', 21, 'expression', 'write parentheses around `2 * i1 * vov1` beside ∥'],
    ['2 * i1 / vov1 > 1 S', 21, 'expression', 'the operator `>` is not available'],
    ['log(i1 / vov1)', 7, 'expression', '`log` is not a function expressions may use'],
    ['sqrt(i1, vov1)', 7, 'expression', '`sqrt` takes one argument'],
    ['i1 / vov1 mod 1 S', 17, 'expression', 'the operator `mod` is not available'],
    ['2 meg', 7, 'wrong-unit', 'looks like SPICE notation; write `2 MS`'],
    ['i1 / vov1 to S', 17, 'expression', 'the operator `to` is not available'],
  ];
  it.each(cases)('gm: %s', (text, column, rule, message) => {
    const { errors } = gmOf(text);
    expect(errors.map((f) => [f.rule, f.line, f.column])).toEqual([[rule, GM_LINE, column]]);
    expect(errors[0].message).toContain(message);
  });
});

describe('dimensions through the expression', () => {
  it('`i1 * vov1` for a conductance names what it got and what was expected', () => {
    const { errors } = gmOf('i1 * vov1');
    expect(errors.map((f) => [f.rule, f.line, f.column])).toEqual([['wrong-unit', GM_LINE, 7]]);
    expect(errors[0].message).toBe('`gm: i1 * vov1` gives a power (A·V), but `gm` (input transconductance) is a conductance (A/V)');
  });

  // [gm as written, fragment]
  const cases: Array<[string, string]> = [
    ['i1 + vov1', 'adding a current (A) and a voltage (V) has no meaning'],
    ['ro2 ∥ i1', 'the parallel combination of a resistance (V/A) and a current (A) has no meaning'],
    ['max(i1, vov1)', '`max` compares a current (A) with a voltage (V)'],
    ['i1 ^ vov1', 'the exponent must be a plain number, not a voltage (V)'],
    ['gm_id', 'gives 1/V, but `gm`'],
    ['sqrt(i1)', 'gives A^0.5'],
  ];
  it.each(cases)('gm: %s', (text, fragment) => {
    const { errors } = gmOf(text);
    expect(errors).toHaveLength(1);
    expect(errors[0].line).toBe(GM_LINE);
    expect(errors[0].message).toContain(fragment);
  });

  it('a frequency from 1/s is read as rad/s and said so; one with hertz in it is not', () => {
    // cl is 3 pF; a design quantity for a claim arg is not needed: use a condition-free check of the derivation itself.
    const text = (f: string) => ['---', 'polecheck: 1', 'topology: single-stage', 'design:', '  g: 200 µS', '  c: 3 pF', 'params:', '  rout: 8 MΩ', '  gm: g', '  cout: 150 fF', `  f_corner: ${f}`, 'conditions:', '  cl: 3 pF', 'claims:', '  dc_gain: 64 dB', '---', ''].join('\n');
    const rad = checkText('f.md', text('g / c'));
    // 200 µS / 3 pF = 66.7 Mrad/s = 10.6 MHz.
    expect(rad.spec?.params.get('f_corner')?.typ.quantity.value).toBeCloseTo(2e-4 / 3e-12 / (2 * Math.PI), 3);
    const note = rad.findings.find((f) => f.rule === 'expression');
    expect(note?.severity).toBe('note');
    expect(note?.message).toContain('gives 1/s, read as rad/s: 66.7 Mrad/s is 10.6 MHz');
    const hz = checkText('f.md', text('g / c * 1 Hz * 1 s'));
    expect(hz.spec?.params.get('f_corner')?.typ.quantity.value).toBeCloseTo(2e-4 / 3e-12, 0);
    expect(hz.findings.some((f) => f.rule === 'expression')).toBe(false);
  });
});

describe('cycles, shadowing, names', () => {
  it('a cycle is an error at each of its keys, naming the ring', () => {
    const r = checkText('c.md', doc(['  a1: b1 * 2', '  b1: c1 / 2', '  c1: a1 + 0 A'], 'a1 / 1 V'));
    const cyc = r.findings.filter((f) => f.message.includes('cycle'));
    expect(cyc.map((f) => [f.rule, f.line, f.column]).sort()).toEqual([
      ['expression', 5, 3],
      ['expression', 6, 3],
      ['expression', 7, 3],
    ]);
    for (const f of cyc) expect(f.message).toMatch(/`a1` → `b1` → `c1` → `a1`|`b1` → `c1` → `a1` → `b1`|`c1` → `a1` → `b1` → `c1`/);
    expect(r.spec).toBeFalsy();
  });

  it('a param that uses itself is a cycle of one', () => {
    const r = checkText('c.md', doc([], 'gm * 2'));
    expect(r.findings.filter((f) => f.severity === 'error').map((f) => [f.line, f.column, f.message])).toEqual([[6, 3, 'unknown name `gm`: not a design quantity, param or condition of this spec, nor a unit'.slice(0, 0) || expect.stringContaining('cycle')]]);
  });

  // [name, fragment]
  const shadowing: Array<[string, string]> = [
    ['pF', '`pF` is a unit'],
    ['mA', '`mA` is a unit'],
    ['S', '`S` is a unit'],
    ['Hz', '`Hz` is a unit'],
    ['sqrt', '`sqrt` is a function of expressions'],
  ];
  it.each(shadowing)('a design quantity named `%s` is an error saying what it shadows', (name, fragment) => {
    const r = checkText('s.md', doc([`  ${name}: 20 µA`], '200 µS'));
    expect(r.findings.map((f) => [f.rule, f.line, f.column])).toEqual([['design', 5, 3]]);
    expect(r.findings[0].message).toContain(fragment);
  });

  it('a design quantity named like a param stands for it; given in both places is an error', () => {
    const ok = checkText('p.md', doc(['  gm: 200 µS'], '200 µS').replace('  gm: 200 µS\nparams', 'xx').replace('design:\nxx', 'design:\n  gm: 200 µS\nparams'));
    void ok;
    const both = checkText('p.md', doc(['  gm: 200 µS'], '200 µS'));
    expect(both.findings.map((f) => [f.rule, f.line, f.column])).toEqual([['design', 5, 3]]);
    expect(both.findings[0].message).toContain('given twice');
    const text = ['---', 'polecheck: 1', 'topology: single-stage', 'design:', '  gm: 2 * i1 / vov1', '  i1: 20 µA', '  vov1: 200 mV', 'params:', '  rout: 8 MΩ', '  cout: 150 fF', 'conditions:', '  cl: 3 pF', 'claims:', '  dc_gain: 64 dB', '---', ''].join('\n');
    const stands = checkText('p.md', text);
    expect(stands.findings.filter((f) => f.severity === 'error')).toEqual([]);
    expect(stands.spec?.params.get('gm')?.typ.quantity.value).toBeCloseTo(2e-4, 15);
  });
});

describe('SPICE number habits', () => {
  // [value, key line, fragment, suggestion]
  const cases: Array<[string, string, string]> = [
    ['2meg', 'looks like SPICE notation; write `2 MΩ`', 'write `2 MΩ`'],
    ['10k', 'looks like SPICE notation; write `10 kΩ`', 'write `10 kΩ`'],
    ['8MEG', 'looks like SPICE notation; write `8 MΩ`', 'write `8 MΩ`'],
    ['2M', 'where `M` means milli in either case (mega is `meg`); write `2 mΩ` for milli or `2 MΩ` for mega', 'write `2 MΩ`'],
  ];
  it.each(cases)('rout: %s', (value, fragment, suggestion) => {
    const r = checkText('s.md', doc([], '200 µS').replace('rout: 8 MΩ', `rout: ${value}`));
    expect(r.findings.map((f) => [f.rule, f.line, f.column])).toEqual([['wrong-unit', 5, 9]]);
    expect(r.findings[0].message).toContain(fragment);
    expect(r.findings[0].suggestions).toEqual([suggestion]);
  });
  it('cout: 1.5p', () => {
    const r = checkText('s.md', doc([], '200 µS').replace('cout: 150 fF', 'cout: 1.5p'));
    expect(r.findings[0].message).toContain('looks like SPICE notation; write `1.5 pF`');
  });
  it('in a design quantity, the unit is asked for', () => {
    const r = checkText('s.md', doc(['  rx: 2meg'], '200 µS'));
    expect(r.findings.map((f) => [f.rule, f.line, f.column])).toEqual([['wrong-unit', 5, 7]]);
    expect(r.findings[0].message).toContain('looks like SPICE notation');
  });
});

describe('findings about a derived param', () => {
  it('a reader error points at the expression, with the design quantities it uses as related places', () => {
    const r = checkText('r.md', doc(['  i1: 0 A', '  vov1: 200 mV'], '2 * i1 / vov1'));
    const f = r.findings.find((x) => x.rule === 'invalid-value')!;
    expect([f.line, f.column]).toEqual([9, 7]);
    expect(f.message).toContain('got `2 * i1 / vov1` = 0');
    expect(f.related).toEqual([
      { line: 5, column: 3, message: '`i1` = 0.00 A, used by `gm: 2 * i1 / vov1`' },
      { line: 6, column: 3, message: '`vov1` = 200 mV, used by `gm: 2 * i1 / vov1`' },
    ]);
  });

  it('a rule finding at the expression lists the quantities it uses', () => {
    // The failing example of rules/compensation-sizing.md with its inner capacitor written as 3 × a unit capacitor.
    const text = ['---', 'polecheck: 1', 'topology: three-stage-nested-miller', 'design:', '  c_unit: 5 pF', 'params:', '  gm1: 80 µS', '  r1: 3 MΩ', '  c1: 40 fF', '  gm2: 300 µS', '  r2: 1.5 MΩ', '  c2: 60 fF', '  gm3: 6 mS', '  r3: 30 kΩ', '  c3: 500 fF', '  cc1: 2.7 pF', '  cc2: 3 * c_unit', 'conditions:', '  cl: 50 pF', 'claims:', '  gbw: 4.7 MHz', '---', ''].join('\n');
    const r = checkText('r.md', text);
    const f = r.findings.find((x) => x.rule === 'compensation-sizing')!;
    expect([f.line, f.column]).toEqual([17, 8]);
    expect(f.related).toEqual([{ line: 5, column: 3, message: '`c_unit` = 5.00 pF, used by `cc2: 3 * c_unit`' }]);
  });
});

describe('the compiler alone', () => {
  const scope: Scope = { dims: (n) => (n === 'x' ? { dims: [1, 0, 0], hz: false } : undefined), names: () => ['x'] };
  it('normalises in one scan and keeps the offsets', () => {
    const n = normalise('2 µA ∥ 3 Ω || x');
    expect(n.text).toBe('2 uA | 3 ohm |  x');
    expect(n.map[n.text.indexOf('ohm')]).toBe(9);
    expect(n.map[n.text.lastIndexOf('x')]).toBe(14);
  });
  it('a long run of pipes and parentheses is linear: 20 000 characters', () => {
    const long = `${'('.repeat(2000)}x${')'.repeat(2000)} ${'|| x '.repeat(3000)}`;
    const t = Date.now();
    const n = normalise(long);
    expect(n.text.length).toBeGreaterThan(long.length - 3001);
    // Not a timing assertion on the compile: only that it ends with a result.
    const c = compile(long, scope);
    expect(c.ok || !c.ok).toBe(true);
    void t;
  });
  it('constants fold; a read is recorded with its offset', () => {
    const c = compile('2 * x + 3 uA', scope);
    expect(c.ok).toBe(true);
    if (c.ok) {
      expect(c.compiled.uses).toEqual([{ name: 'x', offset: 4 }]);
      expect(c.compiled.compute({ x: 1e-6 })).toBeCloseTo(5e-6, 18);
      expect(c.compiled.dims).toEqual([1, 0, 0]);
    }
  });
});

describe('the JSON Schema knows design quantities, expressions and `from`', () => {
  it('accepts what the reader accepts, rejects a shadowing name and a wrong unit', async () => {
    const { default: Ajv } = await import('ajv');
    const { load } = await import('js-yaml');
    const { jsonSchema } = await import('../../src/schema-json');
    const validate = new Ajv({ allErrors: true, strict: false }).compile(jsonSchema());
    const fm = (text: string) => load(text.split(/^---\s*$/m)[1]);
    const good = doc([...DESIGN, '  i_src: {typ: 20 µA, from: "@m5[id]"}', '  spread: 20 µA ±10%'], '2 * i1 / vov1', ['  f_corner: {typ: 10 kHz, from: "@m1[fc]"}']);
    expect(checkText('g.md', good).findings.filter((f) => f.severity === 'error' && f.claim === null)).toEqual([]);
    expect(validate(fm(good)), JSON.stringify(validate.errors)).toBe(true);
    for (const [bad, why] of [
      [doc(['  pF: 1 pF'], '200 µS'), 'a design quantity named like a unit'],
      [doc([], '200 µS').replace('cout: 150 fF', 'cout: 1.2 MHz'), 'a wrong unit, not an expression'],
      [doc(DESIGN, '2 * i1 / vov1').replace('gm_id: 10 /V', 'gm_id: {typ: 10 /V, form: x}'), 'a misspelt key of a design range'],
    ] as const) {
      expect(validate(fm(bad)), why).toBe(false);
      expect(checkText('b.md', bad).findings.some((f) => f.severity === 'error' && f.claim === null), why).toBe(true);
    }
  });
});

describe('a spec written in design quantities checks, fixes and reports like one written in params', () => {
  const plain = ['---', 'polecheck: 1', 'topology: two-stage-miller', 'params:', '  gm1: 250 µS', '  r1: 2.4 MΩ', '  c1: 45 fF', '  gm2: 1.8 mS', '  r2: 150 kΩ', '  c2: 120 fF', '  cc: 1.2 pF', '  i1: 20 µA', '  i2: 150 µA', 'conditions:', '  cl: 2 pF', 'claims:', '  gbw: 40 MHz', '  phase_margin: {min: 60 deg}', '  slew_rate: 16 V/µs', '---', ''].join('\n');
  // 2 · 20 µA / 160 mV = 250 µS; 4 MΩ ∥ 6 MΩ = 2.4 MΩ; 12 /V · 150 µA = 1.8 mS.
  const designed = plain
    .replace('params:\n  gm1: 250 µS\n  r1: 2.4 MΩ', 'design:\n  i1: 20 µA\n  vov1: 160 mV\n  ro2: 4 MΩ\n  ro4: 6 MΩ\n  gm_id2: 12 /V\nparams:\n  gm1: 2 * i1 / vov1\n  r1: ro2 ∥ ro4')
    .replace('  gm2: 1.8 mS', '  gm2: gm_id2 * i2')
    .replace('  i1: 20 µA\n  i2: 150 µA\nconditions', '  i2: 150 µA\nconditions');
  it('the same findings, figures and restatements; design changes on the design quantities', () => {
    const a = checkText('a.md', plain);
    const b = checkText('b.md', designed);
    const shape = (r: typeof a) => r.findings.map((f) => [f.rule, f.severity, f.claim, f.message, f.computed, f.fixes?.filter((x) => x.kind === 'restate').map((x) => x.text)]);
    expect(shape(b)).toEqual(shape(a));
    expect(a.findings.some((f) => f.rule === 'gain-bandwidth')).toBe(true);
    const knobs = (r: typeof a) => r.findings.flatMap((f) => f.fixes ?? []).flatMap((x) => (x.kind === 'design' ? Object.keys(x.changes) : []));
    expect(knobs(a)).toContain('gm1');
    expect(knobs(b)).not.toContain('gm1');
    expect(knobs(b)).toEqual(expect.arrayContaining(['i1', 'vov1']));
    // A design change on i1 moves gm1 = 2·i1/vov1 and the slew rate i1/cc together: its figures are re-judged with both.
    const i1Fix = b.findings.flatMap((f) => f.fixes ?? []).find((x) => x.kind === 'design' && 'i1' in x.changes);
    if (i1Fix?.kind !== 'design') throw new Error('no design change on i1');
    const gm1 = (2 * i1Fix.changes.i1) / 0.16;
    expect(i1Fix.gives.slew_rate).toBeCloseTo(Math.min(i1Fix.changes.i1 / 1.2e-12, (150e-6 - i1Fix.changes.i1) / (120e-15 + 2e-12)), 0);
    expect(gm1).toBeGreaterThan(250e-6);
  });
});
