// Hostile input: for every way a document can be malformed, malicious or
// merely odd, the run returns normally with the exact reader finding (rule,
// severity, line, column, message fragment), and nothing in the document is
// executed or leaks into the process (a global side-effect probe, and the
// prototype of every plain object).
//
// Cases edit BASE (listing below); a clean BASE has no findings at all, so
// every finding in a case comes from the edit. Line numbers in the tables are
// those of the edited document.
//
//  1 ---                        10 conditions:
//  2 polecheck: 1               11   cl: 3 pF
//  3 block: hostile-probe       12 claims:
//  4 topology: single-stage     13   dc_gain: 76 dB
//  5 params:                    14   gbw: 40 MHz
//  6   gm: 800 µS               15   phase_margin: {min: 80 deg}
//  7   rout: 8 MΩ               16 ---
//  8   cout: 150 fF             17
//  9   i_tail: 80 µA            18 Body.

import { closeSync, ftruncateSync, mkdtempSync, openSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeEach, describe, expect, it } from 'vitest';
import { type FileResult, checkText } from '../../src/check';
import { DEFAULT_MAX_BYTES, checkFile } from '../../src/cli';
import type { Finding } from '../../src/verdicts/findings';

const BASE_LINES = [
  '---',
  'polecheck: 1',
  'block: hostile-probe',
  'topology: single-stage',
  'params:',
  '  gm: 800 µS',
  '  rout: 8 MΩ',
  '  cout: 150 fF',
  '  i_tail: 80 µA',
  'conditions:',
  '  cl: 3 pF',
  'claims:',
  '  dc_gain: 76 dB',
  '  gbw: 40 MHz',
  '  phase_margin: {min: 80 deg}',
  '---',
  '',
  'Body.',
  '',
];
const BASE = BASE_LINES.join('\n');

/** BASE with line `n` (1-based) replaced by `lines` (one or more). */
function edit(n: number, ...lines: string[]): string {
  const out = [...BASE_LINES];
  out.splice(n - 1, 1, ...lines);
  return out.join('\n');
}

/** BASE with `lines` inserted before line `n`. */
function insert(n: number, ...lines: string[]): string {
  const out = [...BASE_LINES];
  out.splice(n - 1, 0, ...lines);
  return out.join('\n');
}

interface Expected {
  rule: string;
  severity: Finding['severity'];
  line: number;
  column: number;
  message: string;
}

const PROBE = '__polecheckHostileProbe';
const probe = () => (globalThis as Record<string, unknown>)[PROBE];

function check(text: string): FileResult {
  // A run that throws fails the test here, with the exception.
  return checkText('hostile.md', text);
}

function expectOnly(r: FileResult, e: Expected): void {
  expect(r.skipped).toBe(false);
  expect(r.findings.map((f) => [f.rule, f.severity, f.line, f.column])).toEqual([[e.rule, e.severity, e.line, e.column]]);
  expect(r.findings[0].message).toContain(e.message);
}

function expectIncludes(r: FileResult, e: Expected): void {
  const hit = r.findings.find((f) => f.rule === e.rule && f.line === e.line && f.column === e.column && f.severity === e.severity);
  expect(hit, `no ${e.rule} ${e.severity} at ${e.line}:${e.column} in ${JSON.stringify(r.findings.map((f) => [f.rule, f.line, f.column, f.message]))}`).toBeDefined();
  expect(hit!.message).toContain(e.message);
}

beforeEach(() => {
  delete (globalThis as Record<string, unknown>)[PROBE];
});

describe('the base document', () => {
  it('is clean, so every finding below comes from its edit', () => {
    const r = check(BASE);
    expect(r.skipped).toBe(false);
    expect(r.findings).toEqual([]);
  });
});

describe('YAML syntax errors: one yaml-syntax error at the place the YAML breaks', () => {
  const cases: Array<[string, string, Expected]> = [
    ['an indentation one column short', edit(7, ' rout: 8 MΩ'), { rule: 'yaml-syntax', severity: 'error', line: 7, column: 2, message: 'bad indentation of a mapping entry' }],
    ['a missing colon', edit(7, '  rout 8 MΩ'), { rule: 'yaml-syntax', severity: 'error', line: 7, column: 3, message: '`rout 8 MΩ` is not `key: value` (a colon is missing)' }],
    ['a second colon in a plain value', edit(6, '  gm: a: b'), { rule: 'yaml-syntax', severity: 'error', line: 6, column: 8, message: 'front matter is not valid YAML' }],
    ['an unknown escape in a quoted value', edit(6, '  gm: "800 \\q µS"'), { rule: 'yaml-syntax', severity: 'error', line: 6, column: 13, message: 'unknown escape sequence' }],
    ['an anchor without a name', edit(6, '  gm: &  800 µS'), { rule: 'yaml-syntax', severity: 'error', line: 6, column: 8, message: 'anchor' }],
    ['a list item inside a mapping', edit(7, '  - rout'), { rule: 'yaml-syntax', severity: 'error', line: 7, column: 3, message: 'bad indentation of a mapping entry' }],
    ['a second document in the front matter', edit(10, '...', 'conditions:'), { rule: 'yaml-syntax', severity: 'error', line: 11, column: 1, message: 'more than one YAML document' }],
  ];
  it.each(cases)('%s', (_name, text, e) => expectOnly(check(text), e));
});

