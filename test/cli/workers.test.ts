// Worker threads (src/cli/pool.ts): a folder checked by worker threads gives
// the report a single thread gives, byte for byte and in the same order, in
// every format and with --restate; a single file or a small folder starts none.
//
// Workers need the bundle's dist/worker.js, so these tests run the command
// built by the project's own build script into a scratch folder (the shared
// dist/ is left alone). POLECHECK_WORKERS=N asks for N worker threads (0:
// none); a probe loaded with `node --import` counts the threads started
// (the process's 'worker' event) and writes the count on exit.
//
// The specs come from the benchmarks' seeded generator (bench/generate.mjs):
// two-stage designs whose claims hold, and some with claims moved outside
// their tolerance, so that the reports carry errors, suggestions and fixes.

import { execFileSync, spawnSync } from 'node:child_process';
import { cpSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { availableParallelism, tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { main } from '../../src/cli';
import { checkInThread } from '../../src/cli/plan';
import { checkInWorkers } from '../../src/cli/pool';
import { WORKER_THRESHOLD, prepare } from '../../src/cli/run';
import { NOTES_PAGE } from './fixtures';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');

interface Generator {
  rng(seed: number): () => number;
  designSpec(next: () => number, i: number, opts: { failing: boolean }): string;
}

let scratch: string;
let bundle: string;
let probe: string;
let specs: string;
/** A part of the folder for the other formats and workflows (still above the worker threshold). */
let some: string;
const SPECS = 100;
const SOME = 30;

beforeAll(async () => {
  scratch = mkdtempSync(join(tmpdir(), 'polecheck-workers-'));
  for (const name of ['src', 'rules', 'node_modules', 'package.json', 'README.md']) symlinkSync(join(ROOT, name), join(scratch, name));
  execFileSync(process.execPath, [join(ROOT, 'scripts', 'build.mjs')], { cwd: scratch, stdio: 'pipe' });
  bundle = join(scratch, 'dist', 'polecheck.js');
  probe = join(scratch, 'probe.mjs');
  writeFileSync(probe, "import { writeSync } from 'node:fs';\nlet n = 0;\nprocess.on('worker', () => n++);\nprocess.on('exit', () => writeSync(2, `\\nworker threads started: ${n}\\n`));\n");

  // The seeded generator of the benchmarks; one spec in three has claims that cannot hold.
  const gen = (await import(pathToFileURL(join(ROOT, 'bench', 'generate.mjs')).href)) as Generator;
  const next = gen.rng(2024);
  specs = join(scratch, 'specs');
  mkdirSync(join(specs, 'notes'), { recursive: true });
  for (let i = 0; i < SPECS; i++) writeFileSync(join(specs, `block-${String(i).padStart(3, '0')}.md`), gen.designSpec(next, i, { failing: i % 3 === 0 }));
  // Files the main thread settles without a check, among those the workers check.
  writeFileSync(join(specs, 'notes', 'bring-up.md'), NOTES_PAGE);
  writeFileSync(join(specs, 'block-050a.md'), '---\npolecheck: 1\ntopology: two-stage-miller\nparams:\n  gm1: 240 µS\n   r1: 1.8 MΩ\n---\n');
  some = join(scratch, 'some');
  mkdirSync(some);
  for (const name of readdirSync(specs).filter((n) => n.endsWith('.md')).slice(0, SOME)) cpSync(join(specs, name), join(some, name));
}, 120_000);

afterAll(() => {
  if (scratch) rmSync(scratch, { recursive: true, force: true });
});

interface Run {
  code: number;
  out: string;
  err: string;
  workers: number;
}

const runs = new Map<string, Run>();

/** The bundled command with POLECHECK_WORKERS set (or unset), counting the worker threads it starts; a repeated run is served from memory. */
function command(args: string[], workers: string | undefined): Run {
  const key = JSON.stringify([args, workers]);
  const known = runs.get(key);
  if (known) return known;
  const run = spawnCommand(args, workers);
  runs.set(key, run);
  return run;
}

function spawnCommand(args: string[], workers: string | undefined, cwd = scratch): Run {
  const env: NodeJS.ProcessEnv = { ...process.env, NO_COLOR: '1' };
  delete env.FORCE_COLOR;
  delete env.POLECHECK_WORKERS;
  if (workers !== undefined) env.POLECHECK_WORKERS = workers;
  // The timeout guards against a hang; it is not a speed assertion.
  const r = spawnSync(process.execPath, ['--import', probe, bundle, ...args], { cwd, env, encoding: 'utf8', timeout: 120_000 });
  if (r.error) throw r.error;
  expect(r.signal, 'the command was killed (hung?)').toBeNull();
  const m = r.stderr.match(/\nworker threads started: (\d+)\n$/);
  expect(m, r.stderr).not.toBeNull();
  return { code: r.status ?? -1, out: r.stdout, err: r.stderr.slice(0, m!.index), workers: Number(m![1]) };
}

/** main() in-process (the sources, one thread). */
function inProcess(args: string[], cwd = scratch): { code: number; out: string; err: string } {
  let out = '';
  let err = '';
  const code = main(args, { stdout: (s) => (out += s), stderr: (s) => (err += s), env: { NO_COLOR: '1' }, isTTY: false, cwd });
  return { code, out, err };
}

describe('a folder checked in worker threads', () => {
  it.each([['json'], ['text']])('--format %s: two workers give the bytes one thread gives, and main() in-process gives', (format) => {
    const threaded = command(['--format', format, 'specs'], '2');
    const single = command(['--format', format, 'specs'], '0');
    expect(threaded.workers).toBe(2);
    expect(single.workers).toBe(0);
    expect(threaded.out).toBe(single.out);
    expect(threaded.err).toBe(single.err);
    expect(threaded.code).toBe(single.code);
    if (format === 'json') {
      const here = inProcess(['--format', format, 'specs']);
      expect(threaded.out).toBe(here.out);
      expect(threaded.code).toBe(here.code);
    }
    // Not a vacuous comparison: the folder has failing claims and the broken spec.
    expect(threaded.code).toBe(1);
    if (format === 'json') {
      const report = JSON.parse(threaded.out) as { files: Array<{ path: string; skipped: boolean; findings: Array<{ rule: string; suggestions: string[] }> }>; summary: { files: number; errors: number } };
      expect(report.files).toHaveLength(SPECS + 2);
      expect(report.summary.files).toBe(SPECS + 1);
      expect(report.summary.errors).toBeGreaterThanOrEqual(SPECS / 3);
      expect(report.files.find((f) => f.path === 'specs/block-050a.md')!.findings.map((f) => f.rule)).toEqual(['yaml-syntax']);
      expect(report.files.find((f) => f.path === 'specs/notes/bring-up.md')!.skipped).toBe(true);
      expect(report.files.some((f) => f.findings.some((x) => x.suggestions.length > 0))).toBe(true);
    }
  });

  it('the files come in the order of discovery, whatever the number of threads', () => {
    const paths = (r: Run) => (JSON.parse(r.out) as { files: Array<{ path: string }> }).files.map((f) => f.path);
    const two = command(['--format', 'json', 'specs'], '2');
    const three = command(['--format', 'json', 'specs'], '3');
    expect([two.workers, three.workers]).toEqual([2, 3]);
    expect(three.out).toBe(two.out);
    // Discovery walks each folder in sorted order: files and folders by name, a folder's files in place.
    const expected = readdirSync(specs)
      .sort()
      .flatMap((name) => (name === 'notes' ? ['specs/notes/bring-up.md'] : [`specs/${name}`]));
    expect(paths(three)).toEqual(expected);
  });

  it.each([
    ['the reviewer report', ['report', 'some']],
    ['the reviewer report as JSON', ['report', '--format', 'json', 'some']],
    ['SARIF', ['--format', 'sarif', 'some']],
    ['GitLab', ['--format', 'gitlab', 'some']],
    ['GitHub, quiet', ['--format', 'github', '--errors-only', 'some']],
    ['--preview --restate-bounds', ['--preview', '--restate-bounds', 'some']],
  ])('%s: the same bytes from two workers as from one thread', (_, args) => {
    const threaded = command(args, '2');
    const single = command(args, '0');
    expect(threaded.workers).toBe(2);
    expect(threaded.out).toBe(single.out);
    expect(threaded.err).toBe(single.err);
    expect(threaded.code).toBe(single.code);
    expect(threaded.out.length).toBeGreaterThan(1000);
  });

  it('--restate writes the same files, says the same, and reports the same, from two workers as from one thread', () => {
    const run = (workers: string) => {
      const dir = join(scratch, `fix-${workers}`);
      cpSync(some, dir, { recursive: true });
      const r = spawnCommand(['--restate', '--restate-bounds', '--format', 'json', dir], workers);
      const files = Object.fromEntries(readdirSync(dir).filter((n) => n.endsWith('.md')).map((n) => [n, readFileSync(join(dir, n), 'utf8')]));
      return { r, files, dir };
    };
    const threaded = run('2');
    const single = run('0');
    expect(threaded.r.workers).toBe(2);
    expect(threaded.files).toEqual(single.files);
    expect(threaded.r.err.split(threaded.dir).join('DIR')).toBe(single.r.err.split(single.dir).join('DIR'));
    expect(threaded.r.out.split(threaded.dir).join('DIR')).toBe(single.r.out.split(single.dir).join('DIR'));
    expect(threaded.r.err).toMatch(/fixed \d+ claims? in /);
    // Something was rewritten: the fixed folder differs from the generated one.
    expect(Object.entries(threaded.files).some(([n, t]) => t !== readFileSync(join(some, n), 'utf8'))).toBe(true);
  });

  it('--cache: the entries written by workers serve a second run, and the report is the same', () => {
    const cache = join(scratch, 'cache-workers');
    const first = spawnCommand(['--cache-dir', cache, '--format', 'json', 'some'], '2');
    // One entry per spec checked, and a .gitignore that keeps the folder out of git.
    expect(readdirSync(cache).filter((n) => n.endsWith('.json'))).toHaveLength(SOME);
    expect(readFileSync(join(cache, '.gitignore'), 'utf8')).toMatch(/^\*$/m);
    const second = spawnCommand(['--cache-dir', cache, '--format', 'json', 'some'], '2');
    expect([first.workers, second.workers]).toEqual([2, 2]);
    expect(second.out).toBe(first.out);
    expect(first.out).toBe(command(['--format', 'json', 'some'], '0').out);
  });
});

describe('when no worker is started', () => {
  it('a single file never starts one, even when asked for', () => {
    const r = command(['--format', 'json', 'specs/block-001.md'], '4');
    expect(r.workers).toBe(0);
    expect(JSON.parse(r.out).files).toHaveLength(1);
  });

  it(`a folder of fewer than ${WORKER_THRESHOLD} files starts none by default; a larger one one per core`, () => {
    const small = join(scratch, 'small');
    mkdirSync(small);
    for (const name of readdirSync(specs).filter((n) => n.endsWith('.md')).slice(0, WORKER_THRESHOLD - 1)) cpSync(join(specs, name), join(small, name));
    expect(command(['small'], undefined).workers).toBe(0);
    expect(command(['some'], undefined).workers).toBe(Math.max(1, availableParallelism()));
  });

  it('a worker that cannot start hands its files to the main thread: the outcomes are those of one thread', async () => {
    const io = { stdout: () => {}, stderr: () => {}, env: {}, isTTY: false, cwd: scratch };
    const plan = prepare(['--format', 'json', 'some'], io);
    if (typeof plan === 'number' || plan.kind !== 'files') throw new Error('no plan');
    const missing = pathToFileURL(join(scratch, 'no-such-worker.js'));
    const outcomes = await checkInWorkers(plan, undefined, { entry: missing, workers: 2, mainChecks: false, batch: 3 });
    expect(JSON.stringify(outcomes)).toBe(JSON.stringify(checkInThread(plan, undefined)));
  });
});
