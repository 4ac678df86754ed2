// No code in a document is ever run. Values are read by polecheck's own
// quantity grammar (a number, a unit) or, when they hold an operator or a name
// of the spec, as an expression: parsed by mathjs's parser (only the parser,
// built with create() in its own chunk) and evaluated by polecheck from a
// whitelist of node types — numbers, units, names of the spec, + - * / ^,
// parentheses, ∥, sqrt, min, max, abs. Every other capability of mathjs
// (evaluate, import, createUnit, function definitions, assignment, property
// access, matrices, indexing, conditionals, ranges, comparisons, logic, bit
// operations, unit conversion, text) is an error at its place, and a global
// probe proves nothing ran. Command-line values are not passed on to git as
// options.

import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, statSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, relative, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { checkText } from '../../src/check';
import { main } from '../../src/cli';
import { ROOT } from './support';

const PROBE = '__polecheckNoCodeProbe';
const probe = () => (globalThis as Record<string, unknown>)[PROBE];
beforeEach(() => {
  delete (globalThis as Record<string, unknown>)[PROBE];
});

// A clean single-stage spec; line 6 is the value under test.
const doc = (gm: string) => ['---', 'polecheck: 1', 'topology: single-stage', 'params:', '  rout: 8 MΩ', `  gm: ${gm}`, '  cout: 150 fF', 'conditions:', '  cl: 3 pF', 'claims:', '  dc_gain: 76 dB', '---', ''].join('\n');

