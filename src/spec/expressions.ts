// Expressions in params, conditions and design quantities: `2 * i1 / vov1`,
// `ro2 ∥ ro4`, `sqrt(2 * i1 * k1)`. Parsed by mathjs (its parser only, built
// from the parse factory in its own chunk and loaded on the first expression
// of a run), then compiled here from a whitelist of node types into a plain
// function over SI numbers, with the dimension checked at every node. Nothing
// mathjs can evaluate is ever called: no evaluate, import, createUnit,
// function definitions, assignments, property access or matrices; any node
// outside the whitelist is an error at its place.

import { createRequire } from 'node:module';
import { KIND_NOUN, type Kind, UNITS } from '../quantity';

// ---------------------------------------------------------------------------
// Dimensions: exponents of ampere, volt and second, enough for every quantity
// of a small-signal model (S = A/V, Ω = V/A, F = A·s/V, Hz = 1/s, W = V·A).

export type Dims = readonly [number, number, number];

export const DIMENSIONLESS: Dims = [0, 0, 0];

export const KIND_DIMS: Partial<Record<Kind, Dims>> = {
  conductance: [1, -1, 0],
  resistance: [-1, 1, 0],
  capacitance: [1, -1, 1],
  current: [1, 0, 0],
  voltage: [0, 1, 0],
  time: [0, 0, 1],
  frequency: [0, 0, -1],
  slew: [0, 1, -1],
  ratio: [0, 0, 0],
  noise: [0, 1, 0.5],
  power: [1, 1, 0],
};

const sameDims = (a: Dims, b: Dims) => a[0] === b[0] && a[1] === b[1] && a[2] === b[2];

/** The kind a dimension is, if it is one polecheck names. */
export function kindOfDims(d: Dims): Kind | undefined {
  for (const [k, v] of Object.entries(KIND_DIMS) as Array<[Kind, Dims]>) if (sameDims(v, d)) return k;
  return undefined;
}

const KIND_WORD: Partial<Record<Kind, string>> = { ratio: 'dimensionless' };

/** "a conductance (A/V)", "dimensionless", "A·V²/s (no quantity polecheck names)". */
export function describeDims(d: Dims): string {
  const k = kindOfDims(d);
  const units = unitsOf(d);
  if (k) return KIND_WORD[k] ?? `${KIND_NOUN[k]} (${units})`;
  return units;
}


const SUPERSCRIPT: Record<string, string> = { '-': '⁻', '.': '·', 0: '⁰', 1: '¹', 2: '²', 3: '³', 4: '⁴', 5: '⁵', 6: '⁶', 7: '⁷', 8: '⁸', 9: '⁹' };

/** A dimension in base units: `A/V`, `1/V`, `V·s^0.5`. */
export function unitsOf(d: Dims): string {
  const names = ['A', 'V', 's'];
  const up: string[] = [];
  const down: string[] = [];
  d.forEach((e, i) => {
    if (e === 0) return;
    const mag = Math.abs(e);
    const p = mag === 1 ? names[i] : Number.isInteger(mag) ? names[i] + [...String(mag)].map((c) => SUPERSCRIPT[c] ?? c).join('') : `${names[i]}^${mag}`;
    (e > 0 ? up : down).push(p);
  });
  if (!up.length && !down.length) return '1';
  return `${up.length ? up.join('·') : '1'}${down.length ? `/${down.join('·')}` : ''}`;
}

// ---------------------------------------------------------------------------
// Normalisation: one linear scan, with a map from each output character to
// its offset in the text as written (for error places).

export interface Normalised {
  text: string;
  /** Offset in the written text of each character of `text`; one more entry for the end. */
  map: number[];
  /** A lone `|`: not an operator here. */
  error?: { offset: number; message: string };
}

const MICRO = new Set(['\u00b5', '\u03bc']);
const OHM = new Set(['\u03a9', '\u2126']);

export function normalise(written: string): Normalised {
  let text = '';
  const map: number[] = [];
  const put = (s: string, at: number) => {
    text += s;
    for (let k = 0; k < s.length; k++) map.push(at);
  };
  for (let i = 0; i < written.length; i++) {
    const ch = written[i];
    if (MICRO.has(ch)) put('u', i);
    else if (OHM.has(ch)) put('ohm', i);
    else if (ch === '\u2212') put('-', i);
    else if (ch === '\u00b7' || ch === '\u00d7' || ch === '\u22c5') put('*', i);
    else if (ch === '\u2225') put('|', i);
    else if (ch === '|') {
      if (written[i + 1] === '|') {
        put('|', i);
        put(' ', i + 1);
        i++;
      } else {
        map.push(written.length);
        return { text, map, error: { offset: i, message: 'a single `|` is not an operator; the parallel combination is `∥` or `||` (`ro2 ∥ ro4`)' } };
      }
    } else put(ch, i);
  }
  map.push(written.length);
  return { text, map };
}

