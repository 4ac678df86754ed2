import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { describeUnknownUnit, detectKind, parseQuantity, parseTolerance, type Kind } from '../../src/quantity';

// Sources of expected values:
//   [SI]   SI Brochure, 9th ed. (BIPM 2019), table 7 (SI prefixes) — from memory:
//          f 1e-15, p 1e-12, n 1e-9, µ 1e-6, m 1e-3, k 1e3, M 1e6, G 1e9, T 1e12.
//   [UNI]  The Unicode Standard, code charts (from memory): U+00B5 MICRO SIGN and
//          U+03BC GREEK SMALL LETTER MU; U+2126 OHM SIGN and U+03A9 GREEK CAPITAL
//          LETTER OMEGA; U+00B0 DEGREE SIGN.
//   [ANG]  f = ω / (2π) for an angular frequency ω in rad/s (definition, from memory).
//   [DB]   gain in dB = 20·log10(voltage ratio) (from memory); 20·log10(2) =
//          6.020599913279624 and 20·log10(89000) = 98.98780013289824 evaluated
//          independently in a Node REPL (Math.log10).
//   [C]    polecheck document contract (the project's spec for value syntax):
//          percent → /100, slew canonical unit V/s, spelled-out forms.

const MU = '\u00b5'; // micro sign
const GREEK_MU = '\u03bc';
const OHM_SIGN = '\u2126';
const OMEGA = '\u03a9';

type Accept = [text: string, kind: Kind, value: number, source: string];

