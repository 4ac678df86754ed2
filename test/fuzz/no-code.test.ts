// No expression in a document is ever evaluated. Values are parsed by
// polecheck's own quantity grammar (a number, a unit); anything else is a
// wrong unit at its place, and code-like text stays text (a global probe
// proves nothing ran). mathjs, which has a general expression evaluator, is
// only ever imported lazily by describeUnknownUnit: no static import in the
// sources, and in the bundle it lives outside the start-up module graph (a
// lazily loaded chunk, if at all) and is not loaded by a check. Command-line
// values are not passed on to git as options.

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

describe('code-like values are text: reported as wrong units, never run', () => {
  const set = `globalThis.${PROBE} = 1`;
  // [value as written, column of the finding, message fragment]
  const cases: Array<[string, number, string]> = [
    ['evaluate("1+1")', 7, 'expected a number at `evaluate("1+1")`'],
    ['evaluate("800 uS")', 7, 'expected a number at `evaluate("800`'],
    ['${process.exit(1)}', 7, 'expected a number at `${process.exit(1)}`'],
    [`\${${set}}`, 7, 'expected a number at'],
    ["require('fs')", 7, "expected a number at `require('fs')`"],
    ["import('fs')", 7, "expected a number at `import('fs')`"],
    ["eval('1')", 7, "expected a number at `eval('1')`"],
    [`Function('${set}')()`, 7, 'expected a number at'],
    ["createUnit('polecheck')", 7, "expected a number at `createUnit('polecheck')`"],
    ['constructor.constructor("return process")()', 7, 'expected a number at'],
    ['800 µS; process.exit(1)', 13, 'unexpected `;` after `800 µS`'],
    ["800 require('fs')", 11, "unknown unit `require('fs')`"],
    ['800 evaluate', 11, 'unknown unit `evaluate`'],
    ['800 createUnit', 11, 'unknown unit `createUnit`'],
  ];
  it.each(cases)('gm: %s', (value, column, message) => {
    const r = checkText('no-code.md', doc(value));
    expect(r.findings.map((f) => [f.rule, f.severity, f.line, f.column])).toEqual([['wrong-unit', 'error', 6, column]]);
    expect(r.findings[0].message).toContain(message);
    expect(probe()).toBeUndefined();
  });

  // Expressions mathjs would evaluate to a valid conductance are not arithmetic to polecheck.
  const arithmetic: Array<[string, number, string]> = [
    ['2*400 µS', 8, 'unknown unit `*400`'],
    ['400 µS + 400 µS', 14, 'unexpected `+`'],
    ['0.8 mS to µS', 14, 'unexpected `to`'],
    ['sqrt(640000) µS', 7, 'expected a number at `sqrt(640000)`'],
    ['800e-6 S * 1', 16, 'unexpected `*`'],
    ['(800) µS', 7, 'expected a number at `(800)`'],
    ['pi mS', 7, 'expected a number at `pi`'],
  ];
  it.each(arithmetic)('gm: %s is not computed', (value, column, message) => {
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

describe('the sources import mathjs lazily, and only in describeUnknownUnit', () => {
  const files = [...sourceFiles(join(ROOT, 'src')), ...sourceFiles(join(ROOT, 'rules'))];
  const rel = (p: string) => relative(ROOT, p).split('\\').join('/');

  it('finds the sources', () => {
    expect(files.map(rel)).toContain('src/quantity/parse.ts');
    expect(files.length).toBeGreaterThan(30);
  });

  it('no static import or require of mathjs anywhere', () => {
    const offenders = files.filter((f) => {
      const c = code(readFileSync(f, 'utf8'));
      return /\bimport\s[^;()]*?from\s*['"]mathjs(\/[^'"]*)?['"]/.test(c) || /\bimport\s*['"]mathjs/.test(c) || /\brequire\s*\(\s*['"]mathjs/.test(c) || /\bexport\s[^;]*from\s*['"]mathjs/.test(c);
    });
    expect(offenders.map(rel)).toEqual([]);
  });

  it('the one dynamic import is in src/quantity/parse.ts, inside describeUnknownUnit', () => {
    const dynamic = files.filter((f) => /(?<!typeof\s)\bimport\s*\(\s*['"]mathjs['"]\s*\)(?!\s*\.)/.test(code(readFileSync(f, 'utf8')).replace(/typeof import\(['"]mathjs['"]\)/g, '').replace(/import\(['"]mathjs['"]\)\.\w+/g, '')));
    expect(dynamic.map(rel)).toEqual(['src/quantity/parse.ts']);
    const parse = code(readFileSync(join(ROOT, 'src/quantity/parse.ts'), 'utf8'));
    const fn = parse.slice(parse.indexOf('export async function describeUnknownUnit'));
    expect(fn.length).toBeLessThan(parse.length);
    const body = fn.slice(0, fn.indexOf('\n}\n') + 2);
    expect(body).toMatch(/import\(\s*['"]mathjs['"]\s*\)/);
    // Outside that function the module mentions mathjs only in type positions.
    const rest = parse.replace(body, '').replace(/typeof import\(['"]mathjs['"]\)/g, '').replace(/import\(['"]mathjs['"]\)\.\w+/g, '');
    expect(rest).not.toMatch(/import\(\s*['"]mathjs['"]\s*\)/);
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
