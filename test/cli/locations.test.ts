// Where the CI formats place a finding: relative to the repository's root
// (git's top level), whether polecheck runs from a subfolder or is given
// absolute paths as lint-staged gives them; the SARIF is checked by the SARIF
// Multitool's validator. The text and JSON reports keep the paths as given.
import { execFileSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, realpathSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { main } from '../../src/cli';
import { repoRelative, repositoryRoot } from '../../src/cli/locations';
import { validateSarif } from '../report/multitool';
import { ADC_DRIVER, overclaimedGainSpec } from './fixtures';

// eslint-disable-next-line @typescript-eslint/no-explicit-any
type Json = any;

const base = realpathSync(mkdtempSync(join(tmpdir(), 'polecheck-loc-')));
afterAll(() => rmSync(base, { recursive: true, force: true }));

const repo = join(base, 'design');
const sub = join(repo, 'specs', 'front end');
mkdirSync(sub, { recursive: true });
execFileSync('git', ['init', '-q'], { cwd: repo });
const SPEC = join(sub, 'adc driver.md');
writeFileSync(SPEC, overclaimedGainSpec(ADC_DRIVER));
const IN_REPO = 'specs/front end/adc driver.md';

function run(args: string[], cwd: string) {
  let stdout = '';
  let stderr = '';
  const status = main(args, { stdout: (s) => (stdout += s), stderr: (s) => (stderr += s), env: {}, isTTY: false, cwd });
  return { status, stdout, stderr };
}

// The same file named three ways: from a subfolder, absolutely (lint-staged), from the root.
const WAYS: Array<[string, string, string]> = [
  ['from a subfolder', sub, 'adc driver.md'],
  ['by an absolute path', repo, SPEC],
  ['by an absolute path from elsewhere in the repository', join(repo, 'specs'), SPEC],
];

describe('CI formats place findings relative to the repository root', () => {
  for (const [how, cwd, path] of WAYS) {
    it(`GitLab and GitHub, ${how}`, () => {
      const gitlab = run(['--format', 'gitlab', path], cwd);
      expect(gitlab.status).toBe(1);
      const issues: Json[] = JSON.parse(gitlab.stdout);
      expect(issues.length).toBeGreaterThan(0);
      expect(new Set(issues.map((i) => i.location.path))).toEqual(new Set([IN_REPO]));

      const github = run(['--format', 'github', path], cwd);
      const lines = github.stdout.trim().split('\n');
      expect(lines.length).toBe(issues.length);
      // The runner's property escaping leaves the space as it is.
      for (const l of lines) expect(l).toMatch(/^::(error|warning|notice) file=specs\/front end\/adc driver\.md,line=\d+,col=\d+,/);
    });

    it(`SARIF, ${how}: %SRCROOT% is the repository root`, () => {
      const log: Json = JSON.parse(run(['--format', 'sarif', path], cwd).stdout);
      const r = log.runs[0];
      expect(r.originalUriBaseIds).toEqual({ '%SRCROOT%': { uri: `${pathToFileURL(repo).href}/` } });
      expect(r.artifacts.map((a: Json) => a.location)).toEqual([{ uri: 'specs/front%20end/adc%20driver.md', uriBaseId: '%SRCROOT%' }]);
      for (const res of r.results) expect(res.locations[0].physicalLocation.artifactLocation).toEqual({ uri: 'specs/front%20end/adc%20driver.md', uriBaseId: '%SRCROOT%', index: 0 });
      // The fingerprints do not depend on where the run started.
      const fingerprints = r.results.map((x: Json) => x.partialFingerprints);
      expect(JSON.parse(run(['--format', 'sarif', IN_REPO], repo).stdout).runs[0].results.map((x: Json) => x.partialFingerprints)).toEqual(fingerprints);
    });
  }

  it('the SARIF of each way passes the SARIF Multitool with no error, no warning and no note about absolute file URIs', () => {
    const files = WAYS.map(([, cwd, path], i) => {
      const out = join(base, `run-${i}.sarif`);
      expect(run(['--format', 'sarif', '--out', out, path], cwd).status).toBe(1);
      return out;
    });
    const { run: vrun, reported } = validateSarif(base, files);
    expect(vrun.invocations[0].executionSuccessful).toBe(true);
    for (const f of files) {
      const found = reported(f);
      expect(found.some((x) => x.rule === 'SARIF2009')).toBe(true); // the file was analysed
      expect(found.filter((x) => x.level === 'error' || x.level === 'warning')).toEqual([]);
      // SARIF2016 (FileUrisShouldBeRelative) is what an absolute path outside %SRCROOT% draws.
      expect(found.filter((x) => x.rule === 'SARIF2016')).toEqual([]);
    }
  });

  it('the text and JSON reports keep the path as given (the text as path:line:col for the terminal)', () => {
    const json = JSON.parse(run(['--format', 'json', 'adc driver.md'], sub).stdout);
    expect(json.files[0].path).toBe('adc driver.md');
    expect(JSON.parse(run(['--format', 'json', SPEC], repo).stdout).files[0].path).toBe(SPEC);
    expect(run(['adc driver.md'], sub).stdout).toMatch(/ adc driver\.md:\d+:\d+\n/);
  });
});

describe('the repository root', () => {
  it('is the nearest folder holding .git (a folder, or the file of a worktree), or the folder itself outside one', () => {
    expect(repositoryRoot(sub)).toBe(repo);
    const worktree = join(base, 'worktree', 'deep');
    mkdirSync(worktree, { recursive: true });
    writeFileSync(join(base, 'worktree', '.git'), 'gitdir: /elsewhere/.git/worktrees/w\n');
    expect(repositoryRoot(worktree)).toBe(join(base, 'worktree'));
    const outside = mkdtempSync(join(tmpdir(), 'polecheck-nogit-'));
    try {
      // (tmpdir itself is not inside a repository on the machines this runs on.)
      expect(repositoryRoot(outside)).toBe(outside);
    } finally {
      rmSync(outside, { recursive: true, force: true });
    }
  });

  it('takes paths through a symbolic link to the repository by their real place, and leaves files outside it absolute', () => {
    const link = join(base, 'link-to-design');
    symlinkSync(repo, link);
    expect(repoRelative(join(link, IN_REPO), base, repo)).toBe(IN_REPO);
    expect(repoRelative('../elsewhere.md', repo, repo)).toBe(join(base, 'elsewhere.md'));
    expect(repoRelative('./specs/x.md', repo, repo)).toBe('specs/x.md');
  });
});