/** Values that must come out exactly (the double nearest to the decimal value). */
const exact: Accept[] = [
  // every prefix [SI]
  ['1 fF', 'capacitance', 1e-15, 'SI'],
  ['1 pF', 'capacitance', 1e-12, 'SI'],
  ['1 nF', 'capacitance', 1e-9, 'SI'],
  [`1 ${MU}F`, 'capacitance', 1e-6, 'SI'],
  ['1 mF', 'capacitance', 1e-3, 'SI'],
  ['1 F', 'capacitance', 1, 'SI'],
  ['1 kHz', 'frequency', 1e3, 'SI'],
  ['1 MHz', 'frequency', 1e6, 'SI'],
  ['1 GHz', 'frequency', 1e9, 'SI'],
  ['1 THz', 'frequency', 1e12, 'SI'],
  ['1 mHz', 'frequency', 1e-3, 'SI (m is milli, case-sensitive)'],
  // micro spellings [SI][UNI]
  [`180 ${MU}S`, 'conductance', 1.8e-4, 'SI, UNI'],
  [`180 ${GREEK_MU}S`, 'conductance', 1.8e-4, 'SI, UNI'],
  ['180 uS', 'conductance', 1.8e-4, 'SI'],
  ['180uS', 'conductance', 1.8e-4, 'SI (no space)'],
  ['1.8e-4 S', 'conductance', 1.8e-4, 'C'],
  ['1.8E-4 S', 'conductance', 1.8e-4, 'C'],
  ['1.8e-4S', 'conductance', 1.8e-4, 'C'],
  [`180 ${MU}A/V`, 'conductance', 1.8e-4, 'SI (A/V = S)'],
  ['180 uA/V', 'conductance', 1.8e-4, 'SI'],
  ['180 A/MV', 'conductance', 1.8e-4, 'SI (prefixed denominator)'],
  ['180 microsiemens', 'conductance', 1.8e-4, 'SI, C spelled-out'],
  ['5 mS', 'conductance', 5e-3, 'SI'],
  // ohm spellings [UNI][SI][C]
  [`2.2 M${OMEGA}`, 'resistance', 2.2e6, 'UNI, SI'],
  [`2.2 M${OHM_SIGN}`, 'resistance', 2.2e6, 'UNI, SI'],
  ['2.2 Mohm', 'resistance', 2.2e6, 'C'],
  ['2.2 Mohms', 'resistance', 2.2e6, 'C'],
  ['2.2 megohm', 'resistance', 2.2e6, 'C'],
  ['2.2 megohms', 'resistance', 2.2e6, 'C'],
  ['2.2 megaohm', 'resistance', 2.2e6, 'C'],
  ['1 kiloohm', 'resistance', 1e3, 'C'],
  ['1 kilohm', 'resistance', 1e3, 'C'],
  ['1 kohm', 'resistance', 1e3, 'C'],
  [`625 ${OMEGA}`, 'resistance', 625, 'C'],
  ['625 ohm', 'resistance', 625, 'C'],
  ['625 ohms', 'resistance', 625, 'C'],
  ['50 milliohm', 'resistance', 0.05, 'SI, C'],
  // capacitance, current, voltage, time
  ['45 fF', 'capacitance', 4.5e-14, 'SI'],
  ['1.2 pF', 'capacitance', 1.2e-12, 'SI'],
  ['1.2 picofarad', 'capacitance', 1.2e-12, 'C'],
  ['1.2 picofarads', 'capacitance', 1.2e-12, 'C'],
  ['10 uA', 'current', 1e-5, 'SI'],
  ['10 microamp', 'current', 1e-5, 'C'],
  ['10 microamps', 'current', 1e-5, 'C'],
  ['3 milliampere', 'current', 3e-3, 'C'],
  ['2 A', 'current', 2, 'C'],
  ['1.8 V', 'voltage', 1.8, 'C'],
  ['300 mV', 'voltage', 0.3, 'SI'],
  ['300 millivolts', 'voltage', 0.3, 'C'],
  ['10 ns', 'time', 1e-8, 'SI'],
  ['10 nanosecond', 'time', 1e-8, 'C'],
  ['2 seconds', 'time', 2, 'C'],
  // frequency
  ['23 MHz', 'frequency', 2.3e7, 'SI'],
  ['23 megahertz', 'frequency', 2.3e7, 'C'],
  ['23MHz', 'frequency', 2.3e7, 'C'],
  ['50 hertz', 'frequency', 50, 'C'],
  // slew [C]
  [`16 V/${MU}s`, 'slew', 1.6e7, 'SI, C'],
  [`16 V/${GREEK_MU}s`, 'slew', 1.6e7, 'SI, C'],
  ['16 V/us', 'slew', 1.6e7, 'SI, C'],
  ['16 MV/s', 'slew', 1.6e7, 'SI, C'],
  ['16 kV/ms', 'slew', 1.6e7, 'SI, C'],
  ['16 V/s', 'slew', 16, 'C'],
  // gain, angle
  ['99 dB', 'gain', 99, 'C'],
  ['-3 dB', 'gain', -3, 'C'],
  ['60 deg', 'angle', 60, 'C'],
  ['60°', 'angle', 60, 'UNI, C'],
  ['60 °', 'angle', 60, 'C'],
  ['60deg', 'angle', 60, 'C'],
  // ratio
  ['0.5', 'ratio', 0.5, 'C'],
  ['50%', 'ratio', 0.5, 'C (percent)'],
  ['50 %', 'ratio', 0.5, 'C (percent)'],
  ['12.5%', 'ratio', 0.125, 'C (percent)'],
  ['1e-3', 'ratio', 1e-3, 'C'],
  // signs, number forms, whitespace
  ['+180 uS', 'conductance', 1.8e-4, 'C (leading sign)'],
  ['-1.2 pF', 'capacitance', -1.2e-12, 'C (leading sign)'],
  ['\u22121.2 pF', 'capacitance', -1.2e-12, 'UNI U+2212 minus sign'],
  ['.5 pF', 'capacitance', 5e-13, 'C'],
  ['5. pF', 'capacitance', 5e-12, 'C'],
  ['1.2e+3 pF', 'capacitance', 1.2e-9, 'C'],
  ['0.0012 MHz', 'frequency', 1200, 'SI'],
  ['  180 µS  ', 'conductance', 1.8e-4, 'C (trimmed)'],
  ['180\u00a0µS', 'conductance', 1.8e-4, 'C (no-break space)'],
  ['180\u2009µS', 'conductance', 1.8e-4, 'C (thin space)'],
  ['180\tµS', 'conductance', 1.8e-4, 'C (tab)'],
  ['0 pF', 'capacitance', 0, 'C'],
  ['1e-300 F', 'capacitance', 1e-300, 'C'],
];

