import fc from 'fast-check';
import * as math from 'mathjs';
import { describe, expect, it } from 'vitest';
import {
  KINDS,
  UNITS,
  detectKind,
  formatLike,
  formatQuantity,
  parseQuantity,
  parseTolerance,
  type Kind,
} from '../../src/quantity';

// Outside oracle: mathjs 15 unit conversion (`math.unit('12.5 uS').toNumber('S')`), an
// independent implementation of SI prefixes and units.
// Precision bound: rounding to d significant digits moves a value by at most
// 0.5·10^(1−d) of its magnitude (by hand).

const NUM_RUNS = 300;

/** Finite non-zero values spread log-uniformly over 1e-18…1e18, either sign. */
const magnitude = fc
  .tuple(fc.double({ min: -18, max: 18, noNaN: true }), fc.boolean())
  .map(([e, neg]) => (neg ? -1 : 1) * 10 ** e);

function relErr(a: number, b: number): number {
  return b === 0 ? Math.abs(a) : Math.abs(a - b) / Math.abs(b);
}

describe('parseQuantity never throws', () => {
  const kind = fc.constantFrom(...KINDS);
  // Fragments that steer random strings into the interesting paths of the scanner.
  const fragment = fc.constantFrom(
    '1', '180', '-', '+', '\u2212', '.', 'e', 'E', '-4', ' ', '\u00a0', '\t', 'µ', 'μ', 'u', 'Ω', 'Ω', 'ohm', 'meg', 'kilo',
    'S', 'F', 'Hz', 'V', 'A', 's', '/', 'rad', 'dB', 'V/V', '°', 'deg', '%', '±', '+/-', 'NaN', 'inf', '0x', ',', ';', 'k', 'M', 'm',
  );
  const structured = fc.array(fragment, { maxLength: 10 }).map((a) => a.join(''));

  it('on arbitrary strings (UTF-16 units, full Unicode, and unit-like fragments)', () => {
    fc.assert(
      fc.property(
        fc.oneof(fc.string(), fc.string({ unit: 'binary' }), fc.string({ unit: 'grapheme' }), structured),
        kind,
        (text, k) => {
          const r = parseQuantity(text, k);
          if (r.ok) {
            expect(Number.isFinite(r.quantity.value)).toBe(true);
            expect(r.quantity.kind).toBe(k);
          } else {
            expect(typeof r.message).toBe('string');
            expect(r.offset).toBeGreaterThanOrEqual(0);
            expect(r.offset).toBeLessThanOrEqual(text.length);
          }
          detectKind(text);
          const t = parseTolerance(text, k);
          if (t !== null && !t.ok) expect(t.offset).toBeLessThanOrEqual(text.length);
        },
      ),
      { numRuns: 1000 },
    );
  });
});

describe('formatQuantity → parseQuantity round trip', () => {
  it.each(KINDS.map((k) => [k]))('%s, values across 1e-18…1e18, 1–6 digits', (kind: Kind) => {
    fc.assert(
      fc.property(magnitude, fc.integer({ min: 1, max: 6 }), (v, digits) => {
        const text = formatQuantity(v, kind, digits);
        const r = parseQuantity(text, kind);
        if (!r.ok) throw new Error(`${v} → ${JSON.stringify(text)}: ${r.message}`);
        expect(relErr(r.quantity.value, v)).toBeLessThanOrEqual(0.5 * 10 ** (1 - digits) * (1 + 1e-9) + 1e-15);
      }),
      { numRuns: 150 },
    );
  });
});

