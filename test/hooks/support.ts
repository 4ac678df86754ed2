// What the hook tests share: this repository's commit (the hooks install
// polecheck from it as a user would, from git at a commit), a scratch design
// repository, and git and other commands run in it.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { expect } from 'vitest';
import { ADC_DRIVER, consistentSpec, overclaimedGainSpec } from '../cli/fixtures';

export interface Ran {
  status: number | null;
  /** Standard output and error, interleaved as far as the pipes allow. */
  out: string;
}

const GIT_ENV = { GIT_AUTHOR_NAME: 'Designer', GIT_AUTHOR_EMAIL: 'designer@example.invalid', GIT_COMMITTER_NAME: 'Designer', GIT_COMMITTER_EMAIL: 'designer@example.invalid' };

/** Runs a command in `cwd`; never throws on a non-zero exit. */
export function sh(cmd: string, args: string[], cwd: string, env: NodeJS.ProcessEnv = {}, timeoutMs = 240_000): Ran {
  const r = spawnSync(cmd, args, { cwd, encoding: 'utf8', env: { ...process.env, ...GIT_ENV, ...env }, timeout: timeoutMs });
  if (r.error) throw r.error;
  return { status: r.status, out: `${r.stdout}${r.stderr}` };
}

export const hasCommand = (name: string): boolean => spawnSync('sh', ['-c', `command -v ${name}`], { stdio: 'ignore' }).status === 0;

/** This repository's top level and HEAD commit, or why there is none (an export without .git). */
export function thisRepository(): { top: string; sha: string } | { missing: string } {
  const top = spawnSync('git', ['rev-parse', '--show-toplevel'], { encoding: 'utf8' });
  const sha = spawnSync('git', ['rev-parse', 'HEAD'], { encoding: 'utf8' });
  if (top.status !== 0 || sha.status !== 0) return { missing: 'the tests do not run in a git checkout of polecheck' };
  return { top: top.stdout.trim(), sha: sha.stdout.trim() };
}

/** A fresh git repository for a design team's specs. */
export function designRepository(prefix: string): string {
  const dir = mkdtempSync(join(tmpdir(), prefix));
  sh('git', ['init', '-q', '-b', 'main'], dir);
  return dir;
}

/** The code block that follows `<!-- hook recipe: NAME … -->` in the README: the tests run the recipes as written. */
export function readmeRecipe(readme: string, name: string): string {
  const m = readme.match(new RegExp(`<!-- hook recipe: ${name}\\b[^>]*-->\\n\`\`\`\\w*\\n([\\s\\S]*?)\`\`\`\\n`));
  if (!m) throw new Error(`README.md has no hook recipe '${name}'`);
  return m[1];
}

/**
 * The hooks' shared scenario: `file` with a stale claim (the ADC driver's DC
 * gain 20 dB high) is committed and refused with polecheck's review sheet —
 * the block, the failing claim at its place, the tally over `blocks` blocks —
 * then the consistent spec is committed and taken. Returns both outputs.
 */
export function refusedThenTaken(design: string, env: NodeJS.ProcessEnv, file: string, blocks: string): { refused: Ran; taken: Ran } {
  const commits = () => sh('git', ['rev-list', '--count', 'HEAD'], design).out.trim();
  const before = Number(commits());
  writeFileSync(join(design, file), overclaimedGainSpec(ADC_DRIVER));
  sh('git', ['add', '.'], design);
  const refused = sh('git', ['commit', '-m', 'stale gain claim'], design, env);
  expect(refused.status, refused.out).not.toBe(0);
  expect(refused.out).toContain(ADC_DRIVER.block);
  expect(refused.out).toMatch(new RegExp(` {2}fails {2}dc_gain .* ${file.replace(/[.]/g, '\\.')}:\\d+:\\d+`));
  expect(refused.out).toMatch(new RegExp(`${blocks}, \\d+ claims: 1 fail`));
  expect(commits()).toBe(String(before));

  writeFileSync(join(design, file), consistentSpec(ADC_DRIVER));
  sh('git', ['add', '.'], design);
  const taken = sh('git', ['commit', '-m', 'gain claim restated'], design, env);
  expect(taken.status, taken.out).toBe(0);
  expect(commits()).toBe(String(before + 1));
  return { refused, taken };
}