/** Values defined through a transcendental conversion; compared to 1e-14 relative. */
const approx: Accept[] = [
  ['1 Mrad/s', 'frequency', 1e6 / (2 * Math.PI), 'ANG'],
  ['1 krad/s', 'frequency', 1e3 / (2 * Math.PI), 'ANG'],
  ['6.283185307179586 rad/s', 'frequency', 1, 'ANG (ω = 2π rad/s is 1 Hz)'],
  ['2 rad/ms', 'frequency', 2e3 / (2 * Math.PI), 'ANG'],
  ['1000 V/V', 'gain', 60, 'DB'],
  ['10 V/V', 'gain', 20, 'DB'],
  ['100000 V/V', 'gain', 100, 'DB'],
  ['2 V/V', 'gain', 6.020599913279624, 'DB'],
  ['89000 V/V', 'gain', 98.98780013289824, 'DB'],
  ['1 V/V', 'gain', 0, 'DB'],
];

describe('parseQuantity: accepted inputs', () => {
  it.each(exact)('%s as %s → %d exactly [%s]', (text, kind, value) => {
    const r = parseQuantity(text, kind);
    expect(r).toMatchObject({ ok: true });
    if (!r.ok) return;
    expect(r.quantity.value).toBe(value);
    expect(r.quantity.kind).toBe(kind);
  });

  it.each(approx)('%s as %s ≈ %d [%s]', (text, kind, value) => {
    const r = parseQuantity(text, kind);
    expect(r).toMatchObject({ ok: true });
    if (!r.ok) return;
    if (value === 0) expect(Math.abs(r.quantity.value)).toBeLessThan(1e-14);
    else expect(Math.abs(r.quantity.value - value) / Math.abs(value)).toBeLessThan(1e-14);
  });

  it('is exact where naive multiplication is not: 180 µS is the double 1.8e-4 [SI]', () => {
    const r = parseQuantity('180 µS', 'conductance');
    expect(r.ok && r.quantity.value).toBe(0.00018);
    expect(r.ok && r.quantity.value).not.toBe(180 * 1e-6); // 0.00017999999999999998
  });

  it('accepts numbers (already converted by a YAML layer) for a ratio', () => {
    const r = parseQuantity(0.25, 'ratio');
    expect(r.ok && r.quantity.value).toBe(0.25);
  });
});