describe('formatLike → parseQuantity round trip', () => {
  const spellings = new Map<Kind, string[]>();
  for (const def of UNITS.values()) {
    if (!spellings.has(def.kind)) spellings.set(def.kind, []);
    spellings.get(def.kind)!.push(def.spelling);
  }
  const writtenNumber = fc.oneof(
    fc.constantFrom('1', '23', '180', '1.20', '0.05', '89000', '4.7', '1.8e-4', '2.2E3', '0.5', '12.5'),
    fc.tuple(fc.nat({ max: 9999 }), fc.nat({ max: 999 })).map(([i, f]) => `${i}.${f}`),
  );
  const authorForm = fc.constantFrom(...KINDS).chain((kind) =>
    fc.record({
      kind: fc.constant(kind),
      number: writtenNumber,
      unit: kind === 'ratio' ? fc.constantFrom('', '%') : fc.constantFrom(...spellings.get(kind)!),
      space: fc.constantFrom('', ' '),
    }),
  );

  it('keeps the author unit and at least the author precision (min 2 digits)', () => {
    fc.assert(
      fc.property(authorForm, fc.double({ min: -12, max: 12, noNaN: true }), fc.boolean(), (a, e, neg) => {
        const like = parseQuantity(`${a.number}${a.space}${a.unit}`, a.kind);
        fc.pre(like.ok);
        if (!like.ok) return;
        const w = like.quantity.written;
        // V/V gains must stay within range for the author form to apply (±120 dB).
        const v = w.style === 'V/V' ? e * 10 : (neg ? -1 : 1) * 10 ** e;
        const text = formatLike(v, w, a.kind);
        const back = parseQuantity(text, a.kind);
        if (!back.ok) throw new Error(`${v} like ${w.text} → ${JSON.stringify(text)}: ${back.message}`);
        // The author's unit, unless the value in it would print at least 10⁴ (or
        // 10^sig) digit by digit (`10 Hz` for 112135 Hz): then the quantity's own
        // prefix, to at least three significant digits (issue 17).
        const reprefixed = (w.style === 'si' || w.style === 'rad/s') && Math.abs(v / w.scale) >= 10 ** Math.max(4, Math.min(8, w.sigDigits)) * (1 - 1e-9);
        if (!reprefixed) expect(back.quantity.written.unit).toBe(w.unit);
        // At most eight significant digits: more is noise beside a first-order estimate.
        const sig = reprefixed ? 3 : Math.min(8, Math.max(2, w.sigDigits));
        if (!reprefixed) expect(back.quantity.written.sigDigits).toBeGreaterThanOrEqual(sig);
        const bound = 0.5 * 10 ** (1 - sig) * (1 + 1e-9) + 1e-14;
        if (w.style === 'V/V') {
          expect(relErr(10 ** (back.quantity.value / 20), 10 ** (v / 20))).toBeLessThanOrEqual(bound);
        } else {
          expect(relErr(back.quantity.value, v)).toBeLessThanOrEqual(bound);
        }
      }),
      { numRuns: 400 },
    );
  });
});

describe('agreement with mathjs as an outside oracle', () => {
  const units: Array<[ours: string, mathjs: string, base: string, kind: Kind]> = [
    ['S', 'S', 'S', 'conductance'],
    ['F', 'F', 'F', 'capacitance'],
    ['Hz', 'Hz', 'Hz', 'frequency'],
    ['A', 'A', 'A', 'current'],
    ['V', 'V', 'V', 'voltage'],
    ['ohm', 'ohm', 'ohm', 'resistance'],
    ['\u03a9', 'ohm', 'ohm', 'resistance'],
  ];
  const prefixes: Array<[ours: string, mathjs: string]> = [
    ['f', 'f'], ['p', 'p'], ['n', 'n'], ['\u00b5', 'u'], ['\u03bc', 'u'], ['u', 'u'], ['m', 'm'], ['', ''], ['k', 'k'], ['M', 'M'], ['G', 'G'], ['T', 'T'],
  ];
  const mantissa = fc.oneof(
    fc.tuple(fc.nat({ max: 99999 }), fc.nat({ max: 9999 })).map(([i, f]) => `${i}.${f}`),
    fc.nat({ max: 1_000_000 }).map(String),
    fc.double({ min: 1e-6, max: 1e6, noNaN: true }).map(String),
  );

  it('prefix × unit × mantissa: same canonical value to 1e-12 relative', () => {
    fc.assert(
      fc.property(mantissa, fc.constantFrom(...prefixes), fc.constantFrom(...units), fc.constantFrom('', '-'), (m, [p, mp], [u, mu, base, kind], sign) => {
        const ours = parseQuantity(`${sign}${m} ${p}${u}`, kind);
        if (!ours.ok) throw new Error(`${sign}${m} ${p}${u}: ${ours.message}`);
        const oracle = math.unit(`${sign}${m} ${mp}${mu}`).toNumber(base);
        if (oracle === 0) expect(ours.quantity.value).toBe(0);
        else expect(relErr(ours.quantity.value, oracle)).toBeLessThanOrEqual(1e-12);
      }),
      { numRuns: 400 },
    );
  });
});
