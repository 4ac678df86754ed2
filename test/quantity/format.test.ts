import { describe, expect, it } from 'vitest';
import { formatLike, formatQuantity, parseQuantity, roundTo, type Kind, type Written } from '../../src/quantity';

// Sources of expected values:
//   [C]   polecheck format contract (project spec): 1.84e7 Hz → '18.4 MHz', 1.2e-12 F → '1.20 pF',
//         625 Ω → '625 Ω', 2.2e6 Ω → '2.20 MΩ', 1.8e-4 S → '180 µS', 1.6e7 V/s → '16.0 V/µs',
//         42.13° → '42.1°', 99.04 dB → '99.0 dB', ratio 0.5 → '0.5'; formatLike '23 MHz' with
//         1.837e7 → '18 MHz', '1.20 pF' with 9.6e-13 → '0.960 pF'.
//   [SI]  SI Brochure, 9th ed., table 7 (prefixes) and §5.4.3 (a space between number and unit,
//         none before the degree sign) — from memory.
//   [H]   by hand (decimal rounding, half up).
//   [REPL] 10^(97.5/20) = 74989.420933…, 2π·1e6 = 6283185.307…, 20·log10(1100) = 60.827853…
//         evaluated independently in a Node REPL.

const MU = '\u00b5';

describe('formatQuantity', () => {
  type Row = [value: number, kind: Kind, digits: number | undefined, expected: string, source: string];
  const rows: Row[] = [
    [1.84e7, 'frequency', undefined, '18.4 MHz', 'C'],
    [1.2e-12, 'capacitance', undefined, '1.20 pF', 'C'],
    [625, 'resistance', undefined, '625 \u03a9', 'C'],
    [2.2e6, 'resistance', undefined, '2.20 M\u03a9', 'C'],
    [1.8e-4, 'conductance', undefined, `180 ${MU}S`, 'C'],
    [1.6e7, 'slew', undefined, `16.0 V/${MU}s`, 'C'],
    [42.13, 'angle', undefined, '42.1°', 'C'],
    [99.04, 'gain', undefined, '99.0 dB', 'C'],
    [0.5, 'ratio', undefined, '0.5', 'C'],
    [1.84e7, 'frequency', 2, '18 MHz', 'H'],
    [1.84e7, 'frequency', 4, '18.40 MHz', 'H'],
    [999.96, 'voltage', undefined, '1.00 kV', 'H (rounding carries into the next prefix)'],
    [999.4, 'voltage', undefined, '999 V', 'H'],
    [2.55e6, 'frequency', 2, '2.6 MHz', 'H (half up on the decimal value, not the binary 2.5499…)'],
    [-1.2e-12, 'capacitance', undefined, '-1.20 pF', 'H'],
    [1e-8, 'time', undefined, '10.0 ns', 'SI'],
    [1e-5, 'current', undefined, `10.0 ${MU}A`, 'SI'],
    [4.5e-14, 'capacitance', undefined, '45.0 fF', 'SI'],
    [3.3e12, 'frequency', undefined, '3.30 THz', 'SI'],
    [1e-18, 'capacitance', undefined, '1.00e-18 F', 'H (below the smallest prefix f)'],
    [1e15, 'frequency', undefined, '1.00e15 Hz', 'H (above the largest prefix T)'],
    [0, 'frequency', undefined, '0.00 Hz', 'H'],
    [-0, 'gain', undefined, '0.00 dB', 'H (no negative zero)'],
    [-3.0103, 'gain', undefined, '-3.01 dB', 'H'],
    [180, 'angle', undefined, '180°', 'SI (no space before °)'],
    [1 / 3, 'ratio', undefined, '0.333', 'H'],
    [5e5, 'slew', undefined, `0.500 V/${MU}s`, 'H'],
    [1e-3, 'slew', undefined, `1.00e-9 V/${MU}s`, 'H (extreme slew in exponent form)'],
  ];
  it.each(rows)('%d %s (digits %s) → %s [%s]', (value, kind, digits, expected) => {
    expect(formatQuantity(value, kind, digits)).toBe(expected);
  });

  it.each([NaN, Infinity, -Infinity])('non-finite %d → em dash, never NaN', (v) => {
    for (const kind of ['frequency', 'gain', 'ratio', 'slew', 'angle'] as Kind[]) {
      expect(formatQuantity(v, kind)).toBe('\u2014');
    }
  });

  it('uses U+00B5 for micro', () => {
    expect(formatQuantity(2e-6, 'time').codePointAt(5)).toBe(0xb5);
  });

  it.each([
    [1.84e7, 'frequency'],
    [1.2e-12, 'capacitance'],
    [2.2e6, 'resistance'],
    [1.6e7, 'slew'],
    [42.13, 'angle'],
    [1e-18, 'capacitance'],
  ] as Array<[number, Kind]>)('output of %d %s parses back', (value, kind) => {
    const r = parseQuantity(formatQuantity(value, kind), kind);
    expect(r.ok).toBe(true);
    if (r.ok) expect(Math.abs(r.quantity.value - value) / Math.abs(value)).toBeLessThanOrEqual(5e-3);
  });
});

describe('roundTo', () => {
  it.each([
    [1.837e7, 2, 1.8e7],
    [0.00017999999999999998, 3, 1.8e-4],
    [2.55, 2, 2.6],
    [-2.55, 2, -2.6],
    [999.96, 3, 1000],
    [0, 3, 0],
    [123456, 1, 100000],
  ])('roundTo(%d, %d) → %d [H]', (v, sig, expected) => {
    expect(roundTo(v, sig)).toBe(expected);
  });
  it('leaves non-finite values alone', () => {
    expect(roundTo(NaN, 3)).toBeNaN();
    expect(roundTo(Infinity, 3)).toBe(Infinity);
  });
});