describe('parseQuantity: the written form', () => {
  type Row = [text: string, kind: Kind, number: string, unit: string, style: string, sig: number, decimals: number];
  // sigDigits/decimals rules from the contract [C]: '180' → 3, '23' → 2, '1.20' → 3, '0.05' → 1, '1.8e-4' → 2.
  const rows: Row[] = [
    ['180 µS', 'conductance', '180', 'µS', 'si', 3, 0],
    ['23 MHz', 'frequency', '23', 'MHz', 'si', 2, 0],
    ['1.20 pF', 'capacitance', '1.20', 'pF', 'si', 3, 2],
    ['0.05', 'ratio', '0.05', '', 'bare', 1, 2],
    ['1.8e-4 S', 'conductance', '1.8e-4', 'S', 'si', 2, 1],
    ['99 dB', 'gain', '99', 'dB', 'dB', 2, 0],
    ['89000 V/V', 'gain', '89000', 'V/V', 'V/V', 5, 0],
    ['60°', 'angle', '60', '°', 'deg', 2, 0],
    ['60 deg', 'angle', '60', 'deg', 'deg', 2, 0],
    ['50%', 'ratio', '50', '%', 'percent', 2, 0],
    ['3 Mrad/s', 'frequency', '3', 'Mrad/s', 'rad/s', 1, 0],
    ['16 V/µs', 'slew', '16', 'V/µs', 'si', 2, 0],
    ['  2.2 megohm ', 'resistance', '2.2', 'megohm', 'si', 2, 1],
  ];
  it.each(rows)('%s', (text, kind, number, unit, style, sig, decimals) => {
    const r = parseQuantity(text, kind);
    if (!r.ok) throw new Error(r.message);
    expect(r.quantity.written).toMatchObject({ text: text.trim(), number, unit, style, sigDigits: sig, decimals });
  });

  it('scale is the canonical value of one written unit [SI][ANG]', () => {
    const s = (t: string, k: Kind) => {
      const r = parseQuantity(t, k);
      if (!r.ok) throw new Error(r.message);
      return r.quantity.written.scale;
    };
    expect(s('180 µS', 'conductance')).toBe(1e-6);
    expect(s('2.2 megohm', 'resistance')).toBe(1e6);
    expect(s('16 kV/ms', 'slew')).toBe(1e6);
    expect(s('1 krad/s', 'frequency')).toBeCloseTo(1e3 / (2 * Math.PI), 10);
    expect(s('99 dB', 'gain')).toBe(1);
  });
});