describe('duplicate keys: refused at the second occurrence', () => {
  const cases: Array<[string, string, Expected]> = [
    ['at the top level', insert(5, 'topology: two-stage-miller'), { rule: 'yaml-syntax', severity: 'error', line: 5, column: 1, message: 'duplicated mapping key' }],
    ['in params', insert(9, '  gm: 900 µS'), { rule: 'yaml-syntax', severity: 'error', line: 9, column: 3, message: 'duplicated mapping key' }],
    ['in a flow mapping', edit(15, '  phase_margin: {min: 80 deg, min: 70 deg}'), { rule: 'yaml-syntax', severity: 'error', line: 15, column: 31, message: 'duplicated mapping key' }],
    ['the polecheck key itself', insert(3, 'polecheck: 1'), { rule: 'yaml-syntax', severity: 'error', line: 3, column: 1, message: 'duplicated mapping key' }],
  ];
  it.each(cases)('%s', (_name, text, e) => expectOnly(check(text), e));
});

describe('tabs in indentation', () => {
  const cases: Array<[string, string, Expected]> = [
    ['a tab before a param', edit(7, '\trout: 8 MΩ'), { rule: 'yaml-syntax', severity: 'error', line: 7, column: 1, message: 'tab characters must not be used in indentation' }],
    ['a tab after spaces', edit(7, '\t rout: 8 MΩ'), { rule: 'yaml-syntax', severity: 'error', line: 7, column: 1, message: 'tab characters must not be used in indentation' }],
    ['a tab before a top-level key', edit(4, '\ttopology: single-stage'), { rule: 'yaml-syntax', severity: 'error', line: 4, column: 1, message: 'tab characters must not be used in indentation' }],
  ];
  it.each(cases)('%s', (_name, text, e) => expectOnly(check(text), e));

  it('a tab between a key and its value is YAML whitespace, not indentation', () => {
    expect(check(edit(7, '  rout:\t8 MΩ')).findings).toEqual([]);
  });
});

describe('custom tags: refused at the tag, never constructed or run', () => {
  const setProbe = `globalThis.${PROBE} = 1`;
  const cases: Array<[string, string, Expected]> = [
    ['!!js/function', edit(4, `topology: !!js/function "function () { ${setProbe}; return 'single-stage' }"`), { rule: 'yaml-syntax', severity: 'error', line: 4, column: 11, message: 'unknown scalar tag !<tag:yaml.org,2002:js/function>' }],
    ['!!js/function as an immediately invoked expression', edit(6, `  gm: !!js/function "(function () { ${setProbe} })()"`), { rule: 'yaml-syntax', severity: 'error', line: 6, column: 7, message: 'unknown scalar tag !<tag:yaml.org,2002:js/function>' }],
    ['!!js/regexp (a catastrophic pattern)', edit(4, 'topology: !!js/regexp /^(a+)+$/'), { rule: 'yaml-syntax', severity: 'error', line: 4, column: 11, message: 'unknown scalar tag !<tag:yaml.org,2002:js/regexp>' }],
    ['!!js/undefined', edit(3, "block: !!js/undefined ''"), { rule: 'yaml-syntax', severity: 'error', line: 3, column: 8, message: 'unknown scalar tag !<tag:yaml.org,2002:js/undefined>' }],
    ['a local tag !foo', edit(4, 'topology: !foo single-stage'), { rule: 'yaml-syntax', severity: 'error', line: 4, column: 11, message: 'unknown scalar tag !<!foo>' }],
    ['a verbatim js/function tag', edit(6, `  gm: !<tag:yaml.org,2002:js/function> "function () { ${setProbe} }"`), { rule: 'yaml-syntax', severity: 'error', line: 6, column: 7, message: 'unknown scalar tag !<tag:yaml.org,2002:js/function>' }],
    ['a python object tag', edit(3, 'block: !!python/object/apply:os.system ["echo pwned"]'), { rule: 'yaml-syntax', severity: 'error', line: 3, column: 8, message: 'unknown sequence tag' }],
    ['a tag on a mapping', edit(5, 'params: !!js/object'), { rule: 'yaml-syntax', severity: 'error', line: 5, column: 9, message: 'unknown mapping tag' }],
    ['a tag on a key', edit(3, `!!js/function "function () { ${setProbe} }": x`), { rule: 'yaml-syntax', severity: 'error', line: 3, column: 1, message: 'unknown scalar tag !<tag:yaml.org,2002:js/function>' }],
    ['!!binary', edit(3, 'block: !!binary aGVsbG8='), { rule: 'yaml-syntax', severity: 'error', line: 3, column: 8, message: 'unknown scalar tag' }],
    ['!!timestamp', edit(3, 'block: !!timestamp 2001-12-14'), { rule: 'yaml-syntax', severity: 'error', line: 3, column: 8, message: 'unknown scalar tag' }],
  ];
  it.each(cases)('%s', (_name, text, e) => {
    expectOnly(check(text), e);
    expect(probe()).toBeUndefined();
  });

  it('a value that only looks like code is never run: the expression reader refuses it at its place', () => {
    const r = check(edit(6, `  gm: function () { ${setProbe} }`));
    // Read as an expression (it holds parentheses) and refused by mathjs's parser at the `{`.
    expectOnly(r, { rule: 'expression', severity: 'error', line: 6, column: 20, message: 'cannot read the expression' });
    expect(probe()).toBeUndefined();
  });

  it('!!int and !!str are core tags and read as their text', () => {
    expect(check(edit(6, '  gm: !!str 800 µS')).findings).toEqual([]);
    expectOnly(check(edit(6, '  gm: !!int 800')), { rule: 'wrong-unit', severity: 'error', line: 6, column: 16, message: '`800` has no unit' });
  });
});

