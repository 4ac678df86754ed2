// The README's npm-devDependency install and plain git hook, as a design team
// would set them up: polecheck installed from git at this repository's HEAD
// commit (a git+file URL; npm clones it, installs its build tools and runs its
// `prepare` build), its install script approved by URL as the README says, and
// the README's hook script in .git/hooks/pre-commit. A stale spec is refused
// with polecheck's findings; a consistent one goes in. Needs the npm registry
// (or npm's cache) for polecheck's dependencies.
import { chmodSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { BRIDGE_BUFFER, consistentSpec } from '../cli/fixtures';
import { designRepository, readmeRecipe, refusedThenTaken, sh, thisRepository } from './support';

const here = thisRepository();
if ('missing' in here) console.warn(`${here.missing}: the git hook test is skipped`);

describe.runIf(!('missing' in here))('the README npm install from git and plain git hook', () => {
  const design = designRepository('polecheck-githook-');
  afterAll(() => rmSync(design, { recursive: true, force: true }), 60_000);
  const env = { NO_COLOR: '1', npm_config_prefer_offline: 'true' };

  it('installs polecheck from a git URL at a commit, quietly, and the hook refuses a stale spec and takes a consistent one', () => {
    const { top, sha } = here as { top: string; sha: string };
    const url = `git+file://${top}`;
    writeFileSync(join(design, 'package.json'), `${JSON.stringify({ name: 'strand-specs', private: true, allowScripts: { [url]: true } }, null, 2)}\n`);
    writeFileSync(join(design, '.gitignore'), 'node_modules/\n');
    const install = sh('npm', ['install', '--save-dev', '--no-audit', '--no-fund', `${url}#${sha}`], design, env);
    expect(install.status, install.out).toBe(0);
    // The approval by URL covers polecheck's build: npm has nothing to warn about.
    expect(install.out).not.toMatch(/install-scripts|not yet covered/);
    expect(JSON.parse(readFileSync(join(design, 'package.json'), 'utf8')).devDependencies.polecheck).toBe(`${url}#${sha}`);
    const version = JSON.parse(readFileSync(join(top, 'package.json'), 'utf8')).version;
    expect(sh('node_modules/.bin/polecheck', ['--version'], design).out.trim()).toBe(version);

    const hook = join(design, '.git', 'hooks', 'pre-commit');
    writeFileSync(hook, readmeRecipe(readFileSync(join(top, 'README.md'), 'utf8'), 'git'));
    chmodSync(hook, 0o755);
    sh('git', ['add', 'package.json', 'package-lock.json', '.gitignore'], design);
    const setup = sh('git', ['commit', '-qm', 'polecheck as a devDependency'], design, env);
    expect(setup.status, setup.out).toBe(0);

    // A second spec, consistent, goes in with the first; a name with a space, which the hook passes NUL-separated.
    writeFileSync(join(design, 'bridge.md'), consistentSpec(BRIDGE_BUFFER));
    refusedThenTaken(design, env, 'adc driver.md', '2 blocks');
  }, 240_000);
});