function written(text: string, kind: Kind): Written {
  const r = parseQuantity(text, kind);
  if (!r.ok) throw new Error(`${text}: ${r.message}`);
  return r.quantity.written;
}

describe('formatLike', () => {
  type Row = [like: string, kind: Kind, value: number, expected: string, source: string];
  const rows: Row[] = [
    ['23 MHz', 'frequency', 1.837e7, '18 MHz', 'C'],
    ['1.20 pF', 'capacitance', 9.6e-13, '0.960 pF', 'C'],
    ['89000 V/V', 'gain', 97.5, '74989 V/V', 'REPL'],
    ['60°', 'angle', 42.13, '42°', 'H'],
    ['60 deg', 'angle', 42.13, '42 deg', 'H'],
    ['1 Mrad/s', 'frequency', 1e6, '6.3 Mrad/s', 'REPL (2π·1e6 rad/s; author wrote 1 digit, minimum is 2)'],
    ['1.8e-4 S', 'conductance', 1.837e-4, '1.8e-4 S', 'H (author used exponent form)'],
    ['1.8E-4 S', 'conductance', 2.5e-5, '2.5E-5 S', 'H'],
    ['50%', 'ratio', 0.123, '12%', 'H'],
    ['0.5', 'ratio', 0.3333, '0.33', 'H'],
    ['2.2 megohm', 'resistance', 3.3e6, '3.3 megohm', 'H (author spelling kept)'],
    [`2.2 M\u2126`, 'resistance', 3.3e6, `3.3 M\u2126`, 'H (author ohm code point kept)'],
    ['180uS', 'conductance', 1.53e-4, '153uS', 'H (author spacing kept)'],
    ['180 µA/V', 'conductance', 1.53e-4, '153 µA/V', 'H'],
    ['23 MHz', 'frequency', 1.837e8, '184 MHz', 'H (author decimals 0 → integer)'],
    ['23 MHz', 'frequency', 1.2e4, '0.012 MHz', 'H (digits added so the value is not shown as 0)'],
    ['1.20 pF', 'capacitance', 1.2345e-12, '1.23 pF', 'H'],
    ['1.20 pF', 'capacitance', 0, '0.00 pF', 'H'],
    ['16 V/µs', 'slew', 2.56e6, '2.6 V/µs', 'H'],
    ['16 kV/ms', 'slew', 2.56e6, '2.6 kV/ms', 'H'],
    ['99 dB', 'gain', 60.83, '61 dB', 'H'],
    ['-3.0 dB', 'gain', -3.0103, '-3.0 dB', 'H'],
  ];
  it.each(rows)('like %j (%s): %d → %j [%s]', (like, kind, value, expected) => {
    expect(formatLike(value, written(like, kind), kind)).toBe(expected);
  });

  it('non-finite → em dash', () => {
    expect(formatLike(NaN, written('23 MHz', 'frequency'), 'frequency')).toBe('\u2014');
  });

  it('falls back to canonical formatting when the author unit does not fit the kind', () => {
    expect(formatLike(1.2e-12, written('23 MHz', 'frequency'), 'capacitance')).toBe('1.20 pF');
    expect(formatLike(60, written('0.5', 'ratio'), 'angle')).toBe('60.0°');
  });

  it('falls back to dB when the V/V figure would overflow', () => {
    expect(formatLike(1e5, written('89000 V/V', 'gain'), 'gain')).toBe('100000 dB');
  });

  // Round trip: parse(formatLike(v)) gives v rounded to the printed digits.
  type Trip = [like: string, kind: Kind, value: number];
  const trips: Trip[] = [
    ['23 MHz', 'frequency', 1.837e7],
    ['1.20 pF', 'capacitance', 9.6e-13],
    ['3 Mrad/s', 'frequency', 4.2e5],
    ['50%', 'ratio', 0.4567],
    ['2.2 megohm', 'resistance', 1.234e5],
    ['1.8e-4 S', 'conductance', 2.345e-7],
  ];
  it.each(trips)('round trip like %j (%s) for %d', (like, kind, value) => {
    const w = written(like, kind);
    const text = formatLike(value, w, kind);
    const back = parseQuantity(text, kind);
    if (!back.ok) throw new Error(`${text}: ${back.message}`);
    expect(back.quantity.written.unit).toBe(w.unit);
    const sig = back.quantity.written.sigDigits;
    expect(sig).toBeGreaterThanOrEqual(Math.max(2, w.sigDigits));
    expect(Math.abs(back.quantity.value - value) / Math.abs(value)).toBeLessThanOrEqual(0.5 * 10 ** (1 - Math.max(2, w.sigDigits)) * (1 + 1e-9));
  });

  it('round trip through V/V stays within the printed precision (checked on the V/V ratio) [REPL]', () => {
    const text = formatLike(97.5, written('89000 V/V', 'gain'), 'gain');
    const back = parseQuantity(text, 'gain');
    if (!back.ok) throw new Error(back.message);
    const printedRatio = 10 ** (back.quantity.value / 20);
    expect(Math.abs(printedRatio - 74989.420933)).toBeLessThanOrEqual(0.5 + 1e-6);
  });
});
