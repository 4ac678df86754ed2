// Bundles the command into one file, dist/polecheck.cjs: loading one script
// is what keeps a pre-commit run fast (module resolution of the dependency
// tree dominates start-up otherwise). What a plain check does not use is
// bundled but evaluated only on demand (the writers of the formats other than
// text, the diff library, the JSON Schema, worker threads). mathjs is not in
// the bundle: its parser, built with create() from the parse factories only
// (src/spec/mathjs-parser.ts), is a chunk of its own, dist/expr.cjs, which the
// bundle requires the first time a document holds an expression
// (src/spec/expressions.ts); a spec without expressions never loads it.
// The plotting library and its DOM, which only `report --html` needs, are
// bundled apart into dist/html-libs.cjs: the command's bundle requires that
// file when the HTML writer asks for them (src/report/html/libs.ts), so
// neither is parsed by `check`.
//
// A second bundle, dist/lsp.cjs, is the language server (`polecheck lsp`),
// loaded through dist/lsp.js by that subcommand only.
//
// Then the loaders: dist/polecheck.js (the command, imported by
// bin/polecheck.js) and dist/worker.js (a check worker thread) run the bundle
// through dist/load.js with a V8 code cache, which the build makes last by
// checking two sample specs (see scripts/bundle-loader.mjs).
import { spawnSync } from 'node:child_process';
import { copyFileSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { build } from 'esbuild';

const pkg = JSON.parse(readFileSync(new URL('../package.json', import.meta.url), 'utf8'));

// Outputs of earlier layouts (an ES-module bundle split into chunks) must not linger.
rmSync('dist/chunks', { recursive: true, force: true });
rmSync('dist/polecheck.code-cache', { force: true });

// src/report/html/libs.ts is dist/html-libs.cjs, required beside the bundle at run time.
const htmlLibsApart = {
  name: 'html-libs-apart',
  setup(b) {
    b.onResolve({ filter: /^\.\/libs$/ }, (args) => (args.importer.replace(/\\/g, '/').endsWith('src/report/html/writer.ts') ? { path: './html-libs.cjs', external: true } : undefined));
  },
};

await build({
  entryPoints: ['src/report/html/libs.ts'],
  bundle: true,
  platform: 'node',
  target: 'node20',
  format: 'cjs',
  outfile: 'dist/html-libs.cjs',
  logLevel: 'warning',
});

const bundleOptions = {
  plugins: [htmlLibsApart],
  // import() of the external libs becomes require(): the bundle runs in a vm.Script, which has no loader for import().
  supported: { 'dynamic-import': false },
  bundle: true,
  platform: 'node',
  target: 'node20',
  format: 'cjs',
  // import.meta.url in the sources (rule pages beside the package, lazily loaded built-ins) is the bundle's own URL.
  define: { POLECHECK_VERSION: JSON.stringify(pkg.version), POLECHECK_EXPR_CHUNK: JSON.stringify('./expr.cjs'), 'import.meta.url': '__polecheckUrl' },
  banner: { js: "var __polecheckUrl = require('node:url').pathToFileURL(__filename).href;" },
  logLevel: 'warning',
};
await build({ ...bundleOptions, entryPoints: ['src/main.ts'], outfile: 'dist/polecheck.cjs' });
// The language server (`polecheck lsp`) is a bundle of its own, with the
// protocol libraries: the command loads it only for that subcommand.
await build({ ...bundleOptions, entryPoints: ['src/lsp/main.ts'], outfile: 'dist/lsp.cjs' });

// The expression parser's chunk (see above).
await build({
  entryPoints: ['src/spec/mathjs-parser.ts'],
  bundle: true,
  platform: 'node',
  target: 'node20',
  format: 'cjs',
  outfile: 'dist/expr.cjs',
  logLevel: 'warning',
});

copyFileSync(new URL('./bundle-loader.mjs', import.meta.url), 'dist/load.js');
writeFileSync(
  'dist/polecheck.js',
  "// The command (built by scripts/build.mjs): the bundle run with its code cache.\nimport { loadBundle } from './load.js';\n\nloadBundle().runCommand(new URL('./worker.js', import.meta.url), () => import('./lsp.js').then((m) => m.serveLsp()));\n",
);
writeFileSync('dist/lsp.js', "// The language server (built by scripts/build.mjs), loaded by `polecheck lsp` only.\nimport { createRequire } from 'node:module';\n\nexport const { serveLsp } = createRequire(import.meta.url)('./lsp.cjs');\n");
writeFileSync('dist/worker.js', "// A check worker thread (built by scripts/build.mjs; see src/cli/pool.ts).\nimport { loadBundle } from './load.js';\n\nloadBundle().serveChecks();\n");

// The code cache: what V8 compiled for a plain check of a consistent spec and
// of one whose claims fail (the suggestion solver runs), one with a table.
const SAMPLE = (claims, body = '') => `---
polecheck: 1
block: build-sample
topology: two-stage-miller
params:
  gm1: 240 µS
  r1: 1.8 MΩ
  c1: 60 fF
  gm2: 2.4 mS
  r2: 120 kΩ
  c2: 150 fF
  cc: 1.5 pF ±10 %
  rz: 420 Ω
  i1: 24 µA
  i2: 200 µA
conditions:
  cl: 3 pF
  rl: 20 kΩ
  beta: 1
claims:
${claims}
---

# Sample
${body}`;
const samples = mkdtempSync(join(tmpdir(), 'polecheck-build-'));
try {
  writeFileSync(join(samples, 'a.md'), SAMPLE('  dc_gain: 85.0 dB\n  gbw: 24.3 MHz\n  phase_margin: {min: 60 deg}\n  slew_rate: 16.0 V/µs'));
  writeFileSync(join(samples, 'b.md'), SAMPLE('  dc_gain: 95 dB\n  gbw: 40 MHz\n  phase_margin: {min: 80 deg}', '\n| Parameter | Typ | Unit |\n| --- | --- | --- |\n| GBW | 30 | MHz |\n'));
  const out = join(process.cwd(), 'dist', 'polecheck.code-cache');
  const env = { ...process.env, POLECHECK_WRITE_CODE_CACHE: out, NO_COLOR: '1', POLECHECK_WORKERS: '0' };
  const r = spawnSync(process.execPath, ['dist/polecheck.js', samples], { env, encoding: 'utf8' });
  // Exit status 1: the second sample's claims fail, as they should. Without a cache the command still works.
  if (r.status !== 1) console.warn(`build: the sample check ended with status ${r.status}; no code cache\n${r.stderr}`);
} finally {
  rmSync(samples, { recursive: true, force: true });
}