describe('anchors and aliases: bounded (at most 50 aliases), refused with a clear error, never expanded', () => {
  /** `levels` lines, each a list of `width` aliases of the line before: width^levels leaves once expanded. */
  const laughs = (levels: number, width: number): string[] => {
    const lines = [`lol0: &lol0 [${Array(width).fill('"lol"').join(', ')}]`];
    for (let i = 1; i < levels; i++) lines.push(`lol${i}: &lol${i} [${Array(width).fill(`*lol${i - 1}`).join(', ')}]`);
    return lines;
  };

  it('nine levels of nine (387 million leaves) are refused at the 51st alias', () => {
    const lines = laughs(9, 9);
    const r = check(insert(3, ...lines));
    // Line 3+i holds aliases 9(i−1)+1 … 9i: the 51st is the 6th on the line of lol6.
    const line = 3 + 6;
    const text = lines[6];
    const column = text.split('*', 6).join('*').length + 1; // the 6th `*` on the line
    expectOnly(r, { rule: 'yaml-syntax', severity: 'error', line, column, message: 'aliases exceeded maxAliases (50)' });
  });

  it('exactly 50 aliases are accepted, and each alias is the one node it names (no copies)', () => {
    const r = check(insert(3, 'x-anchor: &big [a, b, c, d, e, f, g, h]', `x-aliases: [${Array(50).fill('*big').join(', ')}]`));
    expect(r.findings.map((f) => [f.rule, f.line, f.column])).toEqual([
      ['unknown-key', 3, 1],
      ['unknown-key', 4, 1],
    ]);
  });

  it('the 51st alias in one flow list is refused at that alias', () => {
    const aliases = Array(51).fill('*a').join(', ');
    const r = check(insert(3, 'x-anchor: &a [x, x]', `x-aliases: [${aliases}]`));
    const column = 'x-aliases: ['.length + 50 * '*a, '.length + 1;
    expectOnly(r, { rule: 'yaml-syntax', severity: 'error', line: 4, column, message: 'aliases exceeded maxAliases (50)' });
  });

  it('an alias to an unknown anchor is refused at the alias', () => {
    expectOnly(check(edit(4, 'topology: *nowhere')), { rule: 'yaml-syntax', severity: 'error', line: 4, column: 11, message: 'unidentified alias "nowhere"' });
  });

  it('a finding about an aliased value points at the key that uses it, not at the anchor', () => {
    // `cout: *g` reuses the text `800 µS` of `gm`; the wrong unit is `cout`'s (SPEC-FORMAT §2: "an error at that line").
    const r = check(edit(6, '  gm: &g 800 µS').replace('  cout: 150 fF', '  cout: *g'));
    expectOnly(r, { rule: 'wrong-unit', severity: 'error', line: 8, column: 9, message: '`cout: 800 µS`' });
  });

  it('a merge key is not a YAML feature the format reads: `<<` is an unknown key', () => {
    const r = check(insert(3, 'x-defaults: &d {gm: 800 µS}').replace('  gm: 800 µS', '  <<: *d'));
    expectIncludes(r, { rule: 'unknown-key', severity: 'error', line: 7, column: 3, message: 'unknown key `<<` in `params`' });
  });
});

