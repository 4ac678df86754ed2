// Units, prefixes and kinds accepted in polecheck spec documents.
//
// Everything here is built once at module load into plain lookup tables so
// that parsing a value is a couple of Map look-ups, never a regex compile.

export type Kind =
  | 'conductance'
  | 'resistance'
  | 'capacitance'
  | 'current'
  | 'voltage'
  | 'time'
  | 'frequency'
  | 'gain'
  | 'angle'
  | 'slew'
  | 'ratio'
  | 'noise'
  | 'power'
  | 'temperature'
  | 'fom';

export const KINDS: readonly Kind[] = [
  'conductance',
  'resistance',
  'capacitance',
  'current',
  'voltage',
  'time',
  'frequency',
  'gain',
  'angle',
  'slew',
  'ratio',
  'noise',
  'power',
  'temperature',
  'fom',
];

/** Canonical unit of each kind; `Quantity.value` is expressed in it. */
export const CANONICAL_UNIT: Record<Kind, string> = {
  conductance: 'S',
  resistance: 'Ω', // U+03A9
  capacitance: 'F',
  current: 'A',
  voltage: 'V',
  time: 's',
  frequency: 'Hz',
  gain: 'dB',
  angle: 'deg',
  slew: 'V/s',
  ratio: '',
  noise: 'V/\u221aHz',
  power: 'W',
  temperature: 'K',
  // GBW·CL/I in the units the trade quotes it in (1 MHz·pF/mA = 10⁻³ V⁻¹).
  fom: 'MHz\u00b7pF/mA',
};

/** How the canonical unit is shown to people (angle: `°`). */
export const DISPLAY_UNIT: Record<Kind, string> = {
  ...CANONICAL_UNIT,
  angle: '°',
};

export const KIND_NOUN: Record<Kind, string> = {
  conductance: 'a conductance',
  resistance: 'a resistance',
  capacitance: 'a capacitance',
  current: 'a current',
  voltage: 'a voltage',
  time: 'a time',
  frequency: 'a frequency',
  gain: 'a gain',
  angle: 'an angle',
  slew: 'a slew rate',
  ratio: 'a dimensionless ratio',
  noise: 'a noise density',
  power: 'a power',
  temperature: 'a temperature',
  fom: 'a figure of merit',
};

export const KIND_EXAMPLE: Record<Kind, string> = {
  conductance: '180 µS',
  resistance: '2.2 MΩ',
  capacitance: '1.2 pF',
  current: '10 µA',
  voltage: '1.8 V',
  time: '10 ns',
  frequency: '23 MHz',
  gain: '99 dB',
  angle: '60°',
  slew: '16 V/µs',
  ratio: '0.5',
  noise: '12 nV/√Hz',
  power: '1.5 mW',
  temperature: '300 K',
  fom: '250 MHz·pF/mA',
};

/** "a capacitance in F, e.g. `1.2 pF`" — the expectation part of messages. */
export function expectation(kind: Kind): string {
  if (kind === 'ratio') return 'a dimensionless ratio (a bare number or a percentage), e.g. `0.5` or `50%`';
  return `${KIND_NOUN[kind]} in ${DISPLAY_UNIT[kind]}, e.g. \`${KIND_EXAMPLE[kind]}\``;
}

// ---------------------------------------------------------------------------
// Prefixes

export interface Prefix {
  symbol: string;
  name: string;
  exp10: number;
}

/** Symbol prefixes. Micro has three spellings: U+00B5, U+03BC and ASCII `u`. */
export const SYMBOL_PREFIXES: readonly Prefix[] = [
  { symbol: 'f', name: 'femto', exp10: -15 },
  { symbol: 'p', name: 'pico', exp10: -12 },
  { symbol: 'n', name: 'nano', exp10: -9 },
  { symbol: '\u00b5', name: 'micro', exp10: -6 },
  { symbol: '\u03bc', name: 'micro', exp10: -6 },
  { symbol: 'u', name: 'micro', exp10: -6 },
  { symbol: 'm', name: 'milli', exp10: -3 },
  { symbol: 'k', name: 'kilo', exp10: 3 },
  { symbol: 'M', name: 'mega', exp10: 6 },
  { symbol: 'G', name: 'giga', exp10: 9 },
  { symbol: 'T', name: 'tera', exp10: 12 },
];

