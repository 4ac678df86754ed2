// Parsing of written quantities: `180 µS`, `2.2 megohm`, `16 V/µs`, `60°`, `50%`.
//
// `parseQuantity` is synchronous and does not touch mathjs; every regular
// expression below is compiled once at module load. Values are scaled by
// shifting the decimal exponent of the written number (`180e-6`), so that a
// written `180 µS` becomes exactly the double nearest to 1.8e-4.

import { formatLike } from './format';
import {
  CONFUSABLES,
  KIND_NOUN,
  PREFIX_SPELLINGS,
  UNITS,
  UNITS_BY_KIND,
  UNITS_BY_LOWER,
  expectation,
  type Kind,
  type UnitDef,
} from './units';

export interface Written {
  /** The whole input as written, trimmed. */
  text: string;
  /** The numeric part as written, e.g. '1.8e-4', '180'. */
  number: string;
  /** The unit part as written, e.g. 'µS', 'MHz', 'V/µs', 'dB', 'V/V', '°', '' (bare). */
  unit: string;
  style: 'si' | 'dB' | 'V/V' | 'rad/s' | 'deg' | 'bare' | 'percent';
  /**
   * For styles 'si' and 'rad/s': canonical value per unit of the written
   * number (1e-6 for `µS`, 1e3/(2π) for `krad/s`). 1 for the other styles.
   */
  scale: number;
  /** Significant digits of the written number ('180' → 3, '0.05' → 1, '1.8e-4' → 2). */
  sigDigits: number;
  /** Digits after the decimal point as written ('1.20' → 2, '23' → 0). */
  decimals: number;
}

export interface Quantity {
  /** In the canonical unit of `kind`: gain in dB, angle in degrees, frequency in Hz. */
  value: number;
  kind: Kind;
  written: Written;
}

export type ParseResult =
  | { ok: true; quantity: Quantity }
  | { ok: false; message: string; offset: number; hint?: string };

type Failure = { ok: false; message: string; offset: number; hint?: string };

export interface RangeText {
  typ: ParseResult;
  tolerancePct?: number;
}

// ---------------------------------------------------------------------------
// Precompiled patterns

/** sign, integer digits, fraction digits, exponent sign+digits. */
const NUMBER_RE = /^([+\-\u2212]?)(?:(\d+)(?:\.(\d*))?|\.(\d+))(?:[eE]([+\-\u2212]?\d+))?/;
const UNSIGNED_NUMBER_RE = /^(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+\-\u2212]?\d+)?/;
const NONFINITE_RE = /^[+\-\u2212]?\.?(?:nan|inf(?:inity)?)(?![\p{L}\p{N}])/iu;
const RADIX_RE = /^[+\-\u2212]?0[xXoObB][0-9a-zA-Z]/;
const STARTS_NUMBER_RE = /^[+\-\u2212]?\.?\d/;
const WHITESPACE_RE = /\s/;
const LETTER_RE = /\p{L}/u;
const SPACED_QUOTIENT_RE = /^([^\s/]+)\s*\/\s*([^\s/]+)/;
const UNITISH_RE = /^[\p{L}\u00b0%][\p{L}\p{N}\u00b0%/^*\u00b7 ]*$/u;
const MICRO_RE = /[\u00b5\u03bc]/g;
const OHM_RE = /[\u03a9\u2126]/g;
const MIDDLE_DOT_RE = /\u00b7/g;
const DIGIT_RE = /\d/;
const NONZERO_DIGIT_RE = /[1-9]/;
const LEADING_ZEROS_RE = /^0+/;

const TWO_PI = 2 * Math.PI;
const MAX_UNIT_LENGTH = Math.max(...[...UNITS.keys()].map((u) => u.length));

// ---------------------------------------------------------------------------
// Scanning (kind-independent)

interface Scanned {
  ok: true;
  /** Trimmed input. */
  trimmed: string;
  numStart: number;
  numEnd: number;
  numberText: string;
  negative: boolean;
  intDigits: string;
  fracDigits: string;
  /** Written exponent (0 when none); may be huge or non-finite for absurd input. */
  exp: number;
  unitStart: number;
  unitEnd: number;
  unit: string;
  /** Offset of the first non-space character after the unit, or -1. */
  restStart: number;
}