describe('__proto__, constructor and prototype keys are inert, wherever they are', () => {
  const polluted = () => {
    const probeObject = {} as Record<string, unknown>;
    return [probeObject.polluted, probeObject.isAdmin, (Object.prototype as Record<string, unknown>).polluted, ([] as unknown as Record<string, unknown>).polluted];
  };
  const cases: Array<[string, string, Expected]> = [
    ['a top-level __proto__ mapping', insert(3, '__proto__: {polluted: yes, isAdmin: true}'), { rule: 'unknown-key', severity: 'error', line: 3, column: 1, message: 'unknown key `__proto__` in the front matter' }],
    ['a quoted "__proto__" key', insert(3, '"__proto__": {polluted: yes}'), { rule: 'unknown-key', severity: 'error', line: 3, column: 1, message: 'unknown key `__proto__` in the front matter' }],
    ['__proto__ in params', insert(9, '  __proto__: {polluted: 1}'), { rule: 'unknown-key', severity: 'error', line: 9, column: 3, message: 'unknown key `__proto__` in `params`' }],
    ['constructor.prototype in params', insert(9, '  constructor: {prototype: {polluted: 1}}'), { rule: 'unknown-key', severity: 'error', line: 9, column: 3, message: 'unknown key `constructor` in `params`' }],
    ['prototype in conditions', insert(12, '  prototype: {polluted: 1}'), { rule: 'unknown-key', severity: 'error', line: 12, column: 3, message: 'unknown key `prototype` in `conditions`' }],
    ['__proto__ in claims', insert(16, '  __proto__: 1 MHz'), { rule: 'unknown-key', severity: 'error', line: 16, column: 3, message: 'unknown key `__proto__` in the claims of `single-stage`' }],
    ['__proto__ in a range', edit(6, '  gm: {typ: 800 µS, __proto__: {polluted: 1}}'), { rule: 'unknown-key', severity: 'error', line: 6, column: 21, message: 'unknown key `__proto__` in the range of `gm`' }],
    ['__proto__ as the topology', edit(4, 'topology: __proto__'), { rule: 'unknown-key', severity: 'error', line: 4, column: 11, message: 'unknown topology `__proto__`' }],
    ['constructor as the topology', edit(4, 'topology: constructor'), { rule: 'unknown-key', severity: 'error', line: 4, column: 11, message: 'unknown topology `constructor`' }],
    ['constructor as a unit', edit(6, '  gm: 800 constructor'), { rule: 'wrong-unit', severity: 'error', line: 6, column: 11, message: 'unknown unit `constructor`' }],
    ['__proto__ as a unit', edit(6, '  gm: 800 __proto__'), { rule: 'wrong-unit', severity: 'error', line: 6, column: 11, message: 'unknown unit `__proto__`' }],
    ['hasOwnProperty as a unit', edit(6, '  gm: 800 hasOwnProperty'), { rule: 'wrong-unit', severity: 'error', line: 6, column: 11, message: 'unknown unit `hasOwnProperty`' }],
  ];
  it.each(cases)('%s', (_name, text, e) => {
    expectOnly(check(text), e);
    expect(polluted()).toEqual([undefined, undefined, undefined, undefined]);
  });

  it('__proto__ in a waiver (which also matches no finding)', () => {
    const r = check(insert(16, 'waivers:', '  - {rule: gain-bandwidth, reason: probe, __proto__: {polluted: 1}}'));
    expect(r.findings.map((f) => [f.rule, f.severity, f.line, f.column])).toEqual([
      ['waiver', 'warning', 17, 6],
      ['unknown-key', 'error', 17, 43],
    ]);
    expect(r.findings[1].message).toContain('unknown key `__proto__` in a waiver');
    expect(polluted()).toEqual([undefined, undefined, undefined, undefined]);
  });

  it('table conditions named like Object.prototype members are outside the model and ignored', () => {
    const r = check(`${BASE}\n| Parameter | Typ | Conditions |\n|---|---|---|\n| GBW | 40 MHz | constructor = 1 pF, toString = 2 |\n`);
    // A condition the model does not know is a warning at its place (issue 12).
    expect(r.findings.map((f) => [f.rule, f.severity, f.line, f.column])).toEqual([
      ['table', 'warning', 22, 18],
      ['table', 'warning', 22, 38],
    ]);
    expect(polluted()).toEqual([undefined, undefined, undefined, undefined]);
  });

  describe('network element and node names', () => {
    // Two gm-R-C stages; 80 dB at DC, one warning (the second pole is below the crossover).
    const net = (element: string, node = 'n1') => [
      '---',
      'polecheck: 1',
      'topology: network',
      'network:',
      '  input: in',
      '  output: out',
      `  nodes: [in, ${node}, out]`,
      '  elements:',
      `    ${element}: {kind: transconductance, into: 0, from: ${node}, control: [in, 0], value: 100 µS}`,
      `    r1: {kind: resistor, between: [${node}, 0], value: 1 MΩ}`,
      `    c1: {kind: capacitor, between: [${node}, 0], value: 1 pF}`,
      `    gm2: {kind: transconductance, into: 0, from: out, control: [${node}, 0], value: 100 µS}`,
      '    r2: {kind: resistor, between: [out, 0], value: 1 MΩ}',
      '    c2: {kind: capacitor, between: [out, 0], value: 3 pF}',
      'claims:',
      '  dc_gain: 80 dB',
      '---',
      '',
    ].join('\n');
    const reference = () => checkText('net.md', net('gm1'));

    it('the reference network', () => {
      const r = reference();
      expect(r.findings.map((f) => [f.rule, f.severity, f.line, f.column])).toEqual([['second-pole-spacing', 'warning', 4, 1]]);
      expect(r.model!.exact.dc_gain.value).toBeCloseTo(80, 9);
    });

    it.each(['constructor', 'toString', 'hasOwnProperty', 'valueOf', 'prototype', '__defineGetter__', '__proto__'])('an element named %s is an ordinary name', (name) => {
      const r = checkText('net.md', net(name));
      expect(r.findings.map((f) => [f.rule, f.severity, f.line, f.column])).toEqual([['second-pole-spacing', 'warning', 4, 1]]);
      expect(r.model!.exact.dc_gain.value).toBeCloseTo(80, 9);
      expect(polluted()).toEqual([undefined, undefined, undefined, undefined]);
    });

    it.each(['__proto__', 'constructor', 'toString', 'hasOwnProperty'])('a node named %s is an ordinary name', (node) => {
      const r = checkText('net.md', net('gm1', node));
      expect(r.findings.map((f) => [f.rule, f.severity, f.line, f.column])).toEqual([['second-pole-spacing', 'warning', 4, 1]]);
      expect(r.model!.exact.dc_gain.value).toBeCloseTo(80, 9);
    });
  });
});