/** Prefix used when formatting, by engineering exponent. */
export const FORMAT_PREFIX: ReadonlyMap<number, string> = new Map([
  [-15, 'f'],
  [-12, 'p'],
  [-9, 'n'],
  [-6, '\u00b5'],
  [-3, 'm'],
  [0, ''],
  [3, 'k'],
  [6, 'M'],
  [9, 'G'],
  [12, 'T'],
]);

const SPELLED_PREFIXES: readonly Prefix[] = [
  { symbol: 'femto', name: 'femto', exp10: -15 },
  { symbol: 'pico', name: 'pico', exp10: -12 },
  { symbol: 'nano', name: 'nano', exp10: -9 },
  { symbol: 'micro', name: 'micro', exp10: -6 },
  { symbol: 'milli', name: 'milli', exp10: -3 },
  { symbol: 'kilo', name: 'kilo', exp10: 3 },
  { symbol: 'mega', name: 'mega', exp10: 6 },
  { symbol: 'giga', name: 'giga', exp10: 9 },
  { symbol: 'tera', name: 'tera', exp10: 12 },
];

const NO_PREFIX: Prefix = { symbol: '', name: '', exp10: 0 };

/** Every prefix spelling (symbol or word), for "a prefix without a unit". */
export const PREFIX_SPELLINGS: ReadonlySet<string> = new Set([
  ...SYMBOL_PREFIXES.map((p) => p.symbol),
  ...SPELLED_PREFIXES.map((p) => p.symbol),
]);

// ---------------------------------------------------------------------------
// Unit table

export type UnitStyle = 'si' | 'dB' | 'V/V' | 'rad/s' | 'deg' | 'percent';

export interface UnitDef {
  /** Exact spelling as accepted, e.g. `µS`, `kV/ms`, `megohm`. */
  spelling: string;
  kind: Kind;
  style: UnitStyle;
  /**
   * Decimal exponent of the prefixes: the written number times 10^exp10 is the
   * value in the canonical unit (for style 'rad/s' additionally divided by 2π;
   * for 'percent' exp10 is -2).
   */
  exp10: number;
  /** Human name of the prefix(es), e.g. 'milli', 'kilo/milli'; '' when none. */
  prefixName: string;
}

const table = new Map<string, UnitDef>();

function add(def: UnitDef): void {
  // First definition wins; there are no genuine clashes, this only guards
  // against the three micro spellings producing the same string twice.
  if (!table.has(def.spelling)) table.set(def.spelling, def);
}

interface Base {
  symbols: readonly string[]; // take symbol prefixes
  words: readonly string[]; // take spelled-out prefixes (and symbol prefixes when listed in symbols too)
  kind: Kind;
}

const OHM_SYMBOLS = ['\u03a9', '\u2126', 'ohm', 'ohms'];

const BASES: readonly Base[] = [
  { kind: 'conductance', symbols: ['S'], words: ['siemens'] },
  { kind: 'resistance', symbols: OHM_SYMBOLS, words: ['ohm', 'ohms'] },
  { kind: 'capacitance', symbols: ['F'], words: ['farad', 'farads'] },
  { kind: 'frequency', symbols: ['Hz'], words: ['hertz'] },
  { kind: 'voltage', symbols: ['V'], words: ['volt', 'volts'] },
  { kind: 'current', symbols: ['A'], words: ['amp', 'amps', 'ampere', 'amperes'] },
  { kind: 'time', symbols: ['s'], words: ['second', 'seconds'] },
  { kind: 'power', symbols: ['W'], words: ['watt', 'watts'] },
  // An rms voltage (integrated noise) is written with its rms mark: `20 µVrms`.
  { kind: 'voltage', symbols: ['Vrms'], words: [] },
];