describe('parseQuantity: rejected inputs', () => {
  type Reject = [text: string, kind: Kind, fragment: string, offset: number, hint?: string];
  const rejects: Reject[] = [
    // wrong dimension, one per kind
    ['1.2 MHz', 'capacitance', 'expected a capacitance in F, e.g. `1.2 pF`; `1.2 MHz` is a frequency', 4],
    ['180 pF', 'conductance', 'expected a conductance in S', 4],
    ['2.2 MHz', 'resistance', '`2.2 MHz` is a frequency', 4],
    ['10 V', 'current', 'expected a current in A', 3],
    ['10 mA', 'voltage', '`10 mA` is a current', 3],
    ['10 Hz', 'time', 'expected a time in s', 3],
    ['23 ns', 'frequency', '`23 ns` is a time', 3],
    ['99 Hz', 'gain', 'expected a gain in dB', 3],
    ['60 dB', 'angle', 'expected an angle in °', 3],
    ['16 V', 'slew', '`16 V` is a voltage', 3],
    ['0.5 pF', 'ratio', 'expected a dimensionless ratio', 4],
    ['0.5 V/V', 'ratio', '`0.5 V/V` is a gain', 4],
    ['50%', 'gain', '`50%` is a dimensionless ratio', 2],
    // case slip onto a unit of another kind gets a hint
    ['180 us', 'conductance', '`180 us` is a time (did you mean `uS`?)', 4, 'uS'],
    ['5 ms', 'conductance', 'is a time', 2, 'mS'],
    // bare number for a non-ratio
    ['1.2', 'capacitance', 'expected a capacitance in F, e.g. `1.2 pF`; `1.2` has no unit', 3],
    ['99', 'gain', '`99` has no unit', 2],
    ['60', 'angle', '`60` has no unit', 2],
    // unknown units and suggestions
    ['1.2 pf', 'capacitance', 'unknown unit `pf` (did you mean `pF`?)', 4, 'pF'],
    ['10 MHZ', 'frequency', 'unknown unit `MHZ`', 3, 'MHz'],
    ['10 mhz', 'frequency', '`MHz` (mega)', 3, 'mHz'],
    ['10 KHz', 'frequency', 'did you mean `kHz`?', 3, 'kHz'],
    ['2 Megohm', 'resistance', 'did you mean `megohm`?', 2, 'megohm'],
    ['1 Hzz', 'frequency', 'did you mean `Hz`?', 2, 'Hz'],
    ['1.2 picofarrad', 'capacitance', 'did you mean `picofarad`?', 4, 'picofarad'],
    ['60º', 'angle', 'did you mean `°`?', 2, '°'],
    ['180 uMho', 'conductance', 'unknown unit `uMho`; expected a conductance in S', 4],
    ['3 kg', 'capacitance', 'unknown unit `kg`; expected', 2], // no far-fetched `kF`
    ['5 k', 'resistance', '`k` is a prefix without a unit', 2],
    ['16 V / µs', 'slew', 'no spaces inside a unit: write `V/µs`', 3, 'V/µs'],
    ['16 V/ µs', 'slew', 'no spaces inside a unit', 3, 'V/µs'],
    ['16 V / µs', 'voltage', 'unexpected `/` after `16 V`', 5],
    // trailing garbage
    ['180 µS foo', 'conductance', 'unexpected `foo` after `180 µS`', 7],
    ['180µS;', 'conductance', 'unexpected `;` after `180µS`', 5],
    ['180 µS ±15%', 'conductance', 'a tolerance is only accepted where a range is allowed', 7],
    ['0.5 0.6', 'ratio', 'two numbers', 4],
    ['180 200 µS', 'conductance', 'two numbers: `180` and `200`', 4],
    // not numbers / not finite / bad forms
    ['', 'capacitance', 'empty value; expected a capacitance', 0],
    ['   ', 'ratio', 'empty value', 0],
    ['NaN', 'ratio', '`NaN` is not a finite number', 0],
    ['.inf', 'ratio', '`.inf` is not a finite number', 0],
    ['-Infinity dB', 'gain', 'not a finite number', 0],
    ['0x10 pF', 'capacitance', 'hexadecimal, octal and binary numbers are not accepted', 0],
    ['0o17', 'ratio', 'hexadecimal, octal and binary', 0],
    ['1e400 F', 'capacitance', '`1e400` is out of range (not a finite number)', 0],
    ['1e-400 F', 'capacitance', 'too small to represent', 0],
    ['pF', 'capacitance', 'expected a number at `pF`', 0],
    ['  abc', 'ratio', 'expected a number', 2],
    ['1.2.3 pF', 'capacitance', 'malformed number', 3],
    ['1,2 pF', 'capacitance', 'commas are not accepted', 1],
    ['0 V/V', 'gain', 'must be positive', 0],
    ['-10 V/V', 'gain', 'must be positive', 0],
  ];
  it.each(rejects)('%j as %s', (text, kind, fragment, offset, hint) => {
    const r = parseQuantity(text, kind);
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.message).toContain(fragment);
    expect(r.offset).toBe(offset);
    if (hint !== undefined) expect(r.hint).toBe(hint);
  });

  it('offsets count from the untrimmed input', () => {
    const r = parseQuantity('   1.2 MHz', 'capacitance');
    expect(r.ok === false && r.offset).toBe(7);
  });

  it('does not throw on non-string input', () => {
    expect(parseQuantity(undefined as unknown as string, 'ratio').ok).toBe(false);
    expect(parseQuantity({} as unknown as string, 'gain').ok).toBe(false);
  });
});

describe('detectKind', () => {
  const rows: Array<[string, Kind | undefined]> = [
    ['1.2 MHz', 'frequency'],
    ['1.2 pF', 'capacitance'],
    ['180 µA/V', 'conductance'],
    ['3 Mrad/s', 'frequency'],
    ['16 V/us', 'slew'],
    ['89000 V/V', 'gain'],
    ['60°', 'angle'],
    ['2.2 megohm', 'resistance'],
    ['50%', 'ratio'],
    ['0.5', undefined],
    ['3 kg', undefined],
    ['180 µS foo', undefined],
    ['', undefined],
  ];
  it.each(rows)('%j → %s [C]', (text, kind) => {
    expect(detectKind(text)).toBe(kind);
  });
});

