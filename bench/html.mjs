// The time to write the review pages of the demo repository (`node
// bench/html.mjs`): the built command, `report --html DIR specs`, as a whole
// process, against the text report of the same files and against `node -e 0`;
// and what loading the plotting library costs (dist/html-libs.cjs required in
// a fresh process). Median of 5 runs each, wall time, on this machine as it is
// (the load average is printed: another job on the machine slows every row).
// Prints; asserts nothing.

import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readdirSync, rmSync, statSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const BIN = join(ROOT, 'bin', 'polecheck.js');
const RUNS = 5;

/** Newest modification time under a folder, ms. */
function newest(dir) {
  let t = 0;
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    const p = join(dir, e.name);
    t = Math.max(t, e.isDirectory() ? newest(p) : statSync(p).mtimeMs);
  }
  return t;
}

const bundle = join(ROOT, 'dist', 'polecheck.cjs');
if (!existsSync(bundle) || !existsSync(join(ROOT, 'dist', 'html-libs.cjs')) || statSync(bundle).mtimeMs < Math.max(newest(join(ROOT, 'src')), newest(join(ROOT, 'rules')))) {
  console.log('building dist/ (missing or older than src/) …');
  execFileSync(process.execPath, [join(ROOT, 'scripts', 'build.mjs')], { cwd: ROOT, stdio: 'inherit' });
}

function timed(args, opts = {}) {
  const t0 = process.hrtime.bigint();
  const r = spawnSync(process.execPath, args, { cwd: ROOT, encoding: 'utf8', env: { ...process.env, NO_COLOR: '1' }, ...opts });
  const ms = Number(process.hrtime.bigint() - t0) / 1e6;
  if (r.status !== 0) throw new Error(`${args.join(' ')} exited with ${r.status}: ${r.stderr}`);
  return ms;
}

const median = (xs) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];

function measure(name, run) {
  run(); // warm the file cache
  const times = [];
  for (let i = 0; i < RUNS; i++) times.push(run());
  return { name, ms: median(times) };
}

const out = mkdtempSync(join(tmpdir(), 'polecheck-bench-html-'));
try {
  const blocks = readdirSync(join(ROOT, 'specs', 'strand')).filter((f) => f.endsWith('.md')).length;
  const node = measure('node -e 0', () => timed(['-e', '0']));
  const libs = measure('require dist/html-libs.cjs', () => timed(['-e', `require(${JSON.stringify(join(ROOT, 'dist', 'html-libs.cjs'))})`]));
  const text = measure('report specs (text)', () => timed([BIN, 'report', 'specs']));
  const html = measure(`report --html DIR specs (${blocks} block pages + index)`, () => timed([BIN, 'report', '--html', join(out, 'site'), 'specs']));
  const check = measure('check specs', () => {
    const t0 = process.hrtime.bigint();
    spawnSync(process.execPath, [BIN, 'specs'], { cwd: ROOT, env: { ...process.env, NO_COLOR: '1' } });
    return Number(process.hrtime.bigint() - t0) / 1e6;
  });
  const w = Math.max(...[node, libs, text, html, check].map((r) => r.name.length));
  console.log(`review pages of the demo repository, median of ${RUNS} runs (load average ${loadavg().map((x) => x.toFixed(2)).join(' ')})`);
  for (const r of [node, check, text, libs, html]) console.log(`  ${r.name.padEnd(w)}  ${r.ms.toFixed(0).padStart(6)} ms`);
  console.log(`  pages vs text report: ${(html.ms / text.ms).toFixed(2)}×; the plotting library's load: ${(libs.ms - node.ms).toFixed(0)} ms of it; per block page: ${((html.ms - text.ms) / blocks).toFixed(0)} ms beyond the text report`);
  const sizes = ['polecheck.cjs', 'html-libs.cjs'].map((f) => `${f} ${(statSync(join(ROOT, 'dist', f)).size / 1024).toFixed(0)} KiB`);
  console.log(`  bundles: ${sizes.join(', ')} (check loads only the first)`);
} finally {
  rmSync(out, { recursive: true, force: true });
}