describe('deep nesting: refused at the first node past 32 levels', () => {
  it('a block mapping 200 levels deep, refused on the line of level 33', () => {
    // Level 1 is the front matter's own mapping, level 2 the value of `x-deep`,
    // level k+1 the mapping on the k-th nested line; the key scalar on a line
    // of level 32 is the 33rd node from the root.
    const nested = Array.from({ length: 200 }, (_, i) => `${'  '.repeat(i + 1)}k:`);
    nested[nested.length - 1] += ' 1';
    const r = check(insert(3, 'x-deep:', ...nested));
    const line = 3 + 31; // `x-deep:` is line 3; its 31st nested line holds level 32
    expectOnly(r, { rule: 'yaml-syntax', severity: 'error', line, column: 2 * 31 + 1, message: 'nesting exceeded maxDepth (32)' });
  });

  it('flow lists 200 levels deep, refused at the bracket of level 33', () => {
    const r = check(insert(3, `x-deep: ${'['.repeat(200)}${']'.repeat(200)}`));
    expectOnly(r, { rule: 'yaml-syntax', severity: 'error', line: 3, column: 'x-deep: '.length + 32, message: 'nesting exceeded maxDepth (32)' });
  });

  it('31 levels are read (and reported as the unknown key they are)', () => {
    const r = check(insert(3, `x-deep: ${'['.repeat(30)}${']'.repeat(30)}`));
    expectOnly(r, { rule: 'unknown-key', severity: 'error', line: 3, column: 1, message: 'unknown key `x-deep`' });
  });

  it('a Markdown body nested 10,000 blockquotes deep beside a table: the front matter is still checked', () => {
    const doc = `${edit(14, '  gbw: 4 MHz')}\n| Parameter | Typ |\n|---|---|\n| Slew rate | 20 V/µs |\n\n${'>'.repeat(10000)} deep\n`;
    const r = check(doc);
    expectIncludes(r, { rule: 'gain-bandwidth', severity: 'error', line: 14, column: 3, message: 'gain-bandwidth claimed 4 MHz' });
  });
});

describe('numbers YAML would read specially are text to polecheck, refused with the reason', () => {
  // beta is the one key that takes a bare number; gm needs a unit.
  const beta = (v: string) => edit(11, '  cl: 3 pF', `  beta: ${v}`);
  const cases: Array<[string, string, Expected]> = [
    ['beta: 1e400 (overflows a double)', beta('1e400'), { rule: 'wrong-unit', severity: 'error', line: 12, column: 9, message: '`1e400` is out of range (not a finite number)' }],
    ['beta: 1e-400 (underflows to zero)', beta('1e-400'), { rule: 'wrong-unit', severity: 'error', line: 12, column: 9, message: '`1e-400` is out of range (too small to represent)' }],
    ['beta: -0', beta('-0'), { rule: 'invalid-value', severity: 'error', line: 12, column: 9, message: 'must be positive; got `-0`' }],
    ['beta: NaN', beta('NaN'), { rule: 'wrong-unit', severity: 'error', line: 12, column: 9, message: '`NaN` is not a finite number' }],
    ['beta: .nan', beta('.nan'), { rule: 'wrong-unit', severity: 'error', line: 12, column: 9, message: '`.nan` is not a finite number' }],
    ['beta: .inf', beta('.inf'), { rule: 'wrong-unit', severity: 'error', line: 12, column: 9, message: '`.inf` is not a finite number' }],
    ['beta: -.Inf', beta('-.Inf'), { rule: 'wrong-unit', severity: 'error', line: 12, column: 9, message: '`-.Inf` is not a finite number' }],
    ['beta: 0x1F', beta('0x1F'), { rule: 'wrong-unit', severity: 'error', line: 12, column: 9, message: 'hexadecimal, octal and binary numbers are not accepted' }],
    ['beta: 0o17', beta('0o17'), { rule: 'wrong-unit', severity: 'error', line: 12, column: 9, message: 'hexadecimal, octal and binary numbers are not accepted' }],
    ['beta: 0b101', beta('0b101'), { rule: 'wrong-unit', severity: 'error', line: 12, column: 9, message: 'hexadecimal, octal and binary numbers are not accepted' }],
    ['beta: 1_000 (YAML 1.1 digit groups)', beta('1_000'), { rule: 'wrong-unit', severity: 'error', line: 12, column: 10, message: '`beta: 1_000`' }],
    ['gm: 1e400 µS', edit(6, '  gm: 1e400 µS'), { rule: 'wrong-unit', severity: 'error', line: 6, column: 7, message: '`1e400` is out of range (not a finite number)' }],
    ['gm: 1e400 (no unit either)', edit(6, '  gm: 1e400'), { rule: 'wrong-unit', severity: 'error', line: 6, column: 12, message: '`1e400` has no unit' }],
    ['gm: -0 µS', edit(6, '  gm: -0 µS'), { rule: 'invalid-value', severity: 'error', line: 6, column: 7, message: '`gm` (input transconductance) must be positive; got `-0 µS`' }],
    ['gm: NaN µS', edit(6, '  gm: NaN µS'), { rule: 'wrong-unit', severity: 'error', line: 6, column: 7, message: '`NaN` is not a finite number' }],
    ['gm: .inf', edit(6, '  gm: .inf'), { rule: 'wrong-unit', severity: 'error', line: 6, column: 7, message: '`.inf` is not a finite number' }],
    ['gm: 0x1F µS', edit(6, '  gm: 0x1F µS'), { rule: 'wrong-unit', severity: 'error', line: 6, column: 7, message: 'hexadecimal, octal and binary numbers are not accepted' }],
    ['gm: 0o17 µS', edit(6, '  gm: 0o17 µS'), { rule: 'wrong-unit', severity: 'error', line: 6, column: 7, message: 'hexadecimal, octal and binary numbers are not accepted' }],
  ];
  it.each(cases)('%s', (_name, text, e) => expectOnly(check(text), e));
});

