// --changed against a real git repository: the default (HEAD), a branch
// (compared from its merge base with HEAD, as a reviewer reads a branch), a
// commit (compared as it is), and the errors, which carry git's own message.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { main } from '../../src/cli';
import { ADC_DRIVER, BRIDGE_BUFFER, consistentSpec, overclaimedGainSpec } from './fixtures';

const dir = mkdtempSync(join(tmpdir(), 'polecheck-changed-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const env = { ...process.env, GIT_AUTHOR_NAME: 't', GIT_AUTHOR_EMAIL: 't@x', GIT_COMMITTER_NAME: 't', GIT_COMMITTER_EMAIL: 't@x' };
const git = (...args: string[]) => execFileSync('git', args, { cwd: dir, encoding: 'utf8', stdio: 'pipe', env }).trim();

function checked(args: string[]): { status: number; files: string[]; stderr: string } {
  let stdout = '';
  let stderr = '';
  const status = main(['--format', 'json', ...args], { stdout: (s) => (stdout += s), stderr: (s) => (stderr += s), env: {}, isTTY: false, cwd: dir });
  return { status, stderr, files: stdout ? JSON.parse(stdout).files.map((f: { path: string }) => f.path) : [] };
}

// main: a.md, b.md committed; feature (from there): a.md changed; main then changes b.md.
git('init', '-q', '-b', 'main');
writeFileSync(join(dir, 'a.md'), consistentSpec(ADC_DRIVER));
writeFileSync(join(dir, 'b.md'), consistentSpec(BRIDGE_BUFFER));
git('add', '.');
git('commit', '-qm', 'specs');
git('checkout', '-qb', 'feature');
writeFileSync(join(dir, 'a.md'), overclaimedGainSpec(ADC_DRIVER));
git('commit', '-qam', 'feature: a');
git('checkout', '-q', 'main');
writeFileSync(join(dir, 'b.md'), overclaimedGainSpec(BRIDGE_BUFFER));
git('commit', '-qam', 'main: b');
const mainTip = git('rev-parse', 'HEAD');
git('checkout', '-q', 'feature');

describe('--changed', () => {
  it('without a ref: the working tree against HEAD, untracked files included', () => {
    expect(checked(['--changed', '.']).files).toEqual([]);
    writeFileSync(join(dir, 'c.md'), consistentSpec(ADC_DRIVER));
    try {
      expect(checked(['--changed', '.']).files).toEqual(['./c.md']);
    } finally {
      rmSync(join(dir, 'c.md'));
    }
  });

  it('a branch: what this side changed since the merge base, not what the branch moved on to', () => {
    expect(checked(['--changed', 'main', '.']).files).toEqual(['./a.md']);
    expect(checked(['--changed=main', '.']).files).toEqual(['./a.md']);
  });

  it('a commit: compared as it is (here the tip of main, so b.md differs too)', () => {
    expect(checked(['--changed', mainTip, '.']).files).toEqual(['./a.md', './b.md']);
  });

  it('a ref git does not know: exit 2 with the ref and git\'s message', () => {
    const r = checked(['--changed', 'no-such-ref', '.']);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/^polecheck: --changed no-such-ref: not a commit of the repository at .+ \(git: .+\)\n$/);
    expect(r.stderr).not.toContain('()');
  });

  it('outside a repository: exit 2 with git\'s message', () => {
    const outside = mkdtempSync(join(tmpdir(), 'polecheck-nogit-'));
    try {
      writeFileSync(join(outside, 'a.md'), consistentSpec(ADC_DRIVER));
      let stderr = '';
      const status = main(['--changed', 'HEAD', '.'], { stdout: () => {}, stderr: (s) => (stderr += s), env: {}, isTTY: false, cwd: outside });
      expect(status).toBe(2);
      expect(stderr).toMatch(/--changed HEAD: git found no repository here \(git: not a git repository/);
    } finally {
      rmSync(outside, { recursive: true, force: true });
    }
  });
});
