// The speed figures of the command against its bars (`npm run bench`, or
// `node --import tsx bench/engine.mjs`). Every figure is a time or a ratio
// measured in this run on this machine; the bench prints them and asserts
// nothing (exit 0 whatever it measures; 1 only when a figure could not be
// measured at all).
//
//   1. one warm two-stage evaluation (src/model/model.ts evaluate() and its six
//      figures) vs the minimal closed-form evaluation of the same designs
//      (bench/minimal-two-stage.mjs), after checking that the two agree;
//   2. checkText in-process: a spec whose phase-margin bound fails, and a spec
//      with 12 ranged keys and 4 bounds (one failing at a corner);
//   3. whole process: the built command (bin/polecheck.js --format json) over
//      2,400 seeded failing specs and over 2,400 consistent ones, each against
//      a parse-only twin bundled from the same sources (bench/parse-only.mjs);
//      peak memory (max RSS) of the failing run;
//   4. cold one-file checks against `node -e 0`.
//
// The table lists them in the order of the issue's bars. Uses the bundle in
// dist/ (rebuilt when missing or older than src/, rules/ or
// scripts/build.mjs). Aims at about three minutes: the whole-process runs
// repeat while time is left (at least once, at most five times each), and a
// run of the command still going after a minute is stopped and reported as a
// lower bound ("≥ 12×"), its peak memory as the high-water mark at that
// moment. A run that crashes, or whose report misses files, measures nothing:
// its row says "not measured" and why.