describe('values that are not a number and a unit', () => {
  const cases: Array<[string, string, Expected]> = [
    ['a bare number where a unit is needed', edit(6, '  gm: 800'), { rule: 'wrong-unit', severity: 'error', line: 6, column: 10, message: '`800` has no unit' }],
    ['a number as the unit', edit(6, '  gm: 800 123'), { rule: 'wrong-unit', severity: 'error', line: 6, column: 11, message: 'two numbers: `800` and `123`' }],
    ['a list [800, µS]', edit(6, '  gm: [800, µS]'), { rule: 'wrong-unit', severity: 'error', line: 6, column: 7, message: '`gm` expects a conductance such as `180 µS`, not a list' }],
    ['a boolean', edit(6, '  gm: true'), { rule: 'wrong-unit', severity: 'error', line: 6, column: 7, message: 'expected a number at `true`' }],
    ['null (~)', edit(6, '  gm: ~'), { rule: 'wrong-unit', severity: 'error', line: 6, column: 7, message: 'expected a number at `~`' }],
    ['a date', edit(6, '  gm: 2001-12-14'), { rule: 'wrong-unit', severity: 'error', line: 6, column: 11, message: '`gm: 2001-12-14`' }],
    ['trailing garbage `180 µS foo`', edit(6, '  gm: 180 µS foo'), { rule: 'wrong-unit', severity: 'error', line: 6, column: 14, message: 'unexpected `foo` after `180 µS`' }],
    ['trailing garbage glued to the unit `180 µS;`', edit(6, '  gm: 180 µS;'), { rule: 'wrong-unit', severity: 'error', line: 6, column: 13, message: 'unexpected `;` after `180 µS`' }],
    ['a list as a range bound', edit(6, '  gm: {typ: [1]}'), { rule: 'wrong-unit', severity: 'error', line: 6, column: 13, message: '`gm.typ` expects a conductance such as `180 µS`, not a list' }],
  ];
  it.each(cases)('%s', (_name, text, e) => expectOnly(check(text), e));

  it('a mapping {value, unit}: both keys are unknown in a range', () => {
    const r = check(edit(6, '  gm: {value: 800, unit: µS}'));
    expect(r.findings.map((f) => [f.rule, f.severity, f.line, f.column])).toEqual([
      ['unknown-key', 'error', 6, 8],
      ['unknown-key', 'error', 6, 20],
    ]);
    expect(r.findings[0].message).toContain('unknown key `value` in the range of `gm`');
  });

  // Findings inside a scalar point at the offending text in the file, not at its offset in the decoded value.
  const inside: Array<[string, string, Expected]> = [
    ['a plain value folded over two lines', edit(6, '  gm: 800 µS', '   foo'), { rule: 'wrong-unit', severity: 'error', line: 7, column: 4, message: 'unexpected `foo` after `800 µS`' }],
    ['a double-quoted value over two lines', edit(6, '  gm: "800 µS', '    foo"'), { rule: 'wrong-unit', severity: 'error', line: 7, column: 5, message: 'unexpected `foo` after `800 µS`' }],
    ['a folded block scalar', edit(6, '  gm: >-', '    800 µS', '    foo'), { rule: 'wrong-unit', severity: 'error', line: 8, column: 5, message: 'unexpected `foo` after `800 µS`' }],
    ['a double-quoted value with escapes', edit(6, '  gm: "\\x38\\x30\\x30 µS foo"'), { rule: 'wrong-unit', severity: 'error', line: 6, column: 24, message: 'unexpected `foo` after `800 µS`' }],
    ["a single-quoted value with ''", edit(6, "  gm: '800 µS ''x'' foo'"), { rule: 'wrong-unit', severity: 'error', line: 6, column: 15, message: "unexpected `'x'` after `800 µS`" }],
    ['a tolerance folded onto the next line, garbage before it', edit(6, '  gm: 800 µS', '   foo ±10%'), { rule: 'wrong-unit', severity: 'error', line: 7, column: 4, message: 'unexpected `foo` after `800 µS`' }],
    ['a tolerance folded onto the next line, not a percentage', edit(6, '  gm: 800 µS', '   ±10 V'), { rule: 'wrong-unit', severity: 'error', line: 7, column: 8, message: 'a tolerance must be a percentage' }],
  ];
  it.each(inside)('%s: the finding is where the text is', (_name, text, e) => expectOnly(check(text), e));

  it('a quoted value is read like the plain one', () => {
    expect(check(edit(6, '  gm: "800 µS"')).findings).toEqual([]);
    expect(check(edit(6, "  gm: '800 µS'")).findings).toEqual([]);
  });
});