// ---------------------------------------------------------------------------
// The parser, loaded once, on the first expression of a run.

interface MathNode {
  type: string;
  [k: string]: unknown;
}
type ParseFn = (text: string) => MathNode;

// scripts/build.mjs defines this as the chunk's file name beside the bundle.
declare const POLECHECK_EXPR_CHUNK: string | undefined;

let parser: ParseFn | undefined;
/** How many times the parser was loaded in this process (0 for a run without expressions); for tests and the cold-start bench. */
export let parserLoads = 0;

function mathParse(): ParseFn {
  if (parser) return parser;
  const req = createRequire(import.meta.url);
  parserLoads++;
  if (typeof POLECHECK_EXPR_CHUNK === 'string') {
    parser = (req(POLECHECK_EXPR_CHUNK) as { parse: ParseFn }).parse;
  } else {
    // From the sources (tests): the same factories, from the package.
    const m = req('mathjs') as { create: (f: object, c: object) => { parse: ParseFn }; parseDependencies: object };
    parser = m.create({ parseDependencies: m.parseDependencies }, {}).parse;
  }
  return parser;
}

// ---------------------------------------------------------------------------
// Compilation.

/** The names an expression may read, with their dimensions. */
export interface Scope {
  dims(name: string): { dims: Dims; hz: boolean } | undefined;
  /** Every name, for "did you mean". */
  names(): string[];
}

export type Compute = (values: Record<string, number>) => number;

export interface Compiled {
  compute: Compute;
  dims: Dims;
  /** A hertz took part (a unit or a frequency read): a 1/s result is in Hz, not rad/s. */
  hz: boolean;
  /** Names read, in order of first use, each with its offset in the written text. */
  uses: Array<{ name: string; offset: number }>;
  /** Constant: reads no name. */
  constant: boolean;
}

export interface ExpressionError {
  /** Offset in the written text. */
  offset: number;
  message: string;
  hint?: string;
}

export const FUNCTIONS = ['sqrt', 'min', 'max', 'abs'] as const;

/** Names an expression understands as units (polecheck's own table, plus `rad`). */
export function unitOf(name: string): { value: number; dims: Dims; hz: boolean } | undefined {
  if (name === 'rad') return { value: 1, dims: DIMENSIONLESS, hz: false };
  const u = UNITS.get(name);
  if (!u || u.style !== 'si') return undefined;
  const dims = KIND_DIMS[u.kind];
  if (!dims || u.kind === 'noise') return undefined;
  return { value: 10 ** u.exp10, dims, hz: u.kind === 'frequency' };
}

/** Whether a name would shadow a unit or a function of expressions; the reason if so. */
export function shadows(name: string): string | undefined {
  if (unitOf(name) || UNITS.has(name)) return `\`${name}\` is a unit; a quantity of that name would shadow it in expressions (\`2 ${name}\`): rename it`;
  if ((FUNCTIONS as readonly string[]).includes(name)) return `\`${name}\` is a function of expressions; rename the quantity`;
  return undefined;
}

// SPICE's scale suffixes, case-insensitive: the classic slip is `M`, milli there.
const SPICE_SUFFIX: Record<string, [string, number]> = { t: ['T', 12], g: ['G', 9], meg: ['M', 6], k: ['k', 3], m: ['m', -3], u: ['µ', -6], mil: ['', 25.4e-6], n: ['n', -9], p: ['p', -12], f: ['f', -15] };

/**
 * `2meg`, `10k`, `1.5p`, `2M` as a value: the hint to write it with an SI
 * prefix and the unit, or undefined when the text is not a SPICE number.
 */