import { execFileSync, spawn, spawnSync } from 'node:child_process';
import { closeSync, existsSync, mkdirSync, mkdtempSync, openSync, readFileSync, readdirSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { cpus, loadavg, tmpdir, totalmem } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { CONSISTENT_SPEC, FAILING_PM_SPEC, PASSING_PM_SPEC, RANGED_SPEC, designSpec, randomDesign, rng } from './generate.mjs';
import { twoStageFigures } from './minimal-two-stage.mjs';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const BIN = join(ROOT, 'bin', 'polecheck.js');
const NODE = process.execPath;
const PROBE = pathToFileURL(join(ROOT, 'bench', 'max-rss-probe.mjs')).href;
const SEED = 1729;
const DESIGNS = 100;
const AGREEMENT = 1e-9;
const FOLDER_SPECS = 2400;
const COLD_ROUNDS = 15;
const BUDGET_MS = 170_000;
const RUN_CAP_MS = 60_000;

const started = Date.now();
const loadAtStart = loadavg()[0];
const log = (s) => process.stderr.write(`[${((Date.now() - started) / 1000).toFixed(0).padStart(3)} s] ${s}\n`);

let project;
try {
  project = {
    ...(await import('../src/model/model.ts')),
    ...(await import('../src/topologies/two-stage-miller.ts')),
    ...(await import('../src/check.ts')),
  };
} catch (err) {
  if (err?.code === 'ERR_UNKNOWN_FILE_EXTENSION') {
    console.error('bench/engine.mjs imports the TypeScript sources: run it as `node --import tsx bench/engine.mjs` (or `npm run bench`)');
    process.exit(1);
  }
  throw err;
}
const { evaluate, twoStageMiller, checkText } = project;

const median = (xs) => {
  const s = [...xs].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
};
const ms = (x) => (x >= 10_000 ? `${(x / 1000).toFixed(1)} s` : x >= 100 ? `${x.toFixed(0)} ms` : x >= 1 ? `${x.toFixed(2)} ms` : `${(x * 1000).toFixed(x >= 0.01 ? 1 : 2)} µs`);
const times = (x) => `${x >= 10 ? x.toFixed(0) : x.toFixed(2)}×`;

/** The figures of the table, in its order; a row not measured keeps `value` null and says why. */
const rows = [];
const notes = [];
let unmeasured = 0;
function row(figure, bar, limit) {
  const r = { figure, bar, limit, value: null, lowerBound: false, shown: '—', detail: '' };
  rows.push(r);
  return (value, shown, detail = '', lowerBound = false) => Object.assign(r, { value, shown, detail, lowerBound });
}
// The rows of the table, in the order of the issue's bars.
const specs = FOLDER_SPECS.toLocaleString('en');
const evalRow = row('one two-stage evaluation (warm) vs the minimal closed form', '≤ 5×', 5);
const pmRow = row('failing spec with a phase-margin min claim, in process (checkText)', '≤ 2.5 ms', 2.5);
const rangedRow = row('spec with 12 ranged keys and 4 bounds, in process (checkText)', '≤ 10 ms', 10);
const failingRow = row(`${specs} failing specs, whole process, vs parse-only`, '≤ 1.5×', 1.5);
const consistentRow = row(`${specs} consistent specs, whole process, vs parse-only`, '≤ 1.2×', 1.2);
const memoryRow = row(`peak memory (max RSS), ${specs} failing specs, whole process`, '≤ 300 MiB', 300);
const coldOk = row('cold one-file check vs `node -e 0`, consistent spec', '≤ 1.7×', 1.7);
const coldFail = row('cold one-file check vs `node -e 0`, failing spec', '≤ 2×', 2);

function failed(setter, what, err) {
  unmeasured++;
  setter(null, 'not measured', `${what}: ${String(err?.message ?? err).split('\n')[0]}`);
  log(`${what} failed: ${err?.stack ?? err}`);
}

// ---------------------------------------------------------------- setup

function newestMtime(dir) {
  let newest = 0;
  for (const name of readdirSync(dir, { withFileTypes: true })) {
    const p = join(dir, name.name);
    newest = Math.max(newest, name.isDirectory() ? newestMtime(p) : statSync(p).mtimeMs);
  }
  return newest;
}
const bundle = join(ROOT, 'dist', 'polecheck.js');
const sourcesMtime = Math.max(newestMtime(join(ROOT, 'src')), newestMtime(join(ROOT, 'rules')), statSync(join(ROOT, 'scripts', 'build.mjs')).mtimeMs);
if (!existsSync(bundle) || statSync(bundle).mtimeMs < sourcesMtime) {
  log('dist/ is missing or older than its sources: npm run build …');
  try {
    execFileSync(NODE, ['scripts/build.mjs'], { cwd: ROOT, stdio: ['ignore', 'inherit', 'inherit'] });
  } catch (err) {
    // Sources in the middle of an edit: measure the bundle there is, and say so.
    if (!existsSync(bundle)) throw err;
    notes.push('(dist/ could not be rebuilt: the whole-process and cold figures are of the older bundle)');
  }
}

// The children run in this folder (with absolute paths), so that no
// polecheck.yaml of the working tree changes what the command checks.
const tmp = mkdtempSync(join(tmpdir(), 'polecheck-bench-'));
process.on('exit', () => rmSync(tmp, { recursive: true, force: true }));

// The parse-only twin, bundled with the esbuild options of scripts/build.mjs
// (one CommonJS file; keep the two in step). The command's bundle is then run
// through a V8 code cache (scripts/bundle-loader.mjs); the twin is not, which
// costs it a few milliseconds of compiling per run.
const parseOnly = join(tmp, 'parse-only', 'parse-only.cjs');
{
  const { build } = await import('esbuild');
  await build({
    entryPoints: [join(ROOT, 'bench', 'parse-only.mjs')],
    absWorkingDir: ROOT,
    bundle: true,
    platform: 'node',
    target: 'node20',
    format: 'cjs',
    outfile: parseOnly,
    define: { POLECHECK_VERSION: JSON.stringify('bench'), 'import.meta.url': '__polecheckUrl' },
    banner: { js: "var __polecheckUrl = require('node:url').pathToFileURL(__filename).href;" },
    logLevel: 'error',
  });
}

/**
 * Exit status 1 is the command's "errors found", and also Node's status for an
 * uncaught exception: only the exception writes to stderr, so 1 with stderr
 * is a crash, whose time would measure nothing.
 */
const crashed = (args, status, stderr) => `node ${args.map((a) => a.replace(tmp, '$TMP')).join(' ')} exited with ${status}: ${String(stderr).trim().split('\n').slice(0, 6).join(' / ')}`;

/** Wall time of one short child process (ms) and its exit status; its output is discarded. */
function run(args) {
  const t0 = process.hrtime.bigint();
  const r = spawnSync(NODE, args, { cwd: tmp, env: { ...process.env, FORCE_COLOR: '0', NO_COLOR: '1' }, stdio: ['ignore', 'ignore', 'pipe'], maxBuffer: 1 << 26 });
  const wall = Number(process.hrtime.bigint() - t0) / 1e6;
  if (r.error) throw r.error;
  if (r.status !== 0 && !(r.status === 1 && !r.stderr.length)) throw new Error(crashed(args, r.status ?? r.signal, r.stderr));
  return { ms: wall, status: r.status };
}

/**
 * Like run(), for the long whole-process runs: a process still running after
 * RUN_CAP_MS is stopped (its wall time is then a lower bound), its peak
 * memory read first from /proc/PID/status (VmHWM, KiB), since a stopped
 * process writes no probe file.
 */
function runCapped(args, { stdoutFile, rssFile }) {
  const out = openSync(stdoutFile, 'w');
  rmSync(rssFile, { force: true });
  const env = { ...process.env, FORCE_COLOR: '0', NO_COLOR: '1', POLECHECK_BENCH_MAXRSS_FILE: rssFile };
  return new Promise((done, fail) => {
    const t0 = process.hrtime.bigint();
    const child = spawn(NODE, ['--import', PROBE, ...args], { cwd: tmp, env, stdio: ['ignore', out, 'pipe'] });
    let stderr = '';
    let hwm = null;
    let stopped = false;
    child.stderr.on('data', (d) => {
      if (stderr.length < 1 << 16) stderr += d;
    });
    const timer = setTimeout(() => {
      try {
        const m = /^VmHWM:\s+(\d+)\s+kB/m.exec(readFileSync(`/proc/${child.pid}/status`, 'utf8'));
        if (m) hwm = Number(m[1]);
      } catch {
        // no /proc here: the stopped run's memory stays unmeasured
      }
      stopped = true;
      child.kill('SIGKILL');
    }, RUN_CAP_MS);
    child.on('error', (err) => {
      clearTimeout(timer);
      closeSync(out);
      fail(err);
    });
    child.on('close', (code, signal) => {
      const wall = Number(process.hrtime.bigint() - t0) / 1e6;
      clearTimeout(timer);
      closeSync(out);
      if (!stopped && code !== 0 && !(code === 1 && !stderr.length)) return fail(new Error(crashed(args, code ?? signal, stderr)));
      const kib = stopped ? hwm : existsSync(rssFile) ? Number(readFileSync(rssFile, 'utf8')) : null;
      done({ ms: wall, status: code, stopped, maxRssKiB: kib });
    });
  });
}

// ------------------------------------------- 1. evaluation vs the closed form

const FIGURES = [
  ['dc_gain', 'dcGainDb'],
  ['gbw', 'gbwHz'],
  ['p1', 'p1Hz'],
  ['p2', 'p2Hz'],
  ['rhp_zero', 'rhpZeroHz'],
  ['phase_margin', 'phaseMarginDeg'],
];
{
  const next = rng(SEED);
  const designs = Array.from({ length: DESIGNS }, () => randomDesign(next).values);
  log(`evaluation: agreement on ${DESIGNS} seeded designs …`);
  const worst = Object.fromEntries(FIGURES.map(([k]) => [k, { rel: 0, design: -1 }]));
  designs.forEach((v, i) => {
    const model = evaluate(twoStageMiller, v);
    const ref = twoStageFigures(v);
    for (const [key, refKey] of FIGURES) {
      const a = model.exact[key].value;
      const b = ref[refKey];
      const rel = a === null || b === null ? (a === b ? 0 : Infinity) : a === b ? 0 : Math.abs(a - b) / Math.abs(b);
      if (!(rel <= worst[key].rel)) worst[key] = { rel, design: i, engine: a, reference: b };
    }
  });
  const bad = Object.entries(worst).filter(([, w]) => !(w.rel <= AGREEMENT));
  if (bad.length) {
    console.error(`bench/engine.mjs: the closed-form reference and evaluate() disagree beyond ${AGREEMENT} relative; a reference that disagrees measures nothing:`);
    for (const [key, w] of bad) console.error(`  ${key}: design ${w.design} (${JSON.stringify(designs[w.design])}): evaluate() ${w.engine}, reference ${w.reference}`);
    process.exit(1);
  }
  notes.push(`evaluate() and the closed form agree on ${DESIGNS} seeded designs (seed ${SEED}); worst relative difference: ${FIGURES.map(([k]) => `${k} ${worst[k].rel.toExponential(1)}`).join(', ')}`);

  try {
    // The engine's side reads every figure the way a rule does (the Model's
    // figures may be computed lazily); a checksum keeps both loops honest.
    let sink = 0;
    const engineSide = (v) => {
      const e = evaluate(twoStageMiller, v).exact;
      sink += e.dc_gain.value + e.gbw.value + e.p1.value + e.p2.value + (e.rhp_zero.value ?? 0) + (e.phase_margin.value ?? 0);
    };
    const minimalSide = (v) => {
      const f = twoStageFigures(v);
      sink += f.dcGainDb + f.gbwHz + f.p1Hz + f.p2Hz + (f.rhpZeroHz ?? 0) + (f.phaseMarginDeg ?? 0);
    };
    // One batch: `reps` passes over the designs; per-evaluation time in ms.
    const batch = (fn, reps) => {
      const t0 = performance.now();
      for (let r = 0; r < reps; r++) for (const v of designs) fn(v);
      return (performance.now() - t0) / (reps * designs.length);
    };
    // Warm-up, then size the batches to about 20 ms each (from the fastest of
    // five passes, which other work on the machine inflates least).
    for (const fn of [engineSide, minimalSide]) for (let i = 0; i < 3; i++) batch(fn, 1);
    const reps = (fn) => Math.max(1, Math.round(20 / Math.min(...Array.from({ length: 5 }, () => batch(fn, 1) * designs.length))));
    const engineReps = reps(engineSide);
    const minimalReps = reps(minimalSide);
    const engineTimes = [];
    const minimalTimes = [];
    log('evaluation: timing, alternating batches …');
    for (let i = 0; i < 25; i++) {
      engineTimes.push(batch(engineSide, engineReps));
      minimalTimes.push(batch(minimalSide, minimalReps));
    }
    if (!Number.isFinite(sink)) notes.push('(the evaluation checksum is not finite: some figure was missing)');
    const e = median(engineTimes);
    const m = median(minimalTimes);
    evalRow(e / m, times(e / m), `${ms(e)} vs ${ms(m)} per evaluation (medians of 25 alternating batches of ${engineReps * DESIGNS} and ${minimalReps * DESIGNS} evaluations)`);
  } catch (err) {
    failed(evalRow, 'timing of the evaluations', err);
  }
}

// ------------------------------------------------------ 2. checkText in-process

/** Median of warm checkText calls (after `warm` calls), up to `runs` or `capMs`. */
function checkTimes(name, text, { warm = 5, runs = 50, capMs = 8000 } = {}) {
  let result;
  for (let i = 0; i < warm; i++) result = checkText(name, text);
  const out = [];
  const t0 = performance.now();
  while (out.length < runs && (out.length < 5 || performance.now() - t0 < capMs)) {
    const t = performance.now();
    checkText(name, text);
    out.push(performance.now() - t);
  }
  return { median: median(out), n: out.length, result };
}

try {
  log('checkText: the failing phase-margin spec …');
  const failing = checkTimes('kx4-line-driver.md', FAILING_PM_SPEC);
  const pm = failing.result.findings.find((f) => f.rule === 'phase-margin');
  if (pm?.severity !== 'error') notes.push('(the failing phase-margin spec does not fail any more: bench/generate.mjs FAILING_PM_SPEC needs updating)');
  const passing = checkTimes('kx4-line-driver.md', PASSING_PM_SPEC);
  pmRow(failing.median, ms(failing.median), `median of ${failing.n} warm calls, ${failing.result.findings.length} findings`);
  notes.push(`the same block with a margin that holds (no solver): ${ms(passing.median)} per checkText (median of ${passing.n})`);
} catch (err) {
  failed(pmRow, 'checkText of the failing phase-margin spec', err);
}

try {
  log('checkText: 12 ranged keys, 4 bounds …');
  const ranged = checkTimes('strand-corner-bench.md', RANGED_SPEC, { warm: 3, runs: 30 });
  const errors = ranged.result.findings.filter((f) => f.severity === 'error').map((f) => f.rule);
  if (!errors.includes('phase-margin')) notes.push('(the ranged spec\'s phase-margin bound no longer fails at a corner: bench/generate.mjs RANGED_SPEC needs updating)');
  rangedRow(ranged.median, ms(ranged.median), `median of ${ranged.n} warm calls; errors: ${errors.join(', ') || 'none'}`);
} catch (err) {
  failed(rangedRow, 'checkText of the ranged spec', err);
}

// ------------------------------------------------------------- 3. cold start

try {
  const one = join(tmp, 'kx4-adc-driver.md');
  const failingOne = join(tmp, 'kx4-line-driver.md');
  writeFileSync(one, CONSISTENT_SPEC);
  writeFileSync(failingOne, FAILING_PM_SPEC);
  const commands = [['-e', '0'], [BIN, one], [BIN, failingOne]];
  if (run(commands[1]).status !== 0) notes.push('(the consistent one-file spec draws errors now: bench/generate.mjs CONSISTENT_SPEC needs updating)');
  if (run(commands[2]).status !== 1) notes.push('(the failing one-file spec passes now: bench/generate.mjs FAILING_PM_SPEC needs updating)');
  log(`cold start: ${COLD_ROUNDS} rounds of node -e 0 / consistent / failing …`);
  const walls = commands.map(() => []);
  for (let round = -2; round < COLD_ROUNDS; round++) {
    // Rotated order within a round, so that drift of the machine affects all three alike.
    for (let k = 0; k < 3; k++) {
      const c = (k + Math.max(0, round)) % 3;
      const t = run(commands[c]).ms;
      if (round >= 0) walls[c].push(t);
    }
  }
  const [bare, ok, fail] = walls.map(median);
  coldOk(ok / bare, times(ok / bare), `${ms(ok)} vs ${ms(bare)} (medians of ${COLD_ROUNDS})`);
  coldFail(fail / bare, times(fail / bare), `${ms(fail)} vs ${ms(bare)} (medians of ${COLD_ROUNDS})`);
} catch (err) {
  failed(coldOk, 'cold start', err);
  failed(coldFail, 'cold start', err);
}

// ------------------------------------------------------- 4. whole process

try {
  const folders = {};
  for (const [kind, failing, seed] of [['failing', true, SEED + 1], ['consistent', false, SEED + 2]]) {
    const dir = join(tmp, kind);
    mkdirSync(dir);
    const next = rng(seed);
    for (let i = 0; i < FOLDER_SPECS; i++) writeFileSync(join(dir, `block-${String(i).padStart(4, '0')}.md`), designSpec(next, i, { failing }));
    folders[kind] = { kind, dir, cli: [], parse: [], cliRss: [], parseRss: [], stopped: false, report: join(tmp, `${kind}.json`) };
  }
  log(`whole process: ${FOLDER_SPECS} failing and ${FOLDER_SPECS} consistent specs generated (seeds ${SEED + 1}, ${SEED + 2})`);
  const rss = join(tmp, 'maxrss');
  /** One paired run, in alternating order: the command, and the parse-only twin. */
  const pair = async (f) => {
    const both = [
      async () => {
        const r = await runCapped([BIN, '--format', 'json', f.dir], { stdoutFile: f.report, rssFile: rss });
        // A run counts only if it reported on every file.
        const counted = r.stopped ? null : summarize(f.report);
        f.cli.push(r.ms);
        f.cliRss.push(r.maxRssKiB);
        f.stopped ||= r.stopped;
        if (f.cli.length === 1) f.summary = counted ?? `stopped after ${ms(r.ms)}, so its findings were not counted`;
      },
      async () => {
        const r = await runCapped([parseOnly, f.dir], { stdoutFile: `${f.report}.parse`, rssFile: rss });
        const read = JSON.parse(readFileSync(`${f.report}.parse`, 'utf8') || '{}');
        if (r.stopped || read.specs !== FOLDER_SPECS) throw new Error(`the parse-only twin read ${read.specs ?? 'no'} specs of ${FOLDER_SPECS}${r.stopped ? ` and was stopped at ${ms(RUN_CAP_MS)}` : ''}`);
        f.parse.push(r.ms);
        f.parseRss.push(r.maxRssKiB);
      },
    ];
    if (f.cli.length % 2) both.reverse();
    for (const step of both) await step();
  };
  for (const f of Object.values(folders)) {
    log(`whole process: ${f.kind}, pair 1 (the command stopped at ${ms(RUN_CAP_MS)}) …`);
    await pair(f);
  }
  // More pairs while the budget lasts, the folder with fewer pairs first; a
  // stopped run is a lower bound that repeating would not change.
  for (;;) {
    const f = Object.values(folders).filter((x) => x.cli.length < 5 && !x.stopped).sort((a, b) => a.cli.length - b.cli.length)[0];
    if (!f || Date.now() - started + median(f.cli) + median(f.parse) > BUDGET_MS) break;
    log(`whole process: ${f.kind}, pair ${f.cli.length + 1} …`);
    await pair(f);
  }
  const rate = (wall) => ((FOLDER_SPECS / wall) * 1000).toFixed(0);
  for (const [f, setter] of [[folders.failing, failingRow], [folders.consistent, consistentRow]]) {
    const c = median(f.cli);
    const p = median(f.parse);
    const runs = `median of ${f.cli.length} paired run${f.cli.length > 1 ? 's' : ''}`;
    if (f.stopped) setter(c / p, `≥ ${times(c / p)}`, `the command was stopped at ${ms(RUN_CAP_MS)} (a lower bound) vs ${ms(p)}; ${f.summary}`, true);
    else setter(c / p, times(c / p), `${ms(c)} vs ${ms(p)} (${runs}); ${f.summary}`);
    notes.push(`${f.kind} folder: ${f.stopped ? 'under ' : ''}${rate(c)} specs/s through the command, ${rate(p)} specs/s read by the parse-only twin; max RSS of the command ${f.stopped ? '≥ ' : ''}${(Math.max(...f.cliRss) / 1024).toFixed(0)} MiB, of the twin ${(Math.max(...f.parseRss) / 1024).toFixed(0)} MiB`);
  }
  const f = folders.failing;
  const peak = Math.max(...f.cliRss) / 1024;
  if (!Number.isFinite(peak)) memoryRow(null, 'not measured', 'the run was stopped where /proc is not available');
  else memoryRow(peak, `${f.stopped ? '≥ ' : ''}${peak.toFixed(0)} MiB`, f.stopped ? `the high-water mark when the run was stopped at ${ms(RUN_CAP_MS)} (/proc/PID/status VmHWM)` : `largest of ${f.cliRss.length} run${f.cliRss.length > 1 ? 's' : ''} (process.resourceUsage().maxRSS, bench/max-rss-probe.mjs)`, f.stopped);
} catch (err) {
  for (const r of [failingRow, consistentRow, memoryRow]) failed(r, 'whole-process runs', err);
}

/** "2400 of 2400 files with errors (3712 errors, 760 warnings)" from the command's JSON report; throws unless it covers every file. */
function summarize(file) {
  let report;
  try {
    report = JSON.parse(readFileSync(file, 'utf8'));
  } catch (err) {
    throw new Error(`the command's JSON report could not be read (${err.message})`);
  }
  if (report?.files?.length !== FOLDER_SPECS) throw new Error(`the command's JSON report lists ${report?.files?.length ?? 'no'} files of ${FOLDER_SPECS}`);
  const withErrors = report.files.filter((x) => x.findings.some((y) => y.severity === 'error')).length;
  return `${withErrors} of ${report.files.length} files with errors (${report.summary.errors} errors, ${report.summary.warnings} warnings)`;
}

// ------------------------------------------------------------------ report

const commit = (() => {
  try {
    const head = execFileSync('git', ['rev-parse', '--short', 'HEAD'], { cwd: ROOT, encoding: 'utf8', stdio: ['ignore', 'pipe', 'ignore'] }).trim();
    const dirty = execFileSync('git', ['status', '--porcelain', '--', 'src', 'rules'], { cwd: ROOT, encoding: 'utf8', stdio: ['ignore', 'pipe', 'ignore'] }).trim();
    return dirty ? `${head} with uncommitted changes in src/ or rules/` : head;
  } catch {
    return 'unknown commit';
  }
})();
const cpu = cpus();
console.log(`polecheck engine bench — node ${process.version}, ${cpu.length} cores (${cpu[0]?.model ?? 'unknown cpu'}), ${(totalmem() / 2 ** 30).toFixed(0)} GiB, ${process.platform}; ${commit}`);
// Other work on the machine slows some figures more than others: say how busy it was.
console.log(`load average (1 min) ${loadAtStart.toFixed(1)} at the start, ${loadavg()[0].toFixed(1)} at the end`);
console.log('');
const header = ['figure', 'measured', 'bar', 'meets'];
// A lower bound (a stopped run) can show that a bar is missed, never that it is met.
const meets = (r) => (r.value === null ? '—' : r.value > r.limit ? 'no' : r.lowerBound ? '—' : 'yes');
const cells = rows.map((r) => [r.figure, r.shown, r.bar, meets(r)]);
const widths = header.map((h, i) => Math.max([...h].length, ...cells.map((c) => [...c[i]].length)));
const line = (c) => `| ${c.map((x, i) => (i === 1 ? x.padStart(widths[i]) : x.padEnd(widths[i]))).join(' | ')} |`;
console.log(line(header));
console.log(`|${widths.map((w, i) => (i === 1 ? `${'-'.repeat(w + 1)}:` : '-'.repeat(w + 2))).join('|')}|`);
for (const c of cells) console.log(line(c));
console.log('');
for (const r of rows) if (r.detail) console.log(`- ${r.figure}: ${r.detail}`);
for (const n of notes) console.log(`- ${n}`);
console.log(`\nbench time ${((Date.now() - started) / 1000).toFixed(0)} s`);
process.exitCode = unmeasured ? 1 : 0;