function isSpace(ch: string): boolean {
  return WHITESPACE_RE.test(ch);
}

function skipSpace(text: string, i: number): number {
  while (i < text.length && isSpace(text[i])) i++;
  return i;
}

function tokenEnd(text: string, i: number): number {
  while (i < text.length && !isSpace(text[i])) i++;
  return i;
}

function fail(message: string, offset: number, hint?: string): Failure {
  return hint === undefined ? { ok: false, message, offset } : { ok: false, message, offset, hint };
}

function scan(text: string): Scanned | Failure {
  const start = skipSpace(text, 0);
  if (start === text.length) return fail('empty value', 0);
  let end = text.length;
  while (end > start && isSpace(text[end - 1])) end--;
  const trimmed = text.slice(start, end);

  const head = text.slice(start);
  if (RADIX_RE.test(head)) {
    return fail(`\`${firstToken(text, start)}\`: hexadecimal, octal and binary numbers are not accepted; write the number in decimal`, start);
  }
  if (NONFINITE_RE.test(head)) {
    return fail(`\`${firstToken(text, start)}\` is not a finite number`, start);
  }
  const m = NUMBER_RE.exec(head);
  if (m === null) {
    if (head.startsWith('\u00b1') || head.startsWith('+/-')) {
      return fail('expected a number before the tolerance', start);
    }
    return fail(`expected a number at \`${firstToken(text, start)}\``, start);
  }
  const numEnd = start + m[0].length;
  const after = text[numEnd];
  if (after === '.' || ((after === 'e' || after === 'E') && STARTS_NUMBER_RE.test(text.slice(numEnd + 1)))) {
    return fail(`malformed number \`${firstToken(text, start)}\``, numEnd);
  }
  if (after === ',' && DIGIT_RE.test(text[numEnd + 1] ?? '')) {
    return fail('commas are not accepted in numbers; use a decimal point and no thousands separator', numEnd);
  }
  const expText = m[5];
  const exp = expText === undefined ? 0 : Number.parseInt(expText.replace('\u2212', '-'), 10);
  const scanned: Scanned = {
    ok: true,
    trimmed,
    numStart: start,
    numEnd,
    numberText: m[0],
    negative: m[1] === '-' || m[1] === '\u2212',
    intDigits: m[2] ?? '',
    fracDigits: m[3] ?? m[4] ?? '',
    exp,
    unitStart: numEnd,
    unitEnd: numEnd,
    unit: '',
    restStart: -1,
  };

  const j = skipSpace(text, numEnd);
  if (j === text.length) return scanned;
  const rest = text.slice(j);
  if (STARTS_NUMBER_RE.test(rest)) {
    return fail(`two numbers: \`${clip(m[0])}\` and \`${firstToken(text, j)}\`; a value is one number and a unit`, j);
  }
  if (rest.startsWith('\u00b1') || rest.startsWith('+/-')) {
    // A tolerance right after a bare number: let the caller report it as garbage.
    scanned.restStart = j;
    return scanned;
  }
  let unitEnd = tokenEnd(text, j);
  let unit = text.slice(j, unitEnd);
  if (!UNITS.has(unit)) {
    // `180µS;` → unit `µS` followed by garbage `;`.
    for (let len = Math.min(unit.length - 1, MAX_UNIT_LENGTH); len >= 1; len--) {
      const head2 = unit.slice(0, len);
      const next = unit[len];
      if (UNITS.has(head2) && !LETTER_RE.test(next) && next !== '/') {
        unitEnd = j + len;
        unit = head2;
        break;
      }
    }
  }
  scanned.unitStart = j;
  scanned.unitEnd = unitEnd;
  scanned.unit = unit;
  const k = skipSpace(text, unitEnd);
  scanned.restStart = k < text.length ? k : -1;
  return scanned;
}