export function spiceHint(text: string, unit: string): { message: string; write: string } | undefined {
  const t = text.trim();
  let i = 0;
  if (t[i] === '+' || t[i] === '-') i++;
  const numStart = i;
  while (i < t.length && ((t[i] >= '0' && t[i] <= '9') || t[i] === '.')) i++;
  if (i === numStart) return undefined;
  const number = t.slice(0, i);
  while (t[i] === ' ') i++;
  let j = i;
  while (j < t.length && /[A-Za-z]/.test(t[j])) j++;
  if (j !== t.length || j === i) return undefined;
  const letters = t.slice(i, j);
  const lower = letters.toLowerCase();
  const key = lower.startsWith('meg') ? 'meg' : lower.startsWith('mil') ? 'mil' : lower[0];
  const suffix = SPICE_SUFFIX[key];
  // Only a bare scale: letters after it (`1.2 MHz`, a unit of the wrong dimension) are no SPICE habit.
  if (!suffix || key === 'mil' || letters.length !== key.length) return undefined;
  const write = `${number} ${suffix[0]}${unit}`;
  if (key === 'm') {
    return { message: `\`${t}\` looks like SPICE notation, where \`${letters[0]}\` means milli in either case (mega is \`meg\`); write \`${number} m${unit}\` for milli or \`${number} M${unit}\` for mega`, write: `${number} M${unit}` };
  }
  return { message: `\`${t}\` looks like SPICE notation; write \`${write}\``, write };
}

class Fail extends Error {
  constructor(readonly at: ExpressionError) {
    super(at.message);
  }
}

/** Where a name or symbol first stands in the normalised text as a whole token, mapped back to the written text. */
function locate(n: Normalised, token: string, wholeWord: boolean): number {
  let from = 0;
  for (;;) {
    const i = n.text.indexOf(token, from);
    if (i < 0) return 0;
    const before = n.text[i - 1];
    const after = n.text[i + token.length];
    const word = (c: string | undefined) => c !== undefined && /[A-Za-z0-9_]/.test(c);
    if (!wholeWord || (!word(before) && !word(after))) return n.map[i];
    from = i + 1;
  }
}

const NODE_WORDS: Record<string, [string, string]> = {
  AccessorNode: ['property access or indexing', '.'],
  IndexNode: ['indexing', '['],
  ArrayNode: ['matrices and lists', '['],
  AssignmentNode: ['assignment', '='],
  FunctionAssignmentNode: ['function definitions', '='],
  BlockNode: ['several statements', ';'],
  ConditionalNode: ['conditionals', '?'],
  ObjectNode: ['objects', '{'],
  RangeNode: ['ranges', ':'],
  RelationalNode: ['comparisons', '<'],
};

const OPS: Record<string, string> = { add: '+', subtract: '-', multiply: '*', divide: '/', pow: '^', unaryMinus: '-', unaryPlus: '+', bitOr: '∥' };

/**
 * Parses and compiles one expression as written. `scope` gives the names it
 * may read. Throws nothing: an error comes back with its offset in `written`.
 */
