// Benchmarks of the command (`npm run bench`). Prints figures; asserts nothing.
//
//   (a) cold start: one-file check with the built command vs `node -e ''`
//   (b) throughput: 1,000 seeded random specs in one folder, one run of the
//       command, and checkText in-process (start-up excluded)
//   (c) one check of a spec whose phase margin fails (the fix solver runs)
//
// Uses the bundle in dist/ (built first when missing) and, for the in-process
// figures, the TypeScript sources through tsx. Takes about two minutes at most:
// the in-process throughput stops after a time budget.

import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { cpus, tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { FAILING_PM_SPEC, generateSpec, rng } from './generate.mjs';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const BIN = join(ROOT, 'bin', 'polecheck.js');
const NODE = process.execPath;
const SEED = 1729;
const SPECS = 1000;
const COLD_RUNS = 15;
const IN_PROCESS_BUDGET_MS = 25_000;

// A spec of the (invented) KX-4 front end whose claims hold: exit status 0.
const ONE_SPEC = `---
polecheck: 1
block: kx4-adc-driver
title: ADC driver, KX-4 strain-gauge front end
topology: two-stage-miller
params:
  gm1: 240 µS
  r1: 1.8 MΩ
  c1: 60 fF
  gm2: 2.4 mS
  r2: 120 kΩ
  c2: 150 fF
  cc: 1.5 pF
  rz: 420 Ω
  i1: 24 µA
  i2: 200 µA
conditions:
  cl: 3 pF
  rl: 20 kΩ
  beta: 1
claims:
  dc_gain: 85.0 dB
  gbw: 24.3 MHz
  phase_margin: {min: 68 deg}
  slew_rate: 16.0 V/µs
---

# ADC driver
`;

const median = (xs) => {
  const s = [...xs].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
};

/** Wall time of one child process, in ms. */
function timed(args, opts = {}) {
  const t0 = process.hrtime.bigint();
  const r = spawnSync(NODE, args, { cwd: ROOT, encoding: 'utf8', maxBuffer: 1 << 30, env: { ...process.env, FORCE_COLOR: '0' }, ...opts });
  const ms = Number(process.hrtime.bigint() - t0) / 1e6;
  if (r.error) throw r.error;
  return { ms, status: r.status, stdout: r.stdout, stderr: r.stderr };
}

function inProcess(args) {
  const r = spawnSync(NODE, ['--import', 'tsx', join(ROOT, 'bench', 'inprocess.mjs'), ...args], { cwd: ROOT, encoding: 'utf8', maxBuffer: 1 << 26 });
  if (r.status !== 0) throw new Error(`in-process bench failed: ${r.stderr}`);
  return JSON.parse(r.stdout);
}

const ms = (x) => (x === null || x === undefined ? '—' : x >= 100 ? `${x.toFixed(0)} ms` : `${x.toFixed(1)} ms`);
const log = (s) => process.stderr.write(`${s}\n`);

function table(title, rows) {
  const w0 = Math.max(...rows.map((r) => [...r[0]].length));
  const w1 = Math.max(...rows.map((r) => [...r[1]].length));
  console.log(`\n${title}`);
  console.log(`  ${'-'.repeat(w0 + w1 + 4)}`);
  for (const [k, v, note] of rows) console.log(`  ${k.padEnd(w0)}  ${v.padStart(w1)}${note ? `  ${note}` : ''}`);
}

const started = Date.now();
if (!existsSync(join(ROOT, 'dist', 'polecheck.js'))) {
  log('building dist/ (node scripts/build.mjs) …');
  execFileSync(NODE, ['scripts/build.mjs'], { cwd: ROOT, stdio: 'inherit' });
}
const tmp = mkdtempSync(join(tmpdir(), 'polecheck-bench-'));
try {
  // (a) cold start
  const one = join(tmp, 'one-spec.md');
  writeFileSync(one, ONE_SPEC);
  const check = timed([BIN, one]);
  if (check.status !== 0) log(`note: one-spec.md is not consistent any more (exit ${check.status}); the cold-start figure still stands\n${check.stdout}`);
  log(`(a) cold start: ${COLD_RUNS} runs each …`);
  for (let i = 0; i < 2; i++) {
    timed(['-e', '']);
    timed([BIN, one]);
  }
  const bare = [];
  const cli = [];
  for (let i = 0; i < COLD_RUNS; i++) {
    // Interleaved, so that drift of the machine affects both alike.
    bare.push(timed(['-e', '']).ms);
    cli.push(timed([BIN, one]).ms);
  }
  const bareMed = median(bare);
  const cliMed = median(cli);

  // (b) throughput
  log(`(b) generating ${SPECS} specs (seed ${SEED}) …`);
  const folder = join(tmp, 'specs');
  mkdirSync(folder);
  const next = rng(SEED);
  for (let i = 0; i < SPECS; i++) writeFileSync(join(folder, `block-${String(i).padStart(4, '0')}.md`), generateSpec(next, i));
  log('(b) one run of the command over the folder …');
  const big = timed([BIN, '--format', 'json', folder]);
  const report = JSON.parse(big.stdout);
  const withErrors = report.files.filter((f) => f.findings.some((x) => x.severity === 'error')).length;
  const cliRate = (report.summary.files / big.ms) * 1000;
  const cliRateNoStart = (report.summary.files / (big.ms - cliMed)) * 1000;
  log(`(b) checkText in-process (budget ${IN_PROCESS_BUDGET_MS / 1000} s) …`);
  const inproc = inProcess(['throughput', folder, String(IN_PROCESS_BUDGET_MS)]);

  // (c) the failing phase margin
  log('(c) failing phase margin …');
  const fix = inProcess(['fix']);
  const pmFile = join(tmp, 'failing-pm.md');
  writeFileSync(pmFile, FAILING_PM_SPEC);
  const pmCli = [];
  for (let i = 0; i < 5; i++) pmCli.push(timed([BIN, pmFile]).ms);

  console.log(`polecheck bench — node ${process.version}, ${cpus().length} × ${cpus()[0]?.model ?? 'cpu'}, ${process.platform}`);
  table('(a) cold start, one-file check (median of 15 runs each, wall time)', [
    ["node -e ''", ms(bareMed), `min ${ms(Math.min(...bare))}`],
    ['polecheck one-spec.md', ms(cliMed), `min ${ms(Math.min(...cli))}`],
    ['ratio', `${(cliMed / bareMed).toFixed(2)} ×`, `polecheck's own start-up + check ≈ ${ms(cliMed - bareMed)}`],
  ]);
  table(`(b) throughput, ${SPECS} seeded random specs (seed ${SEED}; ${withErrors} with errors, ${report.summary.errors} errors, ${report.summary.warnings} warnings)`, [
    ['polecheck --format json FOLDER, one run', ms(big.ms), `exit ${big.status}`],
    ['  specs per second', cliRate.toFixed(0), 'including start-up'],
    ['  specs per second, start-up excluded', cliRateNoStart.toFixed(0), `wall time − cold-start median`],
    [`checkText in-process (${inproc.checked} of ${inproc.available} specs)`, ms(inproc.totalMs), inproc.checked < inproc.available ? 'stopped at the time budget' : ''],
    ['  specs per second', inproc.perSecond.toFixed(0), 'start-up excluded'],
    ['  median per spec', ms(inproc.medianMs), ''],
    ['  median, specs without errors', ms(inproc.withoutErrors.medianMs), `${inproc.withoutErrors.n} specs`],
    ['  median, specs with errors', ms(inproc.withErrors.medianMs), `${inproc.withErrors.n} specs (suggestions are solved for)`],
  ]);
  table(`(c) one check of a spec whose phase margin fails (model ${fix.phaseMarginDeg?.toFixed(1)}°, claimed ≥ 60°; ${fix.suggestions} suggestions)`, [
    ['checkText, first call in a fresh process', ms(fix.firstMs), ''],
    [`checkText, median of ${fix.runs} warm calls`, ms(fix.failingMedianMs), ''],
    ['  same block, margin that holds (no solver)', ms(fix.passingMedianMs), ''],
    ['polecheck failing-pm.md (median of 5, wall)', ms(median(pmCli)), `vs ${ms(cliMed)} for one-spec.md`],
  ]);
  console.log(`\ntotal bench time ${((Date.now() - started) / 1000).toFixed(0)} s`);
} finally {
  rmSync(tmp, { recursive: true, force: true });
}