function firstToken(text: string, i: number): string {
  return clip(text.slice(i, tokenEnd(text, i)));
}

/** Keep quoted input short in messages. */
function clip(t: string): string {
  return t.length > 40 ? t.slice(0, 40) + '…' : t;
}

// ---------------------------------------------------------------------------
// Suggestions for unknown units

function caseDifferences(a: string, b: string): number {
  let n = Math.abs(a.length - b.length);
  const len = Math.min(a.length, b.length);
  for (let i = 0; i < len; i++) if (a[i] !== b[i]) n++;
  return n;
}

/** Optimal string alignment distance, capped: returns 2 for anything ≥ 2. */
function distanceAtMostOne(a: string, b: string): boolean {
  if (Math.abs(a.length - b.length) > 1) return false;
  if (a === b) return true;
  if (a.length === b.length) {
    let i = 0;
    while (a[i] === b[i]) i++;
    if (a.slice(i + 1) === b.slice(i + 1)) return true; // substitution
    return a[i] === b[i + 1] && a[i + 1] === b[i] && a.slice(i + 2) === b.slice(i + 2); // transposition
  }
  const [s, l] = a.length < b.length ? [a, b] : [b, a];
  let i = 0;
  while (i < s.length && s[i] === l[i]) i++;
  return s.slice(i) === l.slice(i + 1);
}

function describeCandidate(spelling: string): string {
  const def = UNITS.get(spelling);
  return def !== undefined && def.prefixName !== '' ? `\`${spelling}\` (${def.prefixName})` : `\`${spelling}\``;
}

function suggestionText(cands: readonly string[]): string {
  const shown = cands.slice(0, 3).map(cands.length > 1 ? describeCandidate : (s: string) => `\`${s}\``);
  return `did you mean ${shown.length > 1 ? shown.slice(0, -1).join(', ') + ' or ' + shown[shown.length - 1] : shown[0]}?`;
}

function suggest(unit: string, kind: Kind): string[] {
  const confusable = CONFUSABLES.get(unit);
  if (confusable !== undefined) return [confusable];
  const lower = UNITS_BY_LOWER.get(unit.toLowerCase());
  if (lower !== undefined) {
    const inKind = lower.filter((s) => UNITS.get(s)!.kind === kind);
    const pool = inKind.length > 0 ? inKind : [...lower];
    return pool.sort((a, b) => caseDifferences(unit, a) - caseDifferences(unit, b));
  }
  // One-letter typos only for inputs of three or more characters: in `kg` one
  // letter is half the unit, and `kF` would be a guess, not a correction.
  if (unit.length < 3) return [];
  const near: string[] = [];
  for (const s of UNITS_BY_KIND.get(kind) ?? []) {
    if (s.length >= 2 && distanceAtMostOne(unit, s)) near.push(s);
  }
  return near;
}

/** Same letters in another case, valid for `kind` (`us` → `uS` for a conductance). */
function caseVariantInKind(unit: string, kind: Kind): string | undefined {
  const lower = UNITS_BY_LOWER.get(unit.toLowerCase());
  if (lower === undefined) return undefined;
  const inKind = lower.filter((s) => s !== unit && UNITS.get(s)!.kind === kind);
  inKind.sort((a, b) => caseDifferences(unit, a) - caseDifferences(unit, b));
  return inKind[0];
}

// ---------------------------------------------------------------------------
// Values

function sigDigitsOf(intDigits: string, fracDigits: string): number {
  const all = (intDigits + fracDigits).replace(LEADING_ZEROS_RE, '');
  return all.length === 0 ? 1 : all.length;
}

/** The written number times 10^shift, correctly rounded once. */
function decimalValue(s: Scanned, shift: number): number {
  const e = s.exp + shift;
  const v = Number(`${s.negative ? '-' : ''}${s.intDigits || '0'}.${s.fracDigits || '0'}e${e}`);
  return v + 0; // -0 → 0
}

function isZeroDigits(s: Scanned): boolean {
  return !NONZERO_DIGIT_RE.test(s.intDigits + s.fracDigits);
}

