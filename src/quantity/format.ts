// Formatting of quantities: engineering notation in the canonical unit
// (`formatQuantity`) or in the author's own unit and precision (`formatLike`).
//
// Decimal scaling is done on the decimal representation (`toExponential`)
// rather than by multiplying doubles, so `1.8e-4 S` prints as `180 µS` and
// never as `179.99999999999997 µS`.

import type { Written } from './parse';
import { CANONICAL_UNIT, DISPLAY_UNIT, FORMAT_PREFIX, UNITS, type Kind } from './units';

const DASH = '\u2014';
const TWO_PI = 2 * Math.PI;
const EXP_RE = /^(\d)(?:\.(\d+))?e([+-]\d+)$/;
const HAS_EXPONENT_RE = /[eE]/;
const WHITESPACE_ONLY_RE = /^\s*$/;
const NONZERO_DIGIT_RE = /[1-9]/;

/**
 * `value` rounded to `sig` significant digits (1…100), half away from zero on
 * its shortest decimal representation (so 2.55 → 2.6 at two digits, as a
 * reader expects). Non-finite values and 0 are returned as they are.
 */
export function roundTo(value: number, sig: number): number {
  if (typeof value !== 'number' || !Number.isFinite(value) || value === 0) return value;
  return Number(expForm(sigParts(value, clampDigits(sig, 100))));
}

function clampDigits(d: number | undefined, max: number): number {
  if (d === undefined || !Number.isFinite(d)) return 3;
  return Math.min(max, Math.max(1, Math.round(d)));
}

interface Sig {
  negative: boolean;
  /** Decimal digits, first one non-zero unless the value is 0. */
  digits: string;
  /** Decimal exponent of the first digit. */
  exp: number;
}

/** Shortest decimal digits and exponent that identify `v` (finite). */
function shortestParts(v: number): Sig {
  const m = EXP_RE.exec(Math.abs(v).toExponential())!;
  return { negative: v < 0, digits: m[1] + (m[2] ?? ''), exp: Number(m[3]) };
}

/**
 * The first `keep` digits of `p`, rounded half up on the remaining digits, as
 * an integer digit string ('0' when nothing is left; one digit longer than
 * `keep` when the rounding carries, e.g. 999 → 1000).
 */
function keepDigits(p: Sig, keep: number): string {
  if (keep <= 0) return keep === 0 && p.digits[0] >= '5' ? '1' : '0';
  if (keep >= p.digits.length) return p.digits + '0'.repeat(keep - p.digits.length);
  const head = p.digits.slice(0, keep);
  return p.digits[keep] >= '5' ? (BigInt(head) + 1n).toString().padStart(keep, '0') : head;
}

/** |v| rounded to `sig` significant digits: exactly `sig` digits and the exponent of the first. */
function sigParts(v: number, sig: number): Sig {
  const p = shortestParts(v);
  if (v === 0) return { negative: false, digits: '0'.repeat(sig), exp: 0 };
  const r = keepDigits(p, sig);
  return r.length > sig ? { negative: p.negative, digits: r.slice(0, sig), exp: p.exp + 1 } : { negative: p.negative, digits: r, exp: p.exp };
}

/** `v` with exactly `decimals` digits after the point (0…100), rounded half up. */
function toFixedDecimal(v: number, decimals: number): string {
  const p = shortestParts(v);
  const r = v === 0 ? '0'.repeat(decimals + 1) : keepDigits(p, p.exp + 1 + decimals).padStart(decimals + 1, '0');
  const int = r.slice(0, r.length - decimals);
  const frac = r.slice(r.length - decimals);
  const neg = p.negative && NONZERO_DIGIT_RE.test(r);
  return `${neg ? '-' : ''}${int}${decimals > 0 ? '.' + frac : ''}`;
}

/** v · 10^shift, computed on the decimal representation (one rounding). */
export function shiftDecimal(v: number, shift: number): number {
  if (!Number.isFinite(v) || v === 0 || shift === 0) return v;
  const p = shortestParts(v);
  return Number(`${p.negative ? '-' : ''}${p.digits[0]}.${p.digits.slice(1) || '0'}e${p.exp + shift}`);
}

/** Digits with the decimal point after `pointPos` digits (may be ≤ 0 or past the end). */
function placeDecimal(digits: string, pointPos: number): string {
  if (pointPos <= 0) return '0.' + '0'.repeat(-pointPos) + digits;
  if (pointPos >= digits.length) return digits + '0'.repeat(pointPos - digits.length);
  return digits.slice(0, pointPos) + '.' + digits.slice(pointPos);
}

function expForm(p: Sig, e = 'e'): string {
  const mant = p.digits.length > 1 ? `${p.digits[0]}.${p.digits.slice(1)}` : p.digits;
  return `${p.negative ? '-' : ''}${mant}${e}${p.exp}`;
}

/** `sig` significant digits in plain decimal notation (exponent form only when extreme). */
function fixedSig(v: number, sig: number): string {
  const p = sigParts(v, sig);
  if (p.exp < -6 || p.exp >= 21) return expForm(p);
  return (p.negative ? '-' : '') + placeDecimal(p.digits, p.exp + 1);
}

const SI_KINDS: ReadonlySet<Kind> = new Set(['conductance', 'resistance', 'capacitance', 'current', 'voltage', 'time', 'frequency', 'power', 'noise']);