export function compile(written: string, scope: Scope): { ok: true; compiled: Compiled } | { ok: false; error: ExpressionError } {
  const n = normalise(written);
  if (n.error) return { ok: false, error: n.error };
  let root: MathNode;
  try {
    root = mathParse()(n.text);
  } catch (err) {
    const e = err as { char?: number; message?: string };
    const at = typeof e.char === 'number' ? (n.map[Math.min(e.char, n.map.length - 1)] ?? 0) : 0;
    const msg = String(e.message ?? err).replace(/ \(char \d+\)$/, '');
    return { ok: false, error: { offset: at, message: `cannot read the expression: ${msg}` } };
  }
  const uses: Compiled['uses'] = [];
  let hz = false;
  interface C {
    f: Compute;
    dims: Dims;
    /** The value when the node reads no name. */
    k?: number;
  }
  const fail = (offset: number, message: string, hint?: string): never => {
    throw new Fail({ offset, message, ...(hint ? { hint } : {}) });
  };
  const show = (node: MathNode) => `\`${String((node as { toString(): string }).toString())}\``;
  const constant = (v: number, dims: Dims): C => ({ f: () => v, dims, k: v });

  const walk = (node: MathNode): C => {
    switch (node.type) {
      case 'ParenthesisNode':
        return walk(node.content as MathNode);
      case 'ConstantNode': {
        const v = node.value;
        if (typeof v !== 'number' || !Number.isFinite(v)) fail(locate(n, typeof v === 'string' ? '"' : String(v), false), typeof v === 'string' ? 'text in quotes is not a value; an expression holds numbers, units and names' : `\`${String(v)}\` is not a number`);
        return constant(v as number, DIMENSIONLESS);
      }
      case 'SymbolNode': {
        const name = node.name as string;
        const own = scope.dims(name);
        if (own) {
          if (!uses.some((u) => u.name === name)) uses.push({ name, offset: locate(n, name, true) });
          if (own.hz) hz = true;
          return { f: (vals) => vals[name], dims: own.dims };
        }
        const unit = unitOf(name);
        if (unit) {
          if (unit.hz) hz = true;
          return constant(unit.value, unit.dims);
        }
        const spice = SPICE_SUFFIX[name.toLowerCase().startsWith('meg') ? 'meg' : name.toLowerCase()];
        if (spice && name.toLowerCase() !== 'mil') fail(locate(n, name, false), `\`${name}\` after a number looks like SPICE notation${/^m$/i.test(name) ? ', where `m` and `M` both mean milli (mega is `meg`)' : ''}; write an SI prefix with the unit, e.g. \`2 ${spice[0]}Ω\``);
        const near = nearestName(name, scope.names());
        return fail(locate(n, name, true), `unknown name \`${name}\`: not a design quantity, param or condition of this spec, nor a unit${near ? `; did you mean \`${near}\`?` : ''}`, near);
      }
      case 'OperatorNode': {
        const fn = node.fn as string;
        const args = node.args as MathNode[];
        const op = OPS[fn];
        if (!op) fail(locate(n, String(node.op), false), `the operator \`${String(node.op)}\` is not available; expressions use + - * / ^, parentheses, ∥ and ${FUNCTIONS.join(', ')}`);
        if (fn === 'unaryMinus' || fn === 'unaryPlus') {
          const a = walk(args[0]);
          if (fn === 'unaryPlus') return a;
          return a.k !== undefined ? constant(-a.k, a.dims) : { f: (v) => -a.f(v), dims: a.dims };
        }
        if (fn === 'bitOr') {
          for (const side of args) {
            if (side.type === 'OperatorNode' && ['add', 'subtract', 'multiply', 'divide'].includes(side.fn as string)) {
              fail(locate(n, '|', false), `write parentheses around ${show(side)} beside ∥: whether ∥ binds before or after ${OPS[side.fn as string]} is read differently by different people`);
            }
          }
        }
        const a = walk(args[0]);
        const b = walk(args[1]);
        const both = a.k !== undefined && b.k !== undefined;
        let out: C;
        switch (fn) {
          case 'add':
          case 'subtract':
          case 'bitOr': {
            if (!sameDims(a.dims, b.dims)) fail(0, `${show(node)}: ${fn === 'bitOr' ? 'the parallel combination of' : fn === 'add' ? 'adding' : 'subtracting'} ${describeDims(a.dims)} and ${describeDims(b.dims)} has no meaning`);
            const f: Compute = fn === 'add' ? (v) => a.f(v) + b.f(v) : fn === 'subtract' ? (v) => a.f(v) - b.f(v) : (v) => parallel(a.f(v), b.f(v));
            out = { f, dims: a.dims };
            break;
          }
          case 'multiply':
            out = { f: (v) => a.f(v) * b.f(v), dims: [a.dims[0] + b.dims[0], a.dims[1] + b.dims[1], a.dims[2] + b.dims[2]] };
            break;
          case 'divide':
            out = { f: (v) => a.f(v) / b.f(v), dims: [a.dims[0] - b.dims[0], a.dims[1] - b.dims[1], a.dims[2] - b.dims[2]] };
            break;
          default: {
            // pow: a dimensionless exponent; a base with a dimension needs a constant one.
            if (!sameDims(b.dims, DIMENSIONLESS)) fail(0, `${show(node)}: the exponent must be a plain number, not ${describeDims(b.dims)}`);
            if (!sameDims(a.dims, DIMENSIONLESS) && b.k === undefined) fail(0, `${show(node)}: raising ${describeDims(a.dims)} to a power that is not a constant leaves its unit undefined`);
            const e = b.k ?? 1;
            out = { f: (v) => a.f(v) ** b.f(v), dims: [a.dims[0] * e, a.dims[1] * e, a.dims[2] * e] };
          }
        }
        if (both) return constant(out.f({}), out.dims);
        return out;
      }
      case 'FunctionNode': {
        const fnNode = node.fn as MathNode;
        const name = fnNode.type === 'SymbolNode' ? (fnNode.name as string) : '';
        const args = node.args as MathNode[];
        if (!(FUNCTIONS as readonly string[]).includes(name)) {
          const where = name ? locate(n, name, true) : locate(n, '(', false);
          fail(where, `${name ? `\`${name}\` is not a function expressions may use` : 'only a named function may be called'}; they may use ${FUNCTIONS.join(', ')}`);
        }
        const cs = args.map(walk);
        const at = locate(n, name, true);
        if ((name === 'sqrt' || name === 'abs') && cs.length !== 1) fail(at, `\`${name}\` takes one argument`);
        if ((name === 'min' || name === 'max') && cs.length < 2) fail(at, `\`${name}\` takes two or more arguments`);
        if (name === 'sqrt') {
          const a = cs[0];
          return { f: (v) => Math.sqrt(a.f(v)), dims: [a.dims[0] / 2, a.dims[1] / 2, a.dims[2] / 2], ...(a.k !== undefined ? { k: Math.sqrt(a.k) } : {}) };
        }
        if (name === 'abs') return { f: (v) => Math.abs(cs[0].f(v)), dims: cs[0].dims };
        for (const c of cs) if (!sameDims(c.dims, cs[0].dims)) fail(at, `${show(node)}: \`${name}\` compares ${describeDims(cs[0].dims)} with ${describeDims(c.dims)}`);
        const fs = cs.map((c) => c.f);
        return { f: name === 'min' ? (v) => Math.min(...fs.map((g) => g(v))) : (v) => Math.max(...fs.map((g) => g(v))), dims: cs[0].dims };
      }
      default: {
        const [what, token] = NODE_WORDS[node.type] ?? [`\`${node.type}\``, ''];
        return fail(token ? locate(n, token, false) : 0, `${what} ${what.endsWith('s') ? 'are' : 'is'} not available in expressions; they use + - * / ^, parentheses, ∥ and ${FUNCTIONS.join(', ')}`);
      }
    }
  };
  try {
    const c = walk(root);
    return { ok: true, compiled: { compute: c.f, dims: c.dims, hz, uses, constant: uses.length === 0 } };
  } catch (err) {
    if (err instanceof Fail) return { ok: false, error: err.at };
    if (err instanceof RangeError) return { ok: false, error: { offset: 0, message: 'the expression is nested too deeply' } };
    throw err;
  }
}

