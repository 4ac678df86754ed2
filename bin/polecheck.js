#!/usr/bin/env node
// The bundle is built by `npm run build` (run by `npm install`/`npm ci` through
// `prepare`, and by npm when it installs polecheck from git).
import { existsSync } from 'node:fs';

const built = new URL('../dist/polecheck.js', import.meta.url);
if (existsSync(built)) await import(built.href);
else {
  process.stderr.write(
    'polecheck: this copy is not built (dist/ is missing).\n' +
      '  In a clone of polecheck: npm install (or npm run build).\n' +
      "  Installed from git as a dependency: npm skipped polecheck's build script; approve it in your package.json\n" +
      '  ("allowScripts": {"<polecheck git URL without #SHA>": true}) and run npm install again.\n',
  );
  process.exitCode = 2;
}