function engineering(v: number, sig: number, unit: string): string {
  const p = sigParts(v, sig);
  const eng = 3 * Math.floor(p.exp / 3);
  const prefix = FORMAT_PREFIX.get(eng);
  if (prefix === undefined) return `${expForm(p)} ${unit}`;
  return `${p.negative ? '-' : ''}${placeDecimal(p.digits, p.exp - eng + 1)} ${prefix}${unit}`;
}

/**
 * Engineering notation with an SI prefix in the canonical unit, `digits`
 * significant digits (default 3): 1.84e7 Hz → `18.4 MHz`, 1.8e-4 S → `180 µS`.
 * Slew rates are shown in V/µs, angles with `°`, gains in dB, ratios as the
 * shortest number with at most `digits` significant digits. Non-finite → `—`.
 */
export function formatQuantity(value: number, kind: Kind, digits = 3): string {
  if (typeof value !== 'number' || !Number.isFinite(value)) return DASH;
  const sig = clampDigits(digits, 21);
  const v = value + 0; // -0 → 0
  if (SI_KINDS.has(kind)) return engineering(v, sig, CANONICAL_UNIT[kind]);
  switch (kind) {
    case 'slew': {
      const x = shiftDecimal(v, -6);
      const p = sigParts(x, sig);
      if (x !== 0 && (p.exp < -3 || p.exp >= 6)) return `${expForm(p)} V/\u00b5s`;
      return `${fixedSig(x, sig)} V/\u00b5s`;
    }
    case 'gain':
      return `${fixedSig(v, sig)} dB`;
    case 'angle':
      return `${fixedSig(v, sig)}${DISPLAY_UNIT.angle}`;
    case 'ratio':
      return String(roundTo(v, sig));
    // Units that take no prefix: kelvin, and the figure of merit in its customary unit.
    case 'temperature':
    case 'fom':
      return `${fixedSig(v, sig)} ${CANONICAL_UNIT[kind]}`;
    default:
      return engineering(v, sig, CANONICAL_UNIT[kind]);
  }
}

/** The author's written number format applied to `x`. */
function numberLike(x: number, like: Written): string {
  // At most eight significant digits: more is noise beside a first-order estimate.
  const sig = Math.max(2, Math.min(8, like.sigDigits));
  const e = like.number.includes('E') ? 'E' : 'e';
  if (HAS_EXPONENT_RE.test(like.number)) {
    return x === 0 ? toFixedDecimal(0, Math.min(like.decimals, 20)) : expForm(sigParts(x, sig), e);
  }
  if (x === 0) return toFixedDecimal(0, Math.min(like.decimals, 20));
  const p = sigParts(x, sig);
  const decimals = Math.max(like.decimals, sig - 1 - p.exp, 0);
  if (decimals > 20 || p.exp >= 21) return expForm(p);
  return toFixedDecimal(x, decimals);
}

/**
 * `value` (canonical unit of `kind`) in the author's unit and precision as
 * written in `like`: prefix and unit spelling kept, at least the author's
 * significant digits (minimum 2) and at least the author's decimals.
 * Falls back to `formatQuantity` when `like` does not fit `kind` or the value
 * cannot be shown in the author's unit.
 */
export function formatLike(value: number, like: Written, kind: Kind): string {
  if (typeof value !== 'number' || !Number.isFinite(value)) return DASH;
  const v = value + 0;
  const def = like.unit === '' ? undefined : UNITS.get(like.unit);
  if (like.style === 'bare') {
    if (kind !== 'ratio') return formatQuantity(v, kind);
  } else if (def === undefined || def.kind !== kind || def.style !== like.style) {
    return formatQuantity(v, kind);
  }
  let x: number;
  switch (like.style) {
    case 'si':
      x = shiftDecimal(v, -def!.exp10);
      break;
    case 'rad/s':
      x = shiftDecimal(v * TWO_PI, -def!.exp10);
      break;
    case 'percent':
      x = shiftDecimal(v, 2);
      break;
    case 'V/V':
      x = 10 ** (v / 20);
      if (x === 0) return formatQuantity(v, kind);
      break;
    default:
      x = v;
  }
  if (!Number.isFinite(x)) return formatQuantity(v, kind);
  // Far above what the author wrote in that unit (`10 Hz` for a figure of
  // 430 MHz), the author's unit would print every digit: the quantity's own
  // prefix and a sensible precision read better.
  if ((like.style === 'si' || like.style === 'rad/s') && Math.abs(x) >= 10 ** Math.max(4, Math.min(8, like.sigDigits))) return formatQuantity(v, kind, Math.max(3, Math.min(8, like.sigDigits)));
  const num = numberLike(x, like);
  if (like.style === 'bare') return num;
  return num + separator(like) + like.unit;
}

/** The author's spacing between number and unit (`60°` vs `60 deg`). */
function separator(like: Written): string {
  const t = like.text;
  if (t.startsWith(like.number) && t.endsWith(like.unit)) {
    const mid = t.slice(like.number.length, t.length - like.unit.length);
    if (WHITESPACE_ONLY_RE.test(mid)) return mid;
  }
  return like.unit === '\u00b0' || like.unit === '%' ? '' : ' ';
}

/**
 * A claim's figure as a reviewer reads it: as formatQuantity, except that a
 * fraction claimed as such (overshoot) is shown in percent: 0.19 → `19%`.
 */
export function formatFigure(value: number, kind: Kind, digits = 3): string {
  if (kind === 'ratio' && typeof value === 'number' && Number.isFinite(value)) return `${fixedSig(100 * value + 0, clampDigits(digits, 21))}%`;
  return formatQuantity(value, kind, digits);
}