function garbage(text: string, s: Scanned): Failure {
  const at = s.restStart;
  const bad = firstToken(text, at);
  const before = text.slice(s.numStart, s.unitEnd > s.numEnd ? s.unitEnd : s.numEnd);
  if (bad.startsWith('\u00b1') || bad.startsWith('+/-')) {
    return fail(`unexpected tolerance \`${clip(text.slice(at).trim())}\` after \`${clip(before)}\`; a tolerance is only accepted where a range is allowed`, at);
  }
  return fail(`unexpected \`${bad}\` after \`${clip(before)}\``, at);
}

function parseText(text: string, kind: Kind): ParseResult {
  const s = scan(text);
  if (!s.ok) {
    if (s.message === 'empty value') return fail(`empty value; expected ${expectation(kind)}`, 0);
    return s;
  }
  let def: UnitDef | undefined;
  if (s.unit === '') {
    if (kind !== 'ratio') {
      return fail(`expected ${expectation(kind)}; \`${clip(s.numberText)}\` has no unit`, s.numEnd);
    }
  } else {
    def = UNITS.get(s.unit);
    if (def === undefined) {
      const spaced = spacedQuotient(text, s.unitStart);
      if (spaced !== undefined) {
        return fail(`no spaces inside a unit: write \`${spaced}\``, s.unitStart, spaced);
      }
      if (PREFIX_SPELLINGS.has(s.unit)) {
        return fail(`\`${s.unit}\` is a prefix without a unit; expected ${expectation(kind)}`, s.unitStart);
      }
      const cands = suggest(s.unit, kind);
      if (cands.length > 0) {
        return fail(`unknown unit \`${clip(s.unit)}\` (${suggestionText(cands)}); expected ${expectation(kind)}`, s.unitStart, cands[0]);
      }
      return fail(`unknown unit \`${clip(s.unit)}\`; expected ${expectation(kind)}`, s.unitStart);
    }
    if (def.kind !== kind) {
      const spaced = spacedQuotient(text, s.unitStart);
      if (spaced !== undefined && UNITS.get(spaced)?.kind === kind) {
        return fail(`no spaces inside a unit: write \`${spaced}\``, s.unitStart, spaced);
      }
      const written = text.slice(s.numStart, s.unitEnd);
      const variant = caseVariantInKind(s.unit, kind);
      const msg = `expected ${expectation(kind)}; \`${clip(written)}\` is ${KIND_NOUN[def.kind]}`;
      return variant === undefined ? fail(msg, s.unitStart) : fail(`${msg} (did you mean \`${variant}\`?)`, s.unitStart, variant);
    }
  }
  if (s.restStart >= 0) {
    const spaced = spacedQuotient(text, s.unitStart);
    if (spaced !== undefined && UNITS.get(spaced)?.kind === kind) {
      return fail(`no spaces inside a unit: write \`${spaced}\``, s.unitStart, spaced);
    }
    return garbage(text, s);
  }

  const style: Written['style'] = def === undefined ? 'bare' : def.style;
  let value: number;
  let scale = 1;
  switch (style) {
    case 'si':
      value = decimalValue(s, def!.exp10);
      scale = Number(`1e${def!.exp10}`);
      break;
    case 'rad/s':
      value = decimalValue(s, def!.exp10) / TWO_PI;
      scale = Number(`1e${def!.exp10}`) / TWO_PI;
      break;
    case 'percent':
      value = decimalValue(s, -2);
      break;
    case 'V/V': {
      const n = decimalValue(s, 0);
      if (n === 0 && !isZeroDigits(s)) {
        return fail(`\`${clip(s.numberText)}\` is out of range (too small to represent)`, s.numStart);
      }
      if (!(n > 0)) {
        return fail(`a gain in V/V must be positive to be expressed in dB; got \`${clip(s.numberText)}\``, s.numStart);
      }
      value = 20 * Math.log10(n);
      break;
    }
    default:
      value = decimalValue(s, 0);
  }
  if (!Number.isFinite(value)) {
    return fail(`\`${clip(s.numberText)}\` is out of range (not a finite number)`, s.numStart);
  }
  if (value === 0 && style !== 'V/V' && !isZeroDigits(s)) {
    return fail(`\`${clip(s.numberText)}\` is out of range (too small to represent)`, s.numStart);
  }
  return {
    ok: true,
    quantity: {
      value,
      kind,
      written: {
        text: s.trimmed,
        number: s.numberText,
        unit: s.unit,
        style,
        scale,
        sigDigits: sigDigitsOf(s.intDigits, s.fracDigits),
        decimals: s.fracDigits.length,
      },
    },
  };
}