describe('fences and empty documents', () => {
  it('empty front matter `---\\n---` is a page without the key: skipped', () => {
    expect(check('---\n---\n')).toEqual({ path: 'hostile.md', skipped: true, findings: [] });
  });

  it('an empty file is skipped', () => {
    expect(check('')).toEqual({ path: 'hostile.md', skipped: true, findings: [] });
  });

  it('a file of only `---` is skipped', () => {
    expect(check('---')).toEqual({ path: 'hostile.md', skipped: true, findings: [] });
    expect(check('---\n')).toEqual({ path: 'hostile.md', skipped: true, findings: [] });
  });

  it('the key alone, with nothing else, asks for a topology at the opening fence', () => {
    expectOnly(check('---\npolecheck: 1\n---\n'), { rule: 'front-matter', severity: 'error', line: 1, column: 1, message: 'the front matter needs `topology:`' });
  });

  it('front matter with no closing fence', () => {
    expectOnly(check(BASE_LINES.slice(0, 15).join('\n')), { rule: 'front-matter', severity: 'error', line: 1, column: 1, message: 'front matter has no closing `---` fence' });
  });

  it('front matter with no closing fence and CRLF line ends', () => {
    expectOnly(check(BASE_LINES.slice(0, 15).join('\r\n')), { rule: 'front-matter', severity: 'error', line: 1, column: 1, message: 'front matter has no closing `---` fence' });
  });

  it('an empty `polecheck:` is an unsupported version at its key', () => {
    expectOnly(check(edit(2, 'polecheck:')), { rule: 'front-matter', severity: 'error', line: 2, column: 1, message: 'unsupported format version' });
  });

  it('a front matter that is a list, not a mapping', () => {
    expectOnly(check(insert(3, '- x')), { rule: 'yaml-syntax', severity: 'error', line: 3, column: 1, message: 'front matter is not valid YAML' });
  });

  it('a complex (non-scalar) key is refused on its own line', () => {
    expectOnly(check(insert(3, '? [a, b]', ': 1')), { rule: 'yaml-syntax', severity: 'error', line: 3, column: 1, message: 'front matter is not valid YAML' });
  });
});

describe('output stays in proportion to the input', () => {
  it('n statements that contradict each other give at most n − 1 conflicting-claims findings, not one per pair', () => {
    const rows = Array.from({ length: 100 }, (_, i) => `| GBW | ${i % 2 ? 40 : 80} MHz |`).join('\n');
    const r = check(`${BASE}\n| Parameter | Typ |\n|---|---|\n${rows}\n`);
    const conflicts = r.findings.filter((f) => f.rule === 'conflicting-claims');
    expect(conflicts.length).toBeGreaterThan(0);
    // 100 rows plus the front matter's `gbw: 40 MHz`: 101 statements.
    expect(conflicts.length).toBeLessThanOrEqual(100);
  });
});

describe('line ends and byte-order marks: positions are those an editor shows', () => {
  const bad = edit(14, '  gbw: 40 Mhz');
  const expected: Expected = { rule: 'wrong-unit', severity: 'error', line: 14, column: 11, message: 'unknown unit `Mhz`' };

  it('LF', () => expectOnly(check(bad), expected));
  it('a BOM', () => expectOnly(check(`\uFEFF${bad}`), expected));
  it('CRLF', () => expectOnly(check(bad.replace(/\n/g, '\r\n')), expected));
  it('a BOM and CRLF', () => expectOnly(check(`\uFEFF${bad.replace(/\n/g, '\r\n')}`), expected));
  it('CR only (classic Mac)', () => expectOnly(check(bad.replace(/\n/g, '\r')), expected));
  it('mixed LF, CRLF and CR, line by line', () => {
    const ends = ['\n', '\r\n', '\r'];
    const lines = bad.split('\n');
    const mixed = lines.map((l, i) => l + (i < lines.length - 1 ? ends[i % 3] : '')).join('');
    expectOnly(check(mixed), expected);
  });
  it('a BOM in front of a version error keeps its column', () => {
    expectOnly(check(`\uFEFF${edit(2, 'polecheck: 2')}`), { rule: 'front-matter', severity: 'error', line: 2, column: 12, message: 'unsupported format version `polecheck: 2`' });
  });
  it('a NUL byte in the front matter is refused where it is', () => {
    expectOnly(check(edit(14, '  gbw: 40\0 MHz')), { rule: 'yaml-syntax', severity: 'error', line: 14, column: 10, message: 'null byte is not allowed' });
  });
});

