// The README's pre-commit recipe with the real framework (Debian's
// `pre-commit`, installed by .ci/run): a scratch design repository whose
// .pre-commit-config.yaml is the README's, pointed at this repository at its
// HEAD commit. pre-commit clones it, builds the hook's node environment (npm
// install, npm pack, npm install -g of the tarball — from the npm registry)
// and runs the hook on commit: a stale spec is refused with polecheck's
// findings, a consistent one goes in. What is tested is HEAD, not uncommitted
// edits.
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { designRepository, hasCommand, readmeRecipe, refusedThenTaken, sh, thisRepository } from './support';

const available = hasCommand('pre-commit');
const here = thisRepository();
if (!available && !process.env.CI) console.warn('pre-commit not installed: the pre-commit hook test is skipped (apt-get install -y pre-commit); it fails instead when CI is set');
if ('missing' in here) console.warn(`${here.missing}: the pre-commit hook test is skipped`);

describe.runIf((available || process.env.CI) && !('missing' in here))('the README pre-commit recipe, with the real pre-commit framework', () => {
  const design = designRepository('polecheck-precommit-');
  const home = mkdtempSync(join(tmpdir(), 'polecheck-precommit-home-'));
  afterAll(() => {
    rmSync(design, { recursive: true, force: true });
    rmSync(home, { recursive: true, force: true });
  }, 60_000);
  // prefer-offline: npm takes the packages' metadata from its cache when it has them
  // (CI's `npm ci` has just fetched the same ones), as a developer's machine would.
  const env = { PRE_COMMIT_HOME: home, NO_COLOR: '1', npm_config_prefer_offline: 'true' };

  it('refuses a commit of a stale spec with the findings, then takes the consistent spec', () => {
    const { top, sha } = here as { top: string; sha: string };
    const recipe = readmeRecipe(readFileSync(join(top, 'README.md'), 'utf8'), 'pre-commit');
    // The README's config, with this repository and its HEAD in place of the example's.
    const config = recipe.replace(/(repo: )\S+/, `$1${top}`).replace(/(rev: )[0-9a-f]{40}/, `$1${sha}`);
    expect(config).toContain(`rev: ${sha}`);
    expect(config).toContain('id: polecheck');
    writeFileSync(join(design, '.pre-commit-config.yaml'), config);
    expect(sh('pre-commit', ['install'], design, env).status).toBe(0);
    sh('git', ['add', '.pre-commit-config.yaml'], design);
    // Nothing staged for the hook: it is skipped, and the config goes in.
    const setup = sh('git', ['commit', '-qm', 'hooks'], design, env);
    expect(setup.status, setup.out).toBe(0);

    // A page without polecheck front matter goes in beside the spec and is skipped.
    writeFileSync(join(design, 'notes.md'), '# Bring-up notes\n\nNo spec here.\n');
    const { refused, taken } = refusedThenTaken(design, env, 'adc-driver.md', '1 block');
    expect(refused.out).toMatch(/polecheck\.+Failed/);
    expect(taken.out).toMatch(/polecheck\.+Passed/);
  }, 240_000);
});