/** `V / µs` written with spaces → `V/µs` when that is a unit we know. */
function spacedQuotient(text: string, unitStart: number): string | undefined {
  const m = SPACED_QUOTIENT_RE.exec(text.slice(unitStart));
  if (m === null || m[0].indexOf('/') < 0 || !WHITESPACE_RE.test(m[0])) return undefined;
  const joined = `${m[1]}/${m[2]}`;
  return UNITS.has(joined) ? joined : undefined;
}

function coerce(text: unknown): string | undefined {
  if (typeof text === 'string') return text;
  if (typeof text === 'number') return String(text);
  return undefined;
}

/**
 * Parse a written value as a quantity of `kind`. Never throws. Numbers are
 * accepted too (`0.5` from a YAML layer that already converted the scalar).
 */
export function parseQuantity(text: string | number, kind: Kind): ParseResult {
  const t = coerce(text);
  if (t === undefined) return fail(`expected ${expectation(kind)} written as text`, 0);
  return parseText(t, kind);
}

/** Which kind a well-formed quantity text belongs to; undefined when bare or unknown. */
export function detectKind(text: string): Kind | undefined {
  const t = coerce(text);
  if (t === undefined) return undefined;
  const s = scan(t);
  if (!s.ok || s.unit === '' || s.restStart >= 0) return undefined;
  return UNITS.get(s.unit)?.kind;
}

// ---------------------------------------------------------------------------
// Tolerances: `180 µS ±15%`, `180 µS +/-15%`, `180 µS ± 15 %`

export function parseTolerance(
  text: string,
  kind: Kind,
):
  | { ok: true; typ: Quantity; min: Quantity; max: Quantity; pct: number }
  | { ok: false; message: string; offset: number }
  | null {
  const t = coerce(text);
  if (t === undefined) return null;
  const a = t.indexOf('\u00b1');
  const b = t.indexOf('+/-');
  let at: number;
  let markLen: number;
  if (a >= 0 && (b < 0 || a < b)) {
    at = a;
    markLen = 1;
  } else if (b >= 0) {
    at = b;
    markLen = 3;
  } else {
    return null;
  }
  const typR = parseText(t.slice(0, at), kind);
  if (!typR.ok) {
    if (t.slice(0, at).trim() === '') return { ok: false, message: `expected a typical value before the tolerance; ${expectation(kind)}`, offset: skipSpace(t, 0) };
    return { ok: false, message: typR.message, offset: typR.offset };
  }
  const typ = typR.quantity;
  let i = skipSpace(t, at + markLen);
  if (t[i] === '+' || t[i] === '-' || t[i] === '\u2212') {
    return { ok: false, message: 'a tolerance takes no sign: write `±15%`', offset: i };
  }
  const m = UNSIGNED_NUMBER_RE.exec(t.slice(i));
  if (m === null) return { ok: false, message: 'expected a percentage after `±`, e.g. `±15%`', offset: i };
  const pctStart = i;
  const pct = Number(m[0].replace('\u2212', '-'));
  i = skipSpace(t, i + m[0].length);
  if (t[i] !== '%') {
    return { ok: false, message: 'a tolerance must be a percentage, e.g. `±15%`', offset: i };
  }
  i = skipSpace(t, i + 1);
  if (i < t.length) return { ok: false, message: `unexpected \`${firstToken(t, i)}\` after the tolerance`, offset: i };
  if (!Number.isFinite(pct) || pct > 100) {
    return { ok: false, message: `a tolerance of \`${m[0]}%\` is out of range (0 to 100%)`, offset: pctStart };
  }
  let lo: number;
  let hi: number;
  if (typ.written.style === 'V/V') {
    if (pct >= 100) return { ok: false, message: `a tolerance of \`${m[0]}%\` on a V/V gain must be below 100%`, offset: pctStart };
    const n = 10 ** (typ.value / 20);
    lo = 20 * Math.log10(n * (1 - pct / 100));
    hi = 20 * Math.log10(n * (1 + pct / 100));
  } else {
    lo = typ.value * (1 - pct / 100);
    hi = typ.value * (1 + pct / 100);
    if (lo > hi) [lo, hi] = [hi, lo];
  }
  return { ok: true, typ, min: derived(lo, typ), max: derived(hi, typ), pct };
}