describe('code-like values are never run: reported at their place', () => {
  const set = `globalThis.${PROBE} = 1`;
  // [value as written, rule, column of the finding, message fragment]
  const cases: Array<[string, string, number, string]> = [
    ['evaluate("1+1")', 'expression', 7, '`evaluate` is not a function expressions may use'],
    ['evaluate("800 uS")', 'expression', 7, '`evaluate` is not a function expressions may use'],
    ['${process.exit(1)}', 'expression', 9, 'cannot read the expression'],
    [`\${${set}}`, 'wrong-unit', 7, 'expected a number at'],
    ["require('fs')", 'expression', 7, '`require` is not a function expressions may use'],
    ["import('fs')", 'expression', 7, '`import` is not a function expressions may use'],
    ["eval('1')", 'expression', 7, '`eval` is not a function expressions may use'],
    [`Function('${set}')()`, 'expression', 58, 'cannot read the expression'],
    ["createUnit('polecheck')", 'expression', 7, '`createUnit` is not a function expressions may use'],
    ['createUnit("q") * 1 S', 'expression', 7, '`createUnit` is not a function expressions may use'],
    ['constructor.constructor("return process")()', 'expression', 50, 'cannot read the expression'],
    ['800 µS; process.exit(1)', 'expression', 13, 'several statements are not available'],
    ["800 require('fs')", 'expression', 11, '`require` is not a function expressions may use'],
    ['800 evaluate', 'wrong-unit', 11, 'unknown unit `evaluate`'],
    ['800 createUnit', 'wrong-unit', 11, 'unknown unit `createUnit`'],
    // The rest of what mathjs can do, each outside the whitelist.
    ['f(x) = x', 'expression', 12, 'function definitions are not available'],
    ['rout.constructor', 'expression', 11, 'property access or indexing is not available'],
    ['cout.value', 'expression', 11, 'property access or indexing is not available'],
    ['rout[1]', 'expression', 7, 'property access or indexing is not available'],
    ['matrix([1])', 'expression', 7, '`matrix` is not a function expressions may use'],
    ['simplify("x")', 'expression', 7, '`simplify` is not a function expressions may use'],
    ['derivative("x^2", "x")', 'expression', 7, '`derivative` is not a function expressions may use'],
    ['parse("1")', 'expression', 7, '`parse` is not a function expressions may use'],
    ['compile("1")', 'expression', 7, '`compile` is not a function expressions may use'],
    ['config({})', 'expression', 7, '`config` is not a function expressions may use'],
    ['typed("x")', 'expression', 7, '`typed` is not a function expressions may use'],
    ["rout'", 'expression', 11, 'the operator `\'` is not available'],
    ['rout > 1 ohm', 'expression', 12, 'the operator `>` is not available'],
    ['rout / rout mod 1 S', 'expression', 19, 'the operator `mod` is not available'],
    ['rout / rout to S', 'expression', 19, 'the operator `to` is not available'],
    ['1 S * (rout and 1)', 'expression', 19, 'the operator `and` is not available'],
    ['1 S * (rout & 1)', 'expression', 19, 'the operator `&` is not available'],
    ['1 S * [rout, 1]', 'expression', 13, 'matrices and lists are not available'],
    ["'1 S * (rout ? 1 : 2)'", 'expression', 20, 'conditionals are not available'],
    ['1 S * (1:3)', 'expression', 15, 'ranges are not available'],
    ['1 S * (x = rout)', 'expression', 16, 'assignment is not available'],
    ['1 S * (rout == 1)', 'expression', 19, 'the operator `==` is not available'],
    ['e * 1 µS', 'wrong-unit', 7, 'unknown name `e`'],
    ['pi * 1 µS', 'wrong-unit', 7, 'unknown name `pi`'],
    ['1 S * "800"', 'expression', 13, 'text in quotes is not a value'],
  ];
  it.each(cases)('gm: %s', (value, rule, column, message) => {
    const r = checkText('no-code.md', doc(value));
    expect(r.findings.filter((f) => f.claim === null).map((f) => [f.rule, f.severity, f.line, f.column])).toEqual([[rule, 'error', 6, column]]);
    expect(r.findings[0].message).toContain(message);
    expect(probe()).toBeUndefined();
  });

  // What mathjs would compute, polecheck computes itself with units and dimensions.
  const arithmetic: Array<[string, number]> = [
    ['2*400 µS', 800e-6],
    ['400 µS + 400 µS', 800e-6],
    ['sqrt(640000) µS', 800e-6],
    ['800e-6 S * 1', 800e-6],
    ['(800) µS', 800e-6],
  ];
  it.each(arithmetic)('gm: %s is computed by the whitelist evaluator', (value, want) => {
    const r = checkText('no-code.md', doc(value));
    expect(r.findings.filter((f) => f.claim === null)).toEqual([]);
    expect(r.spec?.params.get('gm')?.typ.quantity.value).toBeCloseTo(want, 15);
  });

  // Text that is no expression keeps the quantity reader's error.
  const plain: Array<[string, number, string]> = [
    ['0.8 mS to µS', 14, 'unexpected `to`'],
    ['pi mS', 7, 'expected a number at `pi`'],
    ['800 µS == 800 µS', 14, 'unexpected `==`'],
  ];
  it.each(plain)('gm: %s', (value, column, message) => {
    const r = checkText('no-code.md', doc(value));
    expect(r.findings.map((f) => [f.rule, f.severity, f.line, f.column])).toEqual([['wrong-unit', 'error', 6, column]]);
    expect(r.findings[0].message).toContain(message);
  });

  it('the same in a datasheet table cell, and in its Conditions cell', () => {
    const text = `${doc('800 µS')}\n| Parameter | Typ | Conditions |\n|---|---|---|\n| GBW | evaluate("40 MHz") | CL = require('fs') |\n`;
    const r = checkText('no-code.md', text);
    expect(r.findings.map((f) => [f.rule, f.severity, f.line, f.column])).toEqual([
      ['wrong-unit', 'error', 16, 9],
      ['wrong-unit', 'error', 16, 30],
    ]);
    expect(r.findings[0].message).toContain('`evaluate("40 MHz")`');
    expect(r.findings[1].message).toContain("condition `CL = require('fs')`");
    expect(probe()).toBeUndefined();
  });

  it('a template literal is not even a plain YAML scalar (a backtick is reserved): refused by YAML at the backtick', () => {
    const r = checkText('no-code.md', doc(`\`\${${set}}\` µS`));
    expect(r.findings.map((f) => [f.rule, f.severity, f.line, f.column])).toEqual([['yaml-syntax', 'error', 6, 7]]);
    expect(probe()).toBeUndefined();
  });

  it('a clean value for comparison', () => {
    expect(checkText('no-code.md', doc('800 µS')).findings).toEqual([]);
  });
});

// ---------------------------------------------------------------------------

