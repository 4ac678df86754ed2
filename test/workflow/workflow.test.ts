// The workflow around the checks: configuration, waivers, --restate, cache,
// shards, --changed and the published schema.
import { execFileSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Ajv from 'ajv';
import { load } from 'js-yaml';
import { describe, expect, it } from 'vitest';
import { ResultCache } from '../../src/cache';
import { checkText } from '../../src/check';
import { main, writeAtomically } from '../../src/cli';
import { ConfigError, parseConfig } from '../../src/config';
import { configSchema, jsonSchema } from '../../src/schema-json';

const SPEC = (claims: string, extra = '') => `---
polecheck: 1
block: strand-workflow-test
topology: two-stage-miller
params:
  gm1: 180 µS
  r1: 2.2 MΩ
  c1: 45 fF
  gm2: 1.6 mS
  r2: 150 kΩ
  c2: 120 fF
  cc: 1.2 pF   # compensation
conditions:
  cl: 2 pF
claims:
${claims}
${extra}---

# Body text stays as it is.
`;
// Model at these values (cl = 2 pF, β = 1): GBW 23.4 MHz, phase margin 72.1°, DC gain 99.6 dB.

function run(args: string[], cwd: string) {
  let stdout = '';
  let stderr = '';
  const status = main(args, { stdout: (s) => (stdout += s), stderr: (s) => (stderr += s), env: {}, isTTY: false, cwd });
  return { status, stdout, stderr };
}

const tmp = () => mkdtempSync(join(tmpdir(), 'polecheck-wf-'));

describe('configuration (polecheck.yaml)', () => {
  it('turns a rule off, changes a severity and a tolerance', () => {
    const text = SPEC('  gbw: 20 MHz   # 17 % high\n  phase_margin: {min: 60 deg}');
    expect(checkText('a.md', text).findings.map((f) => `${f.rule}:${f.severity}`)).toContain('gain-bandwidth:error');
    const config = parseConfig('polecheck.yaml', 'rules:\n  gain-bandwidth: warning\ntolerances:\n  angle: 2 deg\n');
    const r = checkText('a.md', text, { rules: config.rules, tolerances: config.tolerances });
    expect(r.findings.filter((f) => f.rule === 'gain-bandwidth').map((f) => f.severity)).toEqual(['warning']);
    const widened = parseConfig('p.yaml', 'tolerances:\n  frequency: 20%\n');
    expect(checkText('a.md', text, { tolerances: widened.tolerances }).findings.filter((f) => f.rule === 'gain-bandwidth')).toEqual([]);
    const off = parseConfig('p.yaml', 'rules:\n  gain-bandwidth: none\n');
    expect(checkText('a.md', text, { rules: off.rules }).findings.filter((f) => f.rule === 'gain-bandwidth')).toEqual([]);
  });

  it('reports an invalid configuration at its line and column', () => {
    const cases: Array<[string, string, RegExp]> = [
      ['rules:\n  phase-margn: none\n', 'p.yaml:2:3', /unknown rule `phase-margn`; did you mean `phase-margin`/],
      ['rules:\n  phase-margin: loud\n', 'p.yaml:2:17', /level of `phase-margin` is one of none, note, warning, error/],
      ['rules:\n  second-pole-spacing: {ratio: high}\n', 'p.yaml:2:32', /option `ratio` of `second-pole-spacing` takes a number/],
      ['rules:\n  phase-margin: {ratio: 2}\n', 'p.yaml:2:18', /`phase-margin` has no option `ratio`/],
      ['tolerances:\n  frequency: 5 dB\n', 'p.yaml:2:14', /takes a positive percentage/],
      ['tolerence: {}\n', 'p.yaml:1:1', /unknown key `tolerence`; did you mean `tolerances`/],
      ['rules: [a\n', 'p.yaml:2:1', /not valid YAML/],
    ];
    for (const [text, where, message] of cases) {
      let err: unknown;
      try {
        parseConfig('p.yaml', text);
      } catch (e) {
        err = e;
      }
      expect(err, text).toBeInstanceOf(ConfigError);
      expect((err as Error).message, text).toContain(where);
      expect((err as Error).message, text).toMatch(message);
    }
  });

  it('is found by walking up to the repository root, --config overrides it, and a bad one is exit 2', () => {
    const root = tmp();
    mkdirSync(join(root, '.git'));
    mkdirSync(join(root, 'docs', 'amps'), { recursive: true });
    writeFileSync(join(root, 'docs', 'amps', 'a.md'), SPEC('  gbw: 20 MHz'));
    expect(run(['a.md'], join(root, 'docs', 'amps')).status).toBe(1);
    writeFileSync(join(root, 'polecheck.yaml'), 'rules:\n  gain-bandwidth: warning\n');
    expect(run(['a.md'], join(root, 'docs', 'amps')).status).toBe(0);
    writeFileSync(join(root, 'strict.yaml'), 'rules:\n  gain-bandwidth: error\n');
    expect(run(['--config', join(root, 'strict.yaml'), 'a.md'], join(root, 'docs', 'amps')).status).toBe(1);
    writeFileSync(join(root, 'polecheck.yaml'), 'rules:\n  nope: none\n');
    const bad = run(['a.md'], join(root, 'docs', 'amps'));
    expect(bad.status).toBe(2);
    expect(bad.stderr).toMatch(/polecheck\.yaml:2:3: unknown rule `nope`/);
  });

  it('applies include and exclude globs relative to the configuration', () => {
    const root = tmp();
    mkdirSync(join(root, '.git'));
    mkdirSync(join(root, 'specs', 'archive'), { recursive: true });
    writeFileSync(join(root, 'specs', 'new.md'), SPEC('  gbw: 20 MHz'));
    writeFileSync(join(root, 'specs', 'archive', 'old.md'), SPEC('  gbw: 20 MHz'));
    writeFileSync(join(root, 'notes.md'), SPEC('  gbw: 20 MHz'));
    writeFileSync(join(root, 'polecheck.yaml'), 'include: [specs/**/*.md]\nexclude: [specs/archive/**]\n');
    const r = run(['--format', 'json', '.'], root);
    expect(JSON.parse(r.stdout).files.map((f: { path: string }) => f.path)).toEqual(['./specs/new.md']);
  });
});

describe('waivers', () => {
  const today = '2026-12-01';
  it('accepts a finding with a reason: listed as waived, not counted', () => {
    const text = SPEC('  gbw: 20 MHz', 'waivers:\n  - rule: gain-bandwidth\n    claim: gbw\n    reason: accepted at the rev C review; GBW measured on silicon\n    expires: 2027-06-30\n');
    const r = checkText('a.md', text, { today });
    const f = r.findings.find((x) => x.rule === 'gain-bandwidth')!;
    expect(f.waived).toEqual({ reason: 'accepted at the rev C review; GBW measured on silicon', expires: '2027-06-30', line: 18 });
    expect(r.findings.filter((x) => x.rule === 'waiver')).toEqual([]);
  });

  it('refuses a waiver without a reason, lets an expired one lapse, and warns about one that matches nothing', () => {
    const noReason = checkText('a.md', SPEC('  gbw: 20 MHz', 'waivers:\n  - rule: gain-bandwidth\n'), { today });
    expect(noReason.findings.filter((x) => x.rule === 'waiver').map((x) => `${x.line}:${x.column} ${x.severity}`)).toEqual(['18:5 error']);
    expect(noReason.findings.find((x) => x.rule === 'gain-bandwidth')!.waived).toBeUndefined();
    const expired = checkText('a.md', SPEC('  gbw: 20 MHz', 'waivers:\n  - {rule: gain-bandwidth, reason: old review, expires: 2026-11-30}\n'), { today });
    expect(expired.findings.find((x) => x.rule === 'waiver')!.message).toMatch(/expired on 2026-11-30/);
    expect(expired.findings.find((x) => x.rule === 'gain-bandwidth')!.waived).toBeUndefined();
    const stale = checkText('a.md', SPEC('  gbw: 23 MHz', 'waivers:\n  - {rule: gain-bandwidth, reason: once needed}\n'), { today });
    const w = stale.findings.filter((x) => x.rule === 'waiver');
    expect(w.map((x) => x.severity)).toEqual(['warning']);
    expect(w[0].message).toMatch(/matches no finding/);
  });

  it('exits 0 when every error is waived, and shows the waiver in text and JSON', () => {
    const dir = tmp();
    writeFileSync(join(dir, 'a.md'), SPEC('  gbw: 20 MHz', 'waivers:\n  - {rule: gain-bandwidth, reason: accepted at review}\n'));
    const t = run(['a.md'], dir);
    expect(t.status).toBe(0);
    expect(t.stdout).toMatch(/waived +gbw +stated 20 MHz .*a\.md:16:3\n +accepted: accepted at review\n/);
    const j = JSON.parse(run(['--format', 'json', 'a.md'], dir).stdout);
    expect(j.summary).toMatchObject({ errors: 0, waived: 1 });
    expect(j.files[0].findings[0].waived).toMatchObject({ reason: 'accepted at review' });
  });
});

describe('--restate', () => {
  const stale = SPEC('  gbw: 20 MHz          # stale\n  dc_gain: "90 dB"\n  phase_margin: {min: 80 deg}');

  it('rewrites typical claims in the author\'s unit and precision, leaves bounds and params alone, keeps every other byte', () => {
    const dir = tmp();
    const file = join(dir, 'a.md');
    // CRLF line ends and a byte-order mark must survive.
    const original = `\uFEFF${stale.replace(/\n/g, '\r\n')}`;
    writeFileSync(file, original);
    const r = run(['--restate', 'a.md'], dir);
    const fixed = readFileSync(file, 'utf8');
    expect(r.stderr).toMatch(/fixed 2 claims in a\.md \(gbw at line 16, dc_gain at line 17\)/);
    // GBW 23.4 MHz at two digits; DC gain 99.6 dB at the author's whole decibels.
    expect(fixed).toBe(original.replace('gbw: 20 MHz', 'gbw: 23 MHz').replace('dc_gain: "90 dB"', 'dc_gain: "100 dB"'));
    // The failing bound is still reported: --restate does not touch bounds without --restate-bounds.
    expect(r.status).toBe(1);
    expect(r.stdout).toMatch(/fails +phase_margin +stated ≥ 80 deg/);
    // A second run changes nothing.
    const again = run(['--restate', 'a.md'], dir);
    expect(again.stderr).not.toMatch(/fixed/);
    expect(readFileSync(file, 'utf8')).toBe(fixed);
  });

  it('--restate-bounds moves a failing bound to what the model supports', () => {
    const dir = tmp();
    writeFileSync(join(dir, 'a.md'), stale);
    run(['--restate', '--restate-bounds', 'a.md'], dir);
    expect(readFileSync(join(dir, 'a.md'), 'utf8')).toMatch(/phase_margin: \{min: 72 deg\}/);
  });

  it('fixes table cells, the number alone when the unit is in its own column', () => {
    const dir = tmp();
    const text = `${SPEC('  dc_gain: 99.6 dB')}\n| Parameter | Typ | Unit |\n| --- | --- | --- |\n| GBW | 30 | MHz |\n| Phase margin | 50° | |\n`;
    writeFileSync(join(dir, 'a.md'), text);
    run(['--restate', 'a.md'], dir);
    expect(readFileSync(join(dir, 'a.md'), 'utf8')).toBe(text.replace('| GBW | 30 | MHz |', '| GBW | 23 | MHz |').replace('| Phase margin | 50° |', '| Phase margin | 72° |'));
  });

  it('--preview prints a unified diff and writes nothing', () => {
    const dir = tmp();
    writeFileSync(join(dir, 'a.md'), stale);
    const r = run(['--preview', 'a.md'], dir);
    expect(r.stdout).toMatch(/^--- a\.md\n\+\+\+ a\.md\n@@ /m);
    expect(r.stdout).toMatch(/^-  gbw: 20 MHz {10}# stale$/m);
    expect(r.stdout).toMatch(/^\+  gbw: 23 MHz {10}# stale$/m);
    expect(readFileSync(join(dir, 'a.md'), 'utf8')).toBe(stale);
  });

  it('does not write over a file that changed since it was read', () => {
    const dir = tmp();
    const file = join(dir, 'a.md');
    writeFileSync(file, 'edited by someone else\n');
    expect(writeAtomically(file, 'what polecheck read\n', 'fixed\n')).toBe('changed');
    expect(readFileSync(file, 'utf8')).toBe('edited by someone else\n');
    expect(readdirSync(dir)).toEqual(['a.md']); // no temporary file left behind
    expect(writeAtomically(file, 'edited by someone else\n', 'fixed\n')).toBe('written');
    expect(readFileSync(file, 'utf8')).toBe('fixed\n');
  });
});

describe('--cache and --shard', () => {
  it('serves unchanged files from the cache, keyed by content, and gives the same report', () => {
    const dir = tmp();
    writeFileSync(join(dir, 'a.md'), SPEC('  gbw: 20 MHz'));
    writeFileSync(join(dir, 'b.md'), SPEC('  gbw: 23 MHz'));
    const first = run(['--cache', '--format', 'json', '.'], dir);
    // The cache folder's own .gitignore, and one entry per file.
    const entries = readdirSync(join(dir, '.polecheck-cache')).filter((e) => e !== '.gitignore');
    expect(entries).toHaveLength(2);
    const second = run(['--cache', '--format', 'json', '.'], dir);
    expect(second.stdout).toBe(first.stdout);
    // Same content under another name: a hit; changed content: a miss.
    const cache = new ResultCache(join(dir, 'c'), 'salt');
    expect(cache.get('x')).toBeUndefined();
    cache.set('x', { skipped: false, findings: [] });
    expect(cache.get('x')).toEqual({ skipped: false, findings: [] });
    expect(cache.get('y')).toBeUndefined();
    expect([cache.hits, cache.misses]).toEqual([1, 2]);
    expect(new ResultCache(join(dir, 'c'), 'other config').get('x')).toBeUndefined();
  });

  it('splits the files into shards that cover every file exactly once', () => {
    const dir = tmp();
    for (let i = 0; i < 17; i++) writeFileSync(join(dir, `s${String(i).padStart(2, '0')}.md`), SPEC('  gbw: 23 MHz'));
    const shard = (i: number, n: number) => JSON.parse(run(['--format', 'json', '--shard', `${i}/${n}`, '.'], dir).stdout).files.map((f: { path: string }) => f.path);
    for (const n of [1, 3, 5]) {
      const parts = Array.from({ length: n }, (_, i) => shard(i + 1, n));
      const all = parts.flat();
      expect(new Set(all).size).toBe(17);
      expect(all).toHaveLength(17);
    }
    expect(run(['--shard', '4/3', '.'], dir).status).toBe(2);
  });
});

describe('--changed', () => {
  it('checks only files changed against the ref, and untracked ones', () => {
    const dir = tmp();
    const git = (...args: string[]) => execFileSync('git', args, { cwd: dir, stdio: 'pipe', env: { ...process.env, GIT_AUTHOR_NAME: 't', GIT_AUTHOR_EMAIL: 't@x', GIT_COMMITTER_NAME: 't', GIT_COMMITTER_EMAIL: 't@x' } });
    git('init', '-q');
    writeFileSync(join(dir, 'a.md'), SPEC('  gbw: 20 MHz'));
    writeFileSync(join(dir, 'b.md'), SPEC('  gbw: 20 MHz'));
    git('add', '.');
    git('commit', '-qm', 'specs');
    writeFileSync(join(dir, 'b.md'), SPEC('  gbw: 21 MHz'));
    writeFileSync(join(dir, 'c.md'), SPEC('  gbw: 20 MHz'));
    const files = JSON.parse(run(['--format', 'json', '--changed', 'HEAD', '.'], dir).stdout).files.map((f: { path: string }) => f.path);
    expect(files).toEqual(['./b.md', './c.md']);
    expect(run(['--changed', 'no-such-ref', '.'], dir).status).toBe(2);
  });
});

describe('polecheck schema', () => {
  const schema = jsonSchema();
  const ajv = new Ajv({ allErrors: true, strict: false });
  const validate = ajv.compile(schema);
  const frontMatter = (text: string) => load(text.split(/^---\s*$/m)[1]);

  it('accepts the front matter of every demo spec', () => {
    const dir = 'specs/strand';
    for (const f of readdirSync(dir)) {
      const ok = validate(frontMatter(readFileSync(join(dir, f), 'utf8')));
      expect(ok, `${f}: ${JSON.stringify(validate.errors)}`).toBe(true);
    }
  });

  it('rejects what the reader rejects: unknown keys, wrong units, a misspelt topology', () => {
    const base = frontMatter(SPEC('  gbw: 23 MHz')) as Record<string, Record<string, unknown>>;
    expect(validate(base)).toBe(true);
    for (const bad of [
      { ...base, params: { ...base.params, ccc: '1 pF' } },
      { ...base, params: { ...base.params, cc: '1.2 MHz' } },
      { ...base, claims: { phase_margn: '60 deg' } },
      { ...base, topology: 'two-stage-miler' },
      { ...base, colour: 'red' },
    ]) {
      expect(validate(bad), JSON.stringify(bad).slice(0, 80)).toBe(false);
      expect(checkText('x.md', `---\n${JSON.stringify(bad)}\n---\n`).findings.some((f) => f.severity === 'error')).toBe(true);
    }
  });

  it('is printed by `polecheck schema`', () => {
    const r = run(['schema'], tmp());
    expect(JSON.parse(r.stdout).$schema).toBe('http://json-schema.org/draft-07/schema#');
  });
});

describe('polecheck schema config', () => {
  const validate = new Ajv({ allErrors: true, strict: false }).compile(configSchema());
  it('accepts what the reader accepts and rejects what it rejects', () => {
    const good = ['rules:\n  second-pole-spacing: none\n  rhp-zero-spacing: {level: warning, ratio: 8}\ntolerances:\n  frequency: 5%\n  gain: 0.5 dB\n  angle: 2 deg\ninclude: [specs/**/*.md]\n'];
    const bad = ['rules:\n  phase-margn: none\n', 'rules:\n  phase-margin: loud\n', 'tolerances:\n  frequency: 5 dB\n', 'tolerence: {}\n', 'rules:\n  phase-margin: {ratio: 2}\n'];
    for (const text of good) {
      expect(validate(load(text)), text).toBe(true);
      expect(() => parseConfig('p.yaml', text)).not.toThrow();
    }
    for (const text of bad) {
      expect(validate(load(text)), text).toBe(false);
      expect(() => parseConfig('p.yaml', text), text).toThrow(ConfigError);
    }
  });
});
