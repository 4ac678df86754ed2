// The parse-only twin of the command, for bench/engine.mjs: the command's own
// file discovery and file reading (src/cli.ts) and its reader (readDocument,
// src/pipeline.ts: remark, js-yaml, the schema, the tables), bundled the way
// scripts/build.mjs bundles the command (bench/engine.mjs builds it), and
// nothing after the Spec: no model, no rules, no report.
// `node parse-only.cjs FOLDER…` prints how many files it found, how many specs
// it read and how many findings the reading made.
import { resolve } from 'node:path';
import { DEFAULT_MAX_BYTES, discover, readSpecFile } from '../src/cli.ts';
import { readDocument } from '../src/pipeline.ts';

const cwd = process.cwd();
let specs = 0;
let findings = 0;
const files = discover(process.argv.slice(2), cwd);
for (const f of files) {
  const read = readSpecFile(resolve(cwd, f), DEFAULT_MAX_BYTES, f);
  if (read.kind === 'done') continue;
  const doc = readDocument(f, read.text);
  if (doc.kind === 'spec') {
    if (doc.spec) specs++;
    findings += doc.findings.length;
  }
}
process.stdout.write(`${JSON.stringify({ files: files.length, specs, findings })}\n`);
