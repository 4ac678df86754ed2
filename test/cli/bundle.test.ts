// The built command (scripts/build.mjs): the bundle dist/polecheck.cjs runs
// through dist/load.js with the V8 code cache the build leaves beside it
// (scripts/bundle-loader.mjs). The cache must be used when it is this
// bundle's and ignored silently otherwise — stale (the bundle changed),
// corrupt, truncated, missing, or made by another V8 — with the same report.
//
// Built by the project's build script into a scratch folder, so that the
// shared dist/ is left alone while the cache is damaged on purpose.

import { execFileSync, spawnSync } from 'node:child_process';
import { copyFileSync, mkdirSync, mkdtempSync, readFileSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import * as zlib from 'node:zlib';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { main } from '../../src/cli';
import { ADC_DRIVER, consistentSpec, overclaimedGainSpec, writeTree } from './fixtures';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');
/** The cache file's header: a magic line, then the bundle's length and CRC-32 and the payload's CRC-32. */
const HEADER = Buffer.from('polecheck code cache 1\n').length + 12;

let scratch: string;
let dist: string;
let cache: string;
let pristine: Buffer;
let bundle: Buffer;

beforeAll(() => {
  scratch = mkdtempSync(join(tmpdir(), 'polecheck-bundle-cache-'));
  for (const name of ['src', 'rules', 'node_modules', 'package.json', 'README.md']) symlinkSync(join(ROOT, name), join(scratch, name));
  execFileSync(process.execPath, [join(ROOT, 'scripts', 'build.mjs')], { cwd: scratch, stdio: 'pipe' });
  dist = join(scratch, 'dist');
  cache = join(dist, 'polecheck.code-cache');
  pristine = readFileSync(cache);
  bundle = readFileSync(join(dist, 'polecheck.cjs'));
  writeTree(join(scratch, 'specs'), { 'ok.md': consistentSpec(ADC_DRIVER), 'over.md': overclaimedGainSpec(ADC_DRIVER) });
}, 120_000);

afterEach(() => {
  writeFileSync(cache, pristine);
  writeFileSync(join(dist, 'polecheck.cjs'), bundle);
});

afterAll(() => {
  if (scratch) rmSync(scratch, { recursive: true, force: true });
});

/** What the loader made of the cache ('used', 'rejected', 'invalid', 'none'), in a fresh process. */
function cacheState(): string {
  const load = pathToFileURL(join(dist, 'load.js')).href;
  return execFileSync(process.execPath, ['--input-type=module', '-e', `const m = await import(${JSON.stringify(load)}); m.loadBundle(); process.stdout.write(m.codeCache);`], { encoding: 'utf8' });
}

function command(args: string[]) {
  const r = spawnSync(process.execPath, [join(dist, 'polecheck.js'), ...args], { cwd: scratch, env: { ...process.env, NO_COLOR: '1', FORCE_COLOR: '' }, encoding: 'utf8', timeout: 60_000 });
  if (r.error) throw r.error;
  return { code: r.status, out: r.stdout, err: r.stderr };
}

function inProcess(args: string[]) {
  let out = '';
  let err = '';
  const code = main(args, { stdout: (s) => (out += s), stderr: (s) => (err += s), env: { NO_COLOR: '1' }, isTTY: false, cwd: scratch });
  return { code, out, err };
}

// zlib.crc32 came with Node 20.15; before it the loader keeps no cache.
describe('the bundle', () => {
  it('holds no mathjs: its parser is a chunk of its own (dist/expr.cjs), required on the first expression', () => {
    expect(bundle.toString('utf8')).not.toMatch(/node_modules\/mathjs\/|mathjs\/lib\//);
    // The loaders import nothing but the bundle and Node's own modules.
    for (const f of ['polecheck.js', 'worker.js', 'load.js']) {
      const specifiers = [...readFileSync(join(dist, f), 'utf8').matchAll(/^\s*import\s(?:[^'";]*?\sfrom\s*)?['"]([^'"]+)['"]/gm)].map((m) => m[1]);
      expect(specifiers.length, f).toBeGreaterThan(0);
      expect(specifiers.filter((x) => !x.startsWith('node:') && x !== './load.js'), f).toEqual([]);
    }
  });
});

describe.skipIf(typeof zlib.crc32 !== 'function')('the V8 code cache of the bundle', () => {
  it('is left by the build and used', () => {
    expect(cacheState()).toBe('used');
    const r = command(['--format', 'json', 'specs']);
    expect(r).toEqual(inProcess(['--format', 'json', 'specs']));
    expect(r.code).toBe(1);
  });

  const damaged: Array<[string, () => void, string]> = [
    [
      'a corrupt payload',
      () => {
        const b = Buffer.from(pristine);
        b[b.length >> 1] ^= 0xff;
        writeFileSync(cache, b);
      },
      'invalid',
    ],
    ['a truncated file', () => writeFileSync(cache, pristine.subarray(0, pristine.length >> 1)), 'invalid'],
    // The same length (all V8 itself compares), other bytes: a word of the help text.
    ['a stale cache (the bundle rebuilt, its length unchanged)', () => writeFileSync(join(dist, 'polecheck.cjs'), bundle.toString('utf8').replace('this text', 'this TEXT')), 'invalid'],
    ['no cache at all', () => rmSync(cache), 'none'],
    [
      // A header that matches the bundle around a payload V8 did not write (as from another Node version).
      'a payload from another V8',
      () => {
        const foreign = Buffer.alloc(4096, 7);
        const b = Buffer.concat([pristine.subarray(0, HEADER), foreign]);
        b.writeUInt32LE(zlib.crc32(foreign), HEADER - 4);
        writeFileSync(cache, b);
      },
      'rejected',
    ],
  ];

  it.each(damaged)('%s is ignored silently, with the same report', (_, damage, state) => {
    const before = command(['--format', 'json', 'specs']);
    damage();
    expect(cacheState()).toBe(state);
    const after = command(['--format', 'json', 'specs']);
    expect(after).toEqual(before);
    expect(after.err).toBe('');
  });

  it('the command runs from a copy of dist/ without the cache', () => {
    // As an install built with another Node would (its cache rejected) or one without: the same report.
    const bare = join(scratch, 'bare');
    mkdirSync(join(bare, 'dist'), { recursive: true });
    for (const f of ['polecheck.js', 'worker.js', 'load.js', 'polecheck.cjs']) copyFileSync(join(dist, f), join(bare, 'dist', f));
    symlinkSync(join(ROOT, 'rules'), join(bare, 'rules'));
    const r = spawnSync(process.execPath, [join(bare, 'dist', 'polecheck.js'), '--format', 'json', 'specs'], { cwd: scratch, env: { ...process.env, NO_COLOR: '1' }, encoding: 'utf8' });
    expect({ code: r.status, out: r.stdout, err: r.stderr }).toEqual(command(['--format', 'json', 'specs']));
  });
});