for (const base of BASES) {
  for (const sym of base.symbols) {
    for (const p of [NO_PREFIX, ...SYMBOL_PREFIXES]) {
      add({ spelling: p.symbol + sym, kind: base.kind, style: 'si', exp10: p.exp10, prefixName: p.name });
    }
  }
  for (const word of base.words) {
    add({ spelling: word, kind: base.kind, style: 'si', exp10: 0, prefixName: '' });
    for (const p of SPELLED_PREFIXES) {
      add({ spelling: p.symbol + word, kind: base.kind, style: 'si', exp10: p.exp10, prefixName: p.name });
    }
  }
}
// The customary elided spellings of prefixed ohms.
for (const [word, exp10, name] of [
  ['kilohm', 3, 'kilo'],
  ['megohm', 6, 'mega'],
  ['gigohm', 9, 'giga'],
] as const) {
  add({ spelling: word, kind: 'resistance', style: 'si', exp10, prefixName: name });
  add({ spelling: word + 's', kind: 'resistance', style: 'si', exp10, prefixName: name });
}

// Quotients: prefixes allowed on numerator and denominator.
function addQuotient(num: string, den: string, kind: Kind, style: UnitStyle, denSign: number): void {
  for (const pn of [NO_PREFIX, ...SYMBOL_PREFIXES]) {
    for (const pd of [NO_PREFIX, ...SYMBOL_PREFIXES]) {
      const names = [pn.name, pd.name].filter((n) => n !== '').join('/');
      add({
        spelling: `${pn.symbol}${num}/${pd.symbol}${den}`,
        kind,
        style,
        exp10: pn.exp10 - denSign * pd.exp10,
        prefixName: names,
      });
    }
  }
}
addQuotient('A', 'V', 'conductance', 'si', 1);
addQuotient('V', 's', 'slew', 'si', 1);
addQuotient('rad', 's', 'frequency', 'rad/s', 1);

// Noise densities: a prefixed volt over the root of a hertz, in the three
// spellings datasheets use (`nV/√Hz`, `nV/rtHz`, `nV/sqrt(Hz)`).
for (const root of ['\u221aHz', 'rtHz', 'sqrt(Hz)']) {
  for (const p of [NO_PREFIX, ...SYMBOL_PREFIXES]) add({ spelling: `${p.symbol}V/${root}`, kind: 'noise', style: 'si', exp10: p.exp10, prefixName: p.name });
}
// Absolute temperature, in kelvin only: a Celsius scale would need an offset, not a factor.
add({ spelling: 'K', kind: 'temperature', style: 'si', exp10: 0, prefixName: '' });
add({ spelling: 'kelvin', kind: 'temperature', style: 'si', exp10: 0, prefixName: '' });
// The amplifier figure of merit GBW·CL/I, in its customary unit only.
for (const dot of ['\u00b7', '*']) add({ spelling: `MHz${dot}pF/mA`, kind: 'fom', style: 'si', exp10: 0, prefixName: '' });

add({ spelling: 'dB', kind: 'gain', style: 'dB', exp10: 0, prefixName: '' });
add({ spelling: 'V/V', kind: 'gain', style: 'V/V', exp10: 0, prefixName: '' });
add({ spelling: 'deg', kind: 'angle', style: 'deg', exp10: 0, prefixName: '' });
add({ spelling: '\u00b0', kind: 'angle', style: 'deg', exp10: 0, prefixName: '' });
add({ spelling: '%', kind: 'ratio', style: 'percent', exp10: -2, prefixName: '' });

/** All accepted unit spellings. */
export const UNITS: ReadonlyMap<string, UnitDef> = table;

/** Lower-cased spelling → accepted spellings, for case-slip suggestions. */
export const UNITS_BY_LOWER: ReadonlyMap<string, readonly string[]> = (() => {
  const m = new Map<string, string[]>();
  for (const s of table.keys()) {
    const k = s.toLowerCase();
    const list = m.get(k);
    if (list) list.push(s);
    else m.set(k, [s]);
  }
  return m;
})();

/** Accepted spellings grouped by kind (for near-miss suggestions). */
export const UNITS_BY_KIND: ReadonlyMap<Kind, readonly string[]> = (() => {
  const m = new Map<Kind, string[]>();
  for (const k of KINDS) m.set(k, []);
  for (const d of table.values()) m.get(d.kind)!.push(d.spelling);
  return m;
})();

/** Well-known look-alikes that are not a case slip or a one-letter typo. */
export const CONFUSABLES: ReadonlyMap<string, string> = new Map([
  ['\u00ba', '\u00b0'], // masculine ordinal indicator for degree sign
  ['\u02da', '\u00b0'], // ring above
  ['degree', 'deg'],
  ['degrees', 'deg'],
]);
