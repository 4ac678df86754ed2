// The closed loop's conditions as documents write them: `gain` (signed, V/V
// or dB; β = 1/G non-inverting, 1/(1 + |G|) inverting), `step` at the output
// or the input, a settling claim's `band`, and the same in a datasheet
// table's Conditions cell and Parameter name. Positions are found in the text
// by this file, not by the reader.
import { describe, expect, it } from 'vitest';
import { typicalValues } from '../../src/model/evaluation';
import { readDocument } from '../../src/pipeline';

const head = ['---', 'polecheck: 1', 'block: strand-cl-conditions', 'topology: two-stage-miller', 'params:', '  gm1: 200 µS', '  r1: 2 MΩ', '  c1: 80 fF', '  gm2: 1.5 mS', '  r2: 150 kΩ', '  c2: 300 fF', '  cc: 1.5 pF', '  i1: 16 µA', '  i2: 120 µA'];

function read(conditions: string[], claims: string[] = [], body: string[] = []) {
  const lines = [...head, 'conditions:', '  cl: 5 pF', ...conditions, ...(claims.length ? ['claims:', ...claims] : []), '---', '', ...body, ''];
  const r = readDocument('t.md', lines.join('\n'));
  if (r.kind !== 'spec') throw new Error('not a spec');
  const at = (needle: string) => {
    const i = lines.findIndex((l) => l.includes(needle));
    if (i < 0) throw new Error(needle);
    return `${i + 1}:${lines[i].indexOf(needle) + 1}`;
  };
  const found = r.findings.map((f) => `${f.line}:${f.column} ${f.severity} ${f.rule}`);
  return { spec: r.spec, findings: r.findings, found, at };
}

describe('the gain condition', () => {
  for (const [written, gain, beta] of [
    ['+10', 10, 0.1],
    ['10 V/V', 10, 0.1],
    ['20 dB', 10, 0.1],
    ['-4 V/V', -4, 0.2],
    ['\u22121', -1, 0.5],
    ['1', 1, 1],
  ] as const) {
    it(`\`gain: ${written}\` is G = ${gain} and gives β = ${beta}`, () => {
      const r = read([`  gain: ${written}`]);
      expect(r.found).toEqual([]);
      const v = typicalValues(r.spec!);
      expect(v.gain).toBeCloseTo(gain, 12);
      expect(v.beta).toBeCloseTo(beta, 12);
    });
  }

  for (const [written, says] of [
    ['0.5', /non-inverting gain is at least 1/],
    ['0', /cannot be zero/],
    ['-6 dB', /magnitude of a non-inverting gain/],
    ['ten', /signed closed-loop gain/],
    ['10 MHz', /signed closed-loop gain/],
  ] as const) {
    it(`rejects \`gain: ${written}\` at its value`, () => {
      const r = read([`  gain: ${written}`]);
      expect(r.found).toEqual([`${r.at(`gain: ${written}`).split(':')[0]}:${Number(r.at(`gain: ${written}`).split(':')[1]) + 6} error invalid-value`]);
      expect(r.findings[0].message).toMatch(says);
    });
  }

  it('takes one value, not a range', () => {
    const r = read(['  gain: {min: 9, max: 11}']);
    expect(r.found).toEqual([`${r.at('gain:').split(':')[0]}:9 error wrong-unit`]);
  });

  it('must agree with a `beta` given beside it: an error at both keys', () => {
    const r = read(['  gain: +10', '  beta: 0.5']);
    expect(r.found).toEqual([`${r.at('gain:')} error invalid-value`, `${r.at('beta:')} error invalid-value`]);
    expect(r.findings[0].message).toContain('β = 0.1');
    // The gain is dropped; the stated β stands.
    expect(typicalValues(r.spec!).beta).toBe(0.5);
    expect(typicalValues(r.spec!).gain).toBeUndefined();
  });

  it('agrees with a `beta` written to the precision of the gain', () => {
    expect(read(['  gain: +11', '  beta: 0.091']).found).toEqual([]);
    expect(read(['  gain: -3 V/V', '  beta: 0.25']).found).toEqual([]);
    expect(read(['  gain: +3', '  beta: 0.30']).found.length).toBe(2);
  });
});

describe('the step condition and the settling band', () => {
  it('reads a step at the output, or at the input', () => {
    expect(typicalValues(read(['  step: 2 V']).spec!).step).toBe(2);
    const input = typicalValues(read(['  step: {input: 100 mV}']).spec!);
    expect(input['step@input']).toBeCloseTo(0.1, 15);
    expect(input.step).toBeUndefined();
    expect(typicalValues(read(['  step: {output: 1 V}']).spec!).step).toBe(1);
  });

  it('rejects a step that is not one voltage at one end', () => {
    const r = read(['  step: {input: 100 mV, output: 1 V}']);
    expect(r.found).toEqual([`${r.at('step:').split(':')[0]}:9 error invalid-value`]);
    expect(read(['  step: {input: 1 µs}']).found.map((f) => f.split(' ').slice(1).join(' '))).toEqual(['error wrong-unit']);
  });

  it('reads a settling claim\'s band into its own operating point', () => {
    const r = read([], ['  settling_time: {max: 1.2 µs, band: 0.01 %}']);
    expect(r.found).toEqual([]);
    const claim = r.spec!.claims[0];
    expect(claim.max!.quantity.value).toBeCloseTo(1.2e-6, 18);
    expect(claim.conditions!.values['settling_time@band']).toBeCloseTo(1e-4, 18);
    expect(claim.conditions!.text).toBe('band 0.01 %');
  });

  it('names the band among the keys a settling claim takes', () => {
    const r = read([], ['  settling_time: {max: 1.2 µs, bnd: 0.01 %}']);
    expect(r.findings[0].message).toMatch(/did you mean `band`/);
  });
});