/** r1 ∥ r2 = r1·r2/(r1 + r2); an open (infinite) side leaves the other. */
export function parallel(a: number, b: number): number {
  if (a === Infinity) return b;
  if (b === Infinity) return a;
  return (a * b) / (a + b);
}

function nearestName(name: string, names: string[]): string | undefined {
  let best: string | undefined;
  let bestD = Infinity;
  for (const c of names) {
    const d = editDistance(name.toLowerCase(), c.toLowerCase());
    if (d < bestD) {
      best = c;
      bestD = d;
    }
  }
  return best !== undefined && bestD <= Math.max(1, Math.floor(name.length / 3)) ? best : undefined;
}

function editDistance(a: string, b: string): number {
  const prev = Array.from({ length: b.length + 1 }, (_, j) => j);
  for (let i = 1; i <= a.length; i++) {
    let diag = prev[0];
    prev[0] = i;
    for (let j = 1; j <= b.length; j++) {
      const t = prev[j];
      prev[j] = Math.min(prev[j] + 1, prev[j - 1] + 1, diag + (a[i - 1] === b[j - 1] ? 0 : 1));
      diag = t;
    }
  }
  return prev[b.length];
}

/**
 * Whether a value that does not read as a quantity should be read as an
 * expression: it holds an operator, a parenthesis or a parallel sign, or one
 * of the spec's names as a word. Other text keeps the quantity reader's error.
 */
export function looksLikeExpression(text: string, names: ReadonlySet<string>): boolean {
  for (let i = 0; i < text.length; i++) {
    const ch = text[i];
    if (ch === '*' || ch === '/' || ch === '^' || ch === '(' || ch === ')' || ch === '+' || ch === '\u2225' || ch === '|' || ch === '\u00b7' || ch === '\u00d7') return true;
    if ((ch === '-' || ch === '\u2212') && text.slice(0, i).trim() !== '') {
      // Not an exponent's sign (`1e-6`), and not between digits (`2001-12-14`, a date).
      const before = text[i - 1];
      const after = text[i + 1] ?? '';
      const exponent = (before === 'e' || before === 'E') && /[0-9.]/.test(text[i - 2] ?? '');
      const betweenDigits = /[0-9]/.test(before) && /[0-9]/.test(after);
      if (!exponent && !betweenDigits) return true;
    }
  }
  if (names.size === 0) return false;
  const words = text.match(/[A-Za-z_][A-Za-z0-9_]*/g) ?? [];
  return words.some((w) => names.has(w));
}
