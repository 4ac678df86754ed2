// `report --html DIR` on the command line: the option's words and errors, the
// pages written through the process's own way in (`run`, writers loaded on
// demand), and a folder that cannot be written. Worker threads and the built
// bundle are covered by test/browser/review-pages.test.ts.

import { mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { UsageError, parseArgs } from '../../src/cli';
import { modulesFor } from '../../src/cli/output';
import { run } from '../../src/cli/run';
import { ADC_DRIVER, consistentSpec, overclaimedGainSpec, writeTree } from './fixtures';

let tmp: string;
beforeAll(() => {
  tmp = mkdtempSync(join(tmpdir(), 'polecheck-html-cli-'));
});
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

async function cli(argv: string[], env: NodeJS.ProcessEnv = {}): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const code = await run(argv, { stdout: (s) => (out += s), stderr: (s) => (err += s), env: { NO_COLOR: '1', ...env }, isTTY: false, cwd: tmp });
  return { code, out, err };
}

describe('--html', () => {
  it('goes with report only, and takes no --format', () => {
    expect(parseArgs(['report', '--html', 'out']).html).toBe('out');
    expect(parseArgs(['report', '--html=out', 'a.md']).paths).toEqual(['a.md']);
    expect(() => parseArgs(['--html', 'out'])).toThrow(UsageError);
    expect(() => parseArgs(['report', '--html', 'out', '--format', 'json'])).toThrow(/no --format/);
    expect(() => parseArgs(['report', '--html'])).toThrow(/needs a value/);
  });

  it('is the only thing that loads the page writer', () => {
    expect(modulesFor(parseArgs(['report', '--html', 'x']))).toEqual(['html']);
    expect(modulesFor(parseArgs(['specs']))).not.toContain('html');
    expect(modulesFor(parseArgs(['report']))).toEqual(['review']);
  });

  it('writes the index and a page per block, says where, and exits 0 with failing claims', { timeout: 120_000 }, async () => {
    writeTree(join(tmp, 'specs'), { 'ok.md': consistentSpec(ADC_DRIVER), 'over.md': overclaimedGainSpec(ADC_DRIVER), 'notes.md': '# not a spec\n' });
    const r = await cli(['report', '--html', 'site', 'specs']);
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    expect(r.out).toBe(`2 block pages written to site; open ${join('site', 'index.html')}\n`);
    const files = readdirSync(join(tmp, 'site')).sort();
    expect(files).toHaveLength(3);
    expect(files).toContain('index.html');
    const over = files.filter((f) => f !== 'index.html').map((f) => readFileSync(join(tmp, 'site', f), 'utf8')).find((h) => h.includes('class="v-fails">fails'));
    expect(over).toBeDefined();
  });

  it('exits 2 with the reason when the folder cannot be written', { timeout: 120_000 }, async () => {
    writeFileSync(join(tmp, 'a-file'), 'x');
    writeTree(join(tmp, 'one'), { 'ok.md': consistentSpec(ADC_DRIVER) });
    const r = await cli(['report', '--html', 'a-file', 'one']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/^polecheck: cannot write the review pages to a-file: /);
  });
});