describe('files: encodings, NUL bytes, sizes (checkFile)', () => {
  const dir = mkdtempSync(join(tmpdir(), 'polecheck-hostile-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));
  const file = (name: string, data: string | Buffer): string => {
    const p = join(dir, name);
    writeFileSync(p, data);
    return p;
  };
  const bad = edit(14, '  gbw: 40 Mhz');

  it('a clean spec', () => {
    expect(checkFile(file('clean.md', BASE), DEFAULT_MAX_BYTES).findings).toEqual([]);
  });

  it('a BOM and CRLF on disk', () => {
    expectOnly(checkFile(file('bom-crlf.md', `\uFEFF${bad.replace(/\n/g, '\r\n')}`), DEFAULT_MAX_BYTES), { rule: 'wrong-unit', severity: 'error', line: 14, column: 11, message: 'unknown unit `Mhz`' });
  });

  it('CR-only line ends on disk', () => {
    expectOnly(checkFile(file('cr.md', bad.replace(/\n/g, '\r')), DEFAULT_MAX_BYTES), { rule: 'wrong-unit', severity: 'error', line: 14, column: 11, message: 'unknown unit `Mhz`' });
  });

  it('a Latin-1 byte in the body: the file is not valid UTF-8', () => {
    const p = file('latin1.md', Buffer.concat([Buffer.from(BASE), Buffer.from([0xe9, 0x0a])]));
    expectOnly(checkFile(p, DEFAULT_MAX_BYTES), { rule: 'encoding', severity: 'error', line: 1, column: 1, message: 'the file is not valid UTF-8' });
  });

  it('a Latin-1 µ in the front matter', () => {
    const p = file('latin1-fm.md', Buffer.from(BASE, 'latin1'));
    expectOnly(checkFile(p, DEFAULT_MAX_BYTES), { rule: 'encoding', severity: 'error', line: 1, column: 1, message: 'the file is not valid UTF-8' });
  });

  it('an overlong encoding and a lone surrogate are not UTF-8', () => {
    const overlong = file('overlong.md', Buffer.concat([Buffer.from(BASE.slice(0, 20)), Buffer.from([0xc0, 0xaf]), Buffer.from(BASE.slice(20))]));
    const surrogate = file('surrogate.md', Buffer.concat([Buffer.from(BASE), Buffer.from([0xed, 0xa0, 0x80])]));
    for (const p of [overlong, surrogate]) expectOnly(checkFile(p, DEFAULT_MAX_BYTES), { rule: 'encoding', severity: 'error', line: 1, column: 1, message: 'not valid UTF-8' });
  });

  it('a spec saved as UTF-16 is reported, not silently skipped', () => {
    const p = file('utf16.md', Buffer.from(`\uFEFF${BASE}`, 'utf16le'));
    expectOnly(checkFile(p, DEFAULT_MAX_BYTES), { rule: 'encoding', severity: 'error', line: 1, column: 1, message: 'UTF-8' });
  });

  it('a NUL byte in the front matter on disk', () => {
    expectOnly(checkFile(file('nul.md', edit(14, '  gbw: 40\0 MHz')), DEFAULT_MAX_BYTES), { rule: 'yaml-syntax', severity: 'error', line: 14, column: 10, message: 'null byte is not allowed' });
  });

  it('a NUL byte in the Markdown body is body text', () => {
    expect(checkFile(file('nul-body.md', `${BASE}a\0b\n`), DEFAULT_MAX_BYTES).findings).toEqual([]);
  });

  it('a 50 MB spec is refused by size, without being read', () => {
    const p = file('big.md', BASE);
    const fd = openSync(p, 'r+');
    try {
      ftruncateSync(fd, 50 * 1024 * 1024); // sparse: the tail reads as NUL bytes
    } finally {
      closeSync(fd);
    }
    expectOnly(checkFile(p, DEFAULT_MAX_BYTES), { rule: 'file-too-large', severity: 'error', line: 1, column: 1, message: `file is ${50 * 1024 * 1024} bytes, above the limit of ${DEFAULT_MAX_BYTES} (--max-bytes)` });
  });

  it('a 50 MB page that is not a spec is skipped', () => {
    const p = file('big-page.md', '# A large page\n');
    const fd = openSync(p, 'r+');
    try {
      ftruncateSync(fd, 50 * 1024 * 1024);
    } finally {
      closeSync(fd);
    }
    expect(checkFile(p, DEFAULT_MAX_BYTES)).toEqual({ path: p, skipped: true, findings: [] });
  });

  it('the limit is configurable: the same spec is refused under a small limit and checked under a larger one', () => {
    const p = file('limit.md', bad);
    const size = Buffer.byteLength(bad);
    expectOnly(checkFile(p, size - 1), { rule: 'file-too-large', severity: 'error', line: 1, column: 1, message: `file is ${size} bytes, above the limit of ${size - 1}` });
    expectOnly(checkFile(p, size), { rule: 'wrong-unit', severity: 'error', line: 14, column: 11, message: 'unknown unit `Mhz`' });
  });

  it('an empty file, a file of only `---`, and a lone BOM are skipped', () => {
    for (const [name, data] of [['empty.md', ''], ['fence.md', '---'], ['fences.md', '---\n---\n'], ['bom.md', '\uFEFF']] as const) {
      const p = file(name, data);
      expect(checkFile(p, DEFAULT_MAX_BYTES)).toEqual({ path: p, skipped: true, findings: [] });
    }
  });

  it('a missing file and a folder are read errors', () => {
    expectOnly(checkFile(join(dir, 'nope.md'), DEFAULT_MAX_BYTES), { rule: 'read-error', severity: 'error', line: 1, column: 1, message: 'ENOENT' });
    expectOnly(checkFile(dir, DEFAULT_MAX_BYTES), { rule: 'read-error', severity: 'error', line: 1, column: 1, message: 'EISDIR' });
  });
});