describe('parseTolerance', () => {
  it('returns null without a ± part', () => {
    expect(parseTolerance('180 µS', 'conductance')).toBeNull();
  });

  it.each([
    ['180 µS ±15%', '153 µS'],
    ['180 µS +/-15%', '153 µS'],
    ['180 µS ± 15 %', '153 µS'],
    ['180µS±15%', '153µS'],
  ])('%j → 153…207 µS', (text, minText) => {
    const r = parseTolerance(text, 'conductance');
    expect(r).toMatchObject({ ok: true, pct: 15 });
    if (r === null || !r.ok) return;
    expect(r.typ.value).toBe(1.8e-4);
    // 180·0.85 = 153 and 180·1.15 = 207 (by hand)
    expect(r.min.value).toBeCloseTo(1.53e-4, 15);
    expect(r.max.value).toBeCloseTo(2.07e-4, 15);
    expect(r.min.written.unit).toBe('µS');
    expect(r.min.written.text).toBe(minText); // in the author's unit and spacing
  });

  it('applies the percentage to the linear ratio of a V/V gain [DB]', () => {
    const r = parseTolerance('1000 V/V ±10%', 'gain');
    if (r === null || !r.ok) throw new Error('expected ok');
    expect(r.typ.value).toBeCloseTo(60, 12);
    expect(r.min.value).toBeCloseTo(20 * Math.log10(900), 12); // 59.0848…
    expect(r.max.value).toBeCloseTo(20 * Math.log10(1100), 12); // 60.8278…
  });

  it('orders min ≤ max for negative values', () => {
    const r = parseTolerance('-10 mV ±10%', 'voltage');
    if (r === null || !r.ok) throw new Error('expected ok');
    expect(r.min.value).toBeCloseTo(-0.011, 15);
    expect(r.max.value).toBeCloseTo(-0.009, 15);
  });

  type Bad = [string, Kind, string, number];
  const bad: Bad[] = [
    ['1.2 MHz ±5%', 'capacitance', 'is a frequency', 4],
    ['180 µS ±15 µS', 'conductance', 'must be a percentage', 11],
    ['180 µS ±', 'conductance', 'expected a percentage', 8],
    ['180 µS ±-5%', 'conductance', 'takes no sign', 8],
    ['180 µS ±150%', 'conductance', 'out of range', 8],
    ['180 µS ±15% x', 'conductance', 'unexpected `x`', 12],
    ['±15%', 'conductance', 'expected a typical value', 0],
  ];
  it.each(bad)('%j is rejected', (text, kind, fragment, offset) => {
    const r = parseTolerance(text, kind);
    expect(r).not.toBeNull();
    if (r === null || r.ok) throw new Error('expected an error');
    expect(r.message).toContain(fragment);
    expect(r.offset).toBe(offset);
  });
});

describe('describeUnknownUnit (error path, loads mathjs lazily)', () => {
  // Dimensions from the SI Brochure, 9th ed., tables 2 and 4 (from memory).
  const rows: Array<[string, string | undefined]> = [
    ['kg', 'a mass'],
    ['m/s', 'a speed'],
    ['H', 'an inductance'],
    ['W', 'a power'],
    ['degC', 'a temperature'],
    ['pF', 'a capacitance'], // own table, no mathjs needed
    ['foo', undefined],
    ['5 kg', undefined],
    ['', undefined],
  ];
  it.each(rows)('%j → %s', async (unit, noun) => {
    expect(await describeUnknownUnit(unit)).toBe(noun);
  });

  it('the synchronous modules do not import mathjs statically', () => {
    for (const f of ['parse', 'format', 'units', 'index']) {
      const src = readFileSync(new URL(`../../src/quantity/${f}.ts`, import.meta.url), 'utf8');
      expect(src, f).not.toMatch(/^\s*import\s[^;]*from\s+['"]mathjs['"]/m);
      expect(src, f).not.toMatch(/require\(['"]mathjs['"]\)/);
    }
  });
});