function derived(value: number, typ: Quantity): Quantity {
  const text = formatLike(value, typ.written, typ.kind);
  const r = parseText(text, typ.kind);
  return { value, kind: typ.kind, written: r.ok ? r.quantity.written : typ.written };
}

// ---------------------------------------------------------------------------
// Error-path diagnosis with mathjs (loaded lazily)

type MathModule = typeof import('mathjs');
let mathLoading: Promise<MathModule> | undefined;
let references: Array<[string, import('mathjs').Unit]> | undefined;

const REFERENCE_UNITS: ReadonlyArray<readonly [string, string]> = [
  ['a mass', 'kg'],
  ['a length', 'm'],
  ['a time', 's'],
  ['a current', 'A'],
  ['a temperature', 'K'],
  ['a luminous intensity', 'cd'],
  ['an amount of substance', 'mol'],
  ['an angle', 'rad'],
  ['an amount of information', 'bit'],
  ['a frequency', 'Hz'],
  ['an angular frequency', 'rad/s'],
  ['a speed', 'm/s'],
  ['an acceleration', 'm/s^2'],
  ['an area', 'm^2'],
  ['a volume', 'm^3'],
  ['a force', 'N'],
  ['an energy', 'J'],
  ['a power', 'W'],
  ['a pressure', 'Pa'],
  ['an electric charge', 'C'],
  ['a voltage', 'V'],
  ['a resistance', 'ohm'],
  ['a conductance', 'S'],
  ['a capacitance', 'F'],
  ['an inductance', 'H'],
  ['a magnetic flux', 'Wb'],
  ['a magnetic flux density', 'T'],
  ['a slew rate', 'V/s'],
];

/**
 * Name the dimension of a unit polecheck does not accept, e.g. `kg` → 'a mass',
 * `m/s` → 'a speed'. Loads mathjs on first use; meant for error messages only.
 * Units polecheck accepts are named from its own table without loading mathjs.
 */
export async function describeUnknownUnit(unitText: string): Promise<string | undefined> {
  if (typeof unitText !== 'string') return undefined;
  const t = unitText.trim();
  if (t === '' || t.length > 64) return undefined;
  const own = UNITS.get(t);
  if (own !== undefined) return KIND_NOUN[own.kind];
  if (!UNITISH_RE.test(t)) return undefined;
  const normalized = t.replace(MICRO_RE, 'u').replace(OHM_RE, 'ohm').replace(MIDDLE_DOT_RE, ' ');
  let math: MathModule;
  try {
    math = await (mathLoading ??= import('mathjs'));
  } catch {
    return undefined;
  }
  let u: import('mathjs').Unit;
  try {
    u = math.unit(1, normalized);
  } catch {
    return undefined;
  }
  references ??= REFERENCE_UNITS.map(([noun, name]) => [noun, math.unit(1, name)] as [string, import('mathjs').Unit]);
  for (const [noun, ref] of references) {
    if (u.equalBase(ref)) return noun;
  }
  if (u.dimensions.every((d) => d === 0)) return 'a dimensionless quantity';
  return `a quantity in ${u.toSI().formatUnits()}`;
}
