// Bundles the command into one file: loading one module is what keeps a
// pre-commit run fast (module resolution of the dependency tree dominates
// start-up otherwise). mathjs stays out of the start-up path: it is only
// imported lazily on the error path of unknown units.
import { build } from 'esbuild';
import { readFileSync } from 'node:fs';

const pkg = JSON.parse(readFileSync(new URL('../package.json', import.meta.url), 'utf8'));

await build({
  entryPoints: ['src/main.ts'],
  bundle: true,
  platform: 'node',
  target: 'node20',
  format: 'esm',
  outdir: 'dist',
  entryNames: 'polecheck',
  splitting: true,
  chunkNames: 'chunks/[name]-[hash]',
  define: { POLECHECK_VERSION: JSON.stringify(pkg.version) },
  banner: { js: "import { createRequire as __polecheckRequire } from 'node:module'; const require = __polecheckRequire(import.meta.url);" },
  logLevel: 'warning',
});
