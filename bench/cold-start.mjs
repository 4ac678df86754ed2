// Cold start with and without expressions (`node bench/cold-start.mjs
// [--base REF] [--rounds N]`). Prints, never asserts:
//
//   1. a plain spec's cold one-file check with this tree's command against the
//      same check with the command built from REF (default `main`): the
//      expression support must not make a plain check slower (its parser is a
//      chunk of its own, dist/expr.cjs, loaded only on the first expression);
//   2. a spec written with design quantities and expressions, cold, with this
//      tree's command: what loading the parser chunk costs once;
//   3. whether each run loaded dist/expr.cjs (a CommonJS load hook counts).
//
// Both commands are built by scripts/build.mjs into scratch folders (REF's
// sources from `git archive`, node_modules linked), so dist/ is left alone.
// Runs alternate between the variants, `rounds` times each (default 15);
// figures are medians of wall time.

import { execFileSync, spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const args = process.argv.slice(2);
const opt = (name, fallback) => {
  const i = args.indexOf(name);
  return i >= 0 ? args[i + 1] : fallback;
};
const BASE = opt('--base', 'main');
const ROUNDS = Number(opt('--rounds', '15'));

const PLAIN = `---
polecheck: 1
block: strand-cold-plain
topology: two-stage-miller
params:
  gm1: 267 µS
  r1: 2.4 MΩ
  c1: 45 fF
  gm2: 1.8 mS
  r2: 150 kΩ
  c2: 120 fF
  cc: 1.2 pF
  i1: 20 µA ±10%
  i2: 150 µA
conditions:
  cl: 2 pF
claims:
  gbw: 34 MHz
  phase_margin: {min: 60 deg}
  slew_rate: 16 V/µs
---
`;

// The same block written with design quantities and expressions (the same values).
const EXPRESSIONS = PLAIN.replace('strand-cold-plain', 'strand-cold-expressions')
  .replace('params:\n  gm1: 267 µS\n  r1: 2.4 MΩ', 'design:\n  i1: 20 µA ±10%\n  vov1: 150 mV\n  ro2: 4 MΩ\n  ro4: 6 MΩ\n  gm_id2: 12 /V\n  i2: 150 µA\nparams:\n  gm1: 2 * i1 / vov1\n  r1: ro2 ∥ ro4')
  .replace('  gm2: 1.8 mS', '  gm2: gm_id2 * i2')
  .replace('  i1: 20 µA ±10%\n  i2: 150 µA\nconditions', 'conditions');

const scratch = mkdtempSync(join(tmpdir(), 'polecheck-cold-'));
const log = (s) => process.stderr.write(`${s}\n`);

function buildFrom(dir) {
  symlinkSync(join(ROOT, 'node_modules'), join(dir, 'node_modules'));
  execFileSync(process.execPath, [join(dir, 'scripts', 'build.mjs')], { cwd: dir, stdio: 'pipe' });
  return join(dir, 'dist', 'polecheck.js');
}

function median(xs) {
  const s = [...xs].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
}

try {
  // This tree.
  const here = join(scratch, 'here');
  mkdirSync(here);
  for (const name of ['src', 'rules', 'scripts', 'package.json', 'README.md']) symlinkSync(join(ROOT, name), join(here, name));
  log('building this tree…');
  const cmdHere = buildFrom(here);
  // The base.
  const base = join(scratch, 'base');
  mkdirSync(base);
  let cmdBase;
  try {
    const tar = execFileSync('git', ['archive', '--format=tar', BASE, 'src', 'rules', 'scripts', 'package.json', 'README.md'], { cwd: ROOT, maxBuffer: 1 << 28 });
    execFileSync('tar', ['-x', '-C', base], { input: tar });
    log(`building ${BASE}…`);
    cmdBase = buildFrom(base);
  } catch (err) {
    log(`cannot build ${BASE}: ${String(err.message ?? err).split('\n')[0]}; row 1 is not measured`);
  }
  const specs = join(scratch, 'specs');
  mkdirSync(specs);
  writeFileSync(join(specs, 'plain.md'), PLAIN);
  writeFileSync(join(specs, 'expressions.md'), EXPRESSIONS);
  const hook = join(scratch, 'hook.cjs');
  writeFileSync(hook, "const M = require('node:module'); const fs = require('node:fs'); const load = M._load; M._load = function (request, parent, isMain) { const out = load.apply(this, arguments); try { if (/expr\\.cjs$/.test(request)) fs.appendFileSync(process.env.POLECHECK_LOAD_LOG, request + '\\n'); } catch {} return out; };\n");

  const once = (cmd, file) => {
    const logFile = join(scratch, 'loads.txt');
    writeFileSync(logFile, '');
    const t = process.hrtime.bigint();
    const r = spawnSync(process.execPath, ['--require', hook, cmd, join(specs, file)], { env: { ...process.env, NO_COLOR: '1', POLECHECK_LOAD_LOG: logFile }, encoding: 'utf8' });
    const ms = Number(process.hrtime.bigint() - t) / 1e6;
    if (r.status !== 0 && r.status !== 1) throw new Error(`${file}: exit ${r.status}\n${r.stderr}`);
    return { ms, chunk: readFileSync(logFile, 'utf8').trim() !== '' };
  };
  const variants = [
    ...(cmdBase ? [{ name: `plain spec, ${BASE}`, cmd: cmdBase, file: 'plain.md' }] : []),
    { name: 'plain spec, this tree', cmd: cmdHere, file: 'plain.md' },
    { name: 'spec with expressions, this tree', cmd: cmdHere, file: 'expressions.md' },
  ];
  const times = new Map(variants.map((v) => [v.name, []]));
  const chunk = new Map(variants.map((v) => [v.name, false]));
  for (const v of variants) once(v.cmd, v.file); // warm the file cache
  for (let i = 0; i < ROUNDS; i++) {
    for (const v of variants) {
      const r = once(v.cmd, v.file);
      times.get(v.name).push(r.ms);
      if (r.chunk) chunk.set(v.name, true);
    }
  }
  const nodeOnly = [];
  for (let i = 0; i < ROUNDS; i++) {
    const t = process.hrtime.bigint();
    spawnSync(process.execPath, ['-e', '0']);
    nodeOnly.push(Number(process.hrtime.bigint() - t) / 1e6);
  }
  const ref = median(times.get('plain spec, this tree'));
  console.log(`cold one-file check, median of ${ROUNDS} runs each (node -e 0: ${median(nodeOnly).toFixed(0)} ms)`);
  for (const v of variants) {
    const m = median(times.get(v.name));
    console.log(`  ${v.name.padEnd(36)} ${m.toFixed(0).padStart(5)} ms   ×${(m / ref).toFixed(2)} of the plain spec here   expr.cjs loaded: ${chunk.get(v.name) ? 'yes' : 'no'}`);
  }
  if (cmdBase) console.log(`  plain spec, this tree / ${BASE}: ×${(ref / median(times.get(`plain spec, ${BASE}`))).toFixed(3)}`);
} finally {
  rmSync(scratch, { recursive: true, force: true });
}