describe('Conditions cells of a datasheet table', () => {
  const table = (rows: string[]) => ['| Parameter | Conditions | Min | Typ | Max | Unit |', '| --- | --- | --- | --- | --- | --- |', ...rows];

  it('understands G, Gain, AV, β, CL, RL, steps and bands', () => {
    const r = read([], [], table([
      '| Overshoot | G = +10 | | 1 | | % |',
      '| Overshoot | Gain = \u22121 V/V, CL = 10 pF | | 20 | | % |',
      '| Overshoot | AV = 20 dB; RL = 2 kΩ | | 1 | | % |',
      '| Overshoot | β = 0.1 | | 1 | | % |',
      '| Settling time | G = +1, 1 V step, to 0.01 % | | 150 | | ns |',
      '| Settling time | G = +1, Input step = 500 mV, Band = 0.1 % | | 150 | | ns |',
    ]));
    expect(r.found).toEqual([]);
    const v = r.spec!.claims.map((c) => c.conditions!.values);
    expect(v[0]).toEqual({ gain: 10, beta: 0.1 });
    expect(v[1]).toEqual({ gain: -1, beta: 0.5, cl: 10e-12 });
    expect(v[2].gain).toBeCloseTo(10, 12);
    expect(v[2].rl).toBe(2000);
    expect(v[3]).toEqual({ beta: 0.1 });
    expect(v[4]).toEqual({ gain: 1, beta: 1, step: 1, 'step@input': 0, 'settling_time@band': 1e-4 });
    expect(v[5]['step@input']).toBe(0.5);
    expect(v[5].step).toBe(0);
    expect(v[5]['settling_time@band']).toBeCloseTo(1e-3, 18);
    expect(r.spec!.claims[4].conditions!.text).toBe('G = +1, 1 V step, band 0.01 %');
  });

  it('reads a band from the parameter name', () => {
    const r = read([], [], table(['| Settling time to 0.01 % | G = +1 | | 150 | | ns |', '| Settling time (0.1 %) | | | 90 | | ns |']));
    expect(r.found).toEqual([]);
    expect(r.spec!.claims.map((c) => [c.key, c.conditions?.values['settling_time@band']])).toEqual([['settling_time', 1e-4], ['settling_time', 1e-3]]);
  });

  it('means the closed loop by a bandwidth row that states a gain', () => {
    const r = read([], [], table(['| −3 dB bandwidth | G = +10 | | 2.2 | | MHz |']));
    expect(r.spec!.claims.map((c) => c.key)).toEqual(['closed_loop_bandwidth']);
  });

  it('warns at anything else in the cell, and rejects what contradicts itself', () => {
    const r = read([], [], table(['| Overshoot | G = +10, VDD = 1.8 V, TA = 25 °C | | 1 | | % |', '| Overshoot | G = +2, β = 0.3 | | 1 | | % |', '| Overshoot | G = 0.5 | | 1 | | % |']));
    const row = (needle: string) => r.at(needle);
    expect(r.found).toEqual([`${row('VDD')} warning table`, `${row('TA =')} warning table`, `${row('β = 0.3')} error invalid-value`, `${row('G = 0.5')} error wrong-unit`]);
    // The rows in error are not claimed; the one with a warning is, at its gain.
    expect(r.spec!.claims.map((c) => c.conditions?.values.gain)).toEqual([10]);
  });
});

describe('the JSON Schema of the front matter', () => {
  it('accepts and rejects the closed loop\'s conditions as the reader does', async () => {
    const { default: Ajv } = await import('ajv');
    const { jsonSchema } = await import('../../src/schema-json');
    const validate = new Ajv({ allErrors: true, strict: false }).compile(jsonSchema());
    const params = { gm1: '200 µS', r1: '2 MΩ', c1: '80 fF', gm2: '1.5 mS', r2: '150 kΩ', c2: '300 fF', cc: '1.5 pF' };
    const front = (conditions: Record<string, unknown>, claims: Record<string, unknown> = {}) => ({ polecheck: 1, topology: 'two-stage-miller', params, conditions: { cl: '5 pF', ...conditions }, claims });
    // YAML reads `gain: +10` and `gain: -4` as numbers.
    for (const ok of [{ gain: 10 }, { gain: -4 }, { gain: '-4 V/V' }, { gain: '20 dB' }, { step: '1 V' }, { step: { input: '100 mV' } }]) expect(validate(front(ok)), JSON.stringify(ok)).toBe(true);
    for (const bad of [{ gain: 0 }, { gain: 'ten' }, { step: { input: '100 mV', output: '1 V' } }, { step: '1 µs' }]) expect(validate(front(bad)), JSON.stringify(bad)).toBe(false);
    expect(validate(front({}, { settling_time: { max: '1.2 µs', band: '0.01 %' } }))).toBe(true);
    expect(validate(front({}, { settling_time: { max: '1.2 µs', bnd: '0.01 %' } }))).toBe(false);
  });
});