function sourceFiles(dir: string): string[] {
  const out: string[] = [];
  for (const name of readdirSync(dir)) {
    const p = join(dir, name);
    if (statSync(p).isDirectory()) out.push(...sourceFiles(p));
    else if (/\.(ts|mts|js|mjs)$/.test(name)) out.push(p);
  }
  return out;
}

/** Source without comments and without the contents of string and template literals (their quotes kept). */
function code(text: string): string {
  return text
    .replace(/\/\*[\s\S]*?\*\//g, '')
    .replace(/(^|[^:\\])\/\/.*$/gm, '$1');
}

describe('the sources load mathjs lazily: its parser in one chunk, and describeUnknownUnit', () => {
  const files = [...sourceFiles(join(ROOT, 'src')), ...sourceFiles(join(ROOT, 'rules'))];
  const rel = (p: string) => relative(ROOT, p).split('\\').join('/');

  it('finds the sources', () => {
    expect(files.map(rel)).toContain('src/quantity/parse.ts');
    expect(files.length).toBeGreaterThan(30);
  });

  it('the one static import of mathjs is the parser chunk, which no source imports', () => {
    const offenders = files.filter((f) => {
      const c = code(readFileSync(f, 'utf8'));
      return /\bimport\s[^;()]*?from\s*['"]mathjs(\/[^'"]*)?['"]/.test(c) || /\bimport\s*['"]mathjs/.test(c) || /\brequire\s*\(\s*['"]mathjs/.test(c) || /\bexport\s[^;]*from\s*['"]mathjs/.test(c);
    });
    expect(offenders.map(rel)).toEqual(['src/spec/mathjs-parser.ts']);
    const chunk = code(readFileSync(join(ROOT, 'src/spec/mathjs-parser.ts'), 'utf8'));
    expect(chunk).toMatch(/import \{ create, parseDependencies \} from 'mathjs'/);
    expect(chunk).toMatch(/create\(\{ parseDependencies \}, \{\}\)\.parse/);
    expect(files.filter((f) => /mathjs-parser/.test(code(readFileSync(f, 'utf8')))).map(rel)).toEqual([]);
    // expressions.ts requires the chunk (or, from the sources, the package) inside mathParse only.
    const ex = code(readFileSync(join(ROOT, 'src/spec/expressions.ts'), 'utf8'));
    const body = ex.slice(ex.indexOf('function mathParse'), ex.indexOf('\n}\n', ex.indexOf('function mathParse')));
    expect(body).toMatch(/req\('mathjs'\)/);
    expect(ex.replace(body, '')).not.toMatch(/req\(/);
  });

  it('no general-purpose evaluator in the sources: no eval, new Function, vm, or shell', () => {
    const offenders: string[] = [];
    for (const f of files) {
      const c = code(readFileSync(f, 'utf8'));
      if (/(^|[^.\w])eval\s*\(/.test(c)) offenders.push(`${rel(f)}: eval(`);
      if (/\bnew\s+Function\s*\(/.test(c) || /(^|[^.\w])Function\s*\(\s*['"`]/.test(c)) offenders.push(`${rel(f)}: Function(`);
      if (/from\s*['"](node:)?vm['"]/.test(c)) offenders.push(`${rel(f)}: vm`);
      if (/\bexecSync\s*\(|\bexec\s*\(\s*['"`]|shell\s*:\s*true/.test(c)) offenders.push(`${rel(f)}: a shell`);
      if (/\bcreateUnit\s*\(|\bmath\.(evaluate|parse|compile)\s*\(/.test(c)) offenders.push(`${rel(f)}: a mathjs evaluator`);
    }
    expect(offenders).toEqual([]);
  });
});

describe('the bundle (scripts/build.mjs): mathjs is not in the start-up module graph', () => {
  // Built into a scratch folder with the project's own build script, so the
  // shared dist/ is left alone: src, rules, node_modules and package.json are linked.
  let dir: string;
  let dist: string;
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'polecheck-bundle-'));
    for (const name of ['src', 'rules', 'node_modules', 'package.json', 'README.md']) symlinkSync(join(ROOT, name), join(dir, name));
    execFileSync(process.execPath, [join(ROOT, 'scripts', 'build.mjs')], { cwd: dir, stdio: 'pipe' });
    dist = join(dir, 'dist');
  }, 120_000);
  afterAll(() => {
    if (dir) rmSync(dir, { recursive: true, force: true });
  });

  const read = (p: string) => readFileSync(p, 'utf8');
  /** Relative specifiers of static `import … from '…'` / `import '…'` and of dynamic `import('…')`. */
  const imports = (text: string) => ({
    static: [...text.matchAll(/^\s*(?:import|export)\s(?:[^'"`;]*?\sfrom\s*)?['"](\.[^'"]+)['"]/gm)].map((m) => m[1]),
    dynamic: [...text.matchAll(/\bimport\(\s*['"](\.[^'"]+)['"]\s*\)/g)].map((m) => m[1]),
  });
  const MATHJS = /node_modules\/mathjs\/|mathjs\/lib\//;

  it('builds dist/polecheck.js', () => {
    expect(existsSync(join(dist, 'polecheck.js'))).toBe(true);
  });

  it('no module reachable from dist/polecheck.js by static imports contains mathjs', () => {
    const seen = new Set<string>();
    const lazy = new Set<string>();
    const walk = (file: string) => {
      if (seen.has(file)) return;
      seen.add(file);
      const { static: s, dynamic: d } = imports(read(file));
      for (const x of d) lazy.add(resolve(dirname(file), x));
      for (const x of s) walk(resolve(dirname(file), x));
    };
    walk(join(dist, 'polecheck.js'));
    const withMath = [...seen].filter((f) => MATHJS.test(read(f)));
    expect(withMath.map((f) => relative(dist, f))).toEqual([]);
    // Whatever holds mathjs is a chunk reached only through import(), or nothing reaches it.
    const chunks = existsSync(join(dist, 'chunks')) ? readdirSync(join(dist, 'chunks')).map((c) => join(dist, 'chunks', c)) : [];
    for (const c of chunks.filter((f) => MATHJS.test(read(f)))) expect(seen.has(c), relative(dist, c)).toBe(false);
  });

  it('a check with the bundle loads no chunk that contains mathjs', () => {
    const log = join(dir, 'loaded.txt');
    writeFileSync(join(dir, 'hooks.mjs'), "import { appendFileSync } from 'node:fs';\nexport async function resolve(specifier, context, next) {\n  const r = await next(specifier, context);\n  appendFileSync(process.env.POLECHECK_LOAD_LOG, r.url + '\\n');\n  return r;\n}\n");
    writeFileSync(join(dir, 'register.mjs'), "import { register } from 'node:module';\nregister('./hooks.mjs', import.meta.url);\n");
    const specs = join(dir, 'specs');
    mkdirSync(specs);
    // A clean spec and one with an unknown unit (the error path).
    writeFileSync(join(specs, 'a.md'), doc('800 µS'));
    writeFileSync(join(specs, 'b.md'), doc('800 kg'));
    const run = spawnSync(process.execPath, ['--import', join(dir, 'register.mjs'), join(dist, 'polecheck.js'), '--format', 'json', specs], { env: { ...process.env, POLECHECK_LOAD_LOG: log, NO_COLOR: '1' }, encoding: 'utf8' });
    expect(run.status, run.stderr).toBe(1);
    const out = JSON.parse(run.stdout) as { files: Array<{ path: string; findings: Array<{ rule: string; line: number; column: number }> }> };
    expect(out.files.find((f) => f.path.endsWith('b.md'))!.findings.map((f) => [f.rule, f.line, f.column])).toEqual([['wrong-unit', 6, 11]]);
    const loaded = read(log).split('\n').filter((u) => u.startsWith('file:') && u.includes('/dist/'));
    expect(loaded.length).toBeGreaterThan(0);
    const withMath = loaded.filter((u) => MATHJS.test(read(fileURLToPath(u))));
    expect(withMath).toEqual([]);
  });
});

describe('the expression chunk (dist/expr.cjs) of the bundle', () => {
  let dir: string;
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'polecheck-expr-'));
    for (const name of ['src', 'rules', 'node_modules', 'package.json', 'README.md']) symlinkSync(join(ROOT, name), join(dir, name));
    execFileSync(process.execPath, [join(ROOT, 'scripts', 'build.mjs')], { cwd: dir, stdio: 'pipe' });
    // CommonJS loads (the bundle requires the chunk) are logged by a preloaded hook.
    writeFileSync(join(dir, 'log-require.cjs'), "const M = require('node:module'); const fs = require('node:fs'); const load = M._load; M._load = function (request, parent, isMain) { const out = load.apply(this, arguments); try { fs.appendFileSync(process.env.POLECHECK_LOAD_LOG, M._resolveFilename(request, parent, isMain) + '\\n'); } catch {} return out; };\n");
  }, 120_000);
  afterAll(() => {
    if (dir) rmSync(dir, { recursive: true, force: true });
  });
  const run = (text: string) => {
    const specs = mkdtempSync(join(dir, 'specs-'));
    writeFileSync(join(specs, 'a.md'), text);
    const log = join(specs, 'loaded.txt');
    writeFileSync(log, '');
    const r = spawnSync(process.execPath, ['--require', join(dir, 'log-require.cjs'), join(dir, 'dist', 'polecheck.js'), '--format', 'json', specs], { env: { ...process.env, POLECHECK_LOAD_LOG: log, NO_COLOR: '1', POLECHECK_WORKERS: '0' }, encoding: 'utf8' });
    return { r, loaded: readFileSync(log, 'utf8').split('\n').filter(Boolean) };
  };

  it('holds the parser, and the main bundle does not', () => {
    expect(readFileSync(join(dir, 'dist', 'expr.cjs'), 'utf8')).toMatch(/node_modules\/mathjs\//);
    expect(readFileSync(join(dir, 'dist', 'polecheck.cjs'), 'utf8')).not.toMatch(/node_modules\/mathjs\//);
  });

  it('a plain spec does not load it; a spec with an expression does, and checks', () => {
    const plain = run(doc('800 µS'));
    expect(plain.r.status, plain.r.stderr).toBe(0);
    // The hook sees the process's CommonJS loads (Node's own modules at least).
    expect(plain.loaded.length).toBeGreaterThan(0);
    expect(plain.loaded.filter((f) => f.endsWith('expr.cjs'))).toEqual([]);
    const expr = run(doc('2 * 400 µS'));
    expect(expr.loaded.filter((f) => f.endsWith('expr.cjs')), expr.r.stdout + expr.r.stderr + expr.loaded.join(' ')).toHaveLength(1);
    const out = JSON.parse(expr.r.stdout) as { files: Array<{ findings: Array<{ rule: string; claim: string | null }> }> };
    // The same findings as the plain spec: gm is 800 µS either way.
    expect(out.files[0].findings.map((f) => [f.rule, f.claim])).toEqual((JSON.parse(plain.r.stdout) as typeof out).files[0].findings.map((f) => [f.rule, f.claim]));
    const hostile = run(doc("createUnit('x') * 1 S"));
    expect(hostile.r.status).toBe(1);
    expect(hostile.r.stdout).toContain('is not a function expressions may use');
    expect(probe()).toBeUndefined();
  });
});

describe('command-line values are not options to git', () => {
  const hasGit = spawnSync('git', ['--version']).status === 0;
  it.skipIf(!hasGit)('--changed=--output=FILE is refused and writes no file', () => {
    const repo = mkdtempSync(join(tmpdir(), 'polecheck-git-'));
    try {
      const git = (...args: string[]) => execFileSync('git', args, { cwd: repo, stdio: 'pipe' });
      git('init', '-q');
      git('-c', 'user.email=fuzz@example.invalid', '-c', 'user.name=fuzz', 'commit', '-q', '--allow-empty', '-m', 'init');
      writeFileSync(join(repo, 'a.md'), doc('800 µS'));
      const victim = join(repo, 'victim.txt');
      writeFileSync(victim, 'data that must survive\n');
      const err: string[] = [];
      const status = main([`--changed=--output=${victim}`, '.'], { stdout: () => {}, stderr: (s) => err.push(s), env: { NO_COLOR: '1' }, isTTY: false, cwd: repo });
      expect(read(victim)).toBe('data that must survive\n');
      expect(status).toBe(2);
      expect(err.join('')).toContain('--changed');
    } finally {
      rmSync(repo, { recursive: true, force: true });
    }
    function read(p: string) {
      return readFileSync(p, 'utf8');
    }
  });
});
