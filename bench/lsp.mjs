// The language server's latency (`node bench/lsp.mjs`): the time from the
// last keystroke, once the debounce has run out, to the diagnostics of a
// typical demo spec arriving at the client. Measured end to end over stdio
// against the built command (`node bin/polecheck.js lsp`, dist/ rebuilt when
// missing or older than src/, rules/ or scripts/build.mjs), as an editor's
// LSP client sees it: each edit changes a claim's value (so every check is a
// real one), the clock runs from sending the change to receiving its
// diagnostics, and the server's debounce is subtracted. Prints the median
// and the 90th percentile per spec against the 30 ms bar; asserts nothing
// (exit 0 whatever it measures; 1 only when nothing could be measured).

import { execFileSync, spawn } from 'node:child_process';
import { existsSync, readFileSync, readdirSync, statSync } from 'node:fs';
import { cpus, loadavg } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { StreamMessageReader, StreamMessageWriter, createMessageConnection } from 'vscode-jsonrpc/node';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const BAR_MS = 30;
const DEBOUNCE_MS = 150;
const ROUNDS = Number(process.env.LSP_BENCH_ROUNDS ?? 40);
/** Typical demo specs: one whose claims fail (the fix solver runs), one consistent, one with ranges and a table. */
const SPECS = [
  ['thermo-amp.md (4 claims fail, table)', 'thermo-amp.md', /gbw: 21 MHz/, (i) => `gbw: ${21 + (i % 5)} MHz`],
  ['adc-driver.md (consistent)', 'adc-driver.md', /dc_gain: 80 dB/, (i) => `dc_gain: ${(80 + (i % 3) * 0.1).toFixed(1)} dB`],
  ['bridge-preamp.md (ranges, table)', 'bridge-preamp.md', /slew_rate: 16 V\/µs/, (i) => `slew_rate: ${(16 + (i % 4) * 0.1).toFixed(1)} V/µs`],
];

const newest = (dir) => Math.max(...readdirSync(dir, { withFileTypes: true, recursive: true }).filter((e) => e.isFile()).map((e) => statSync(join(e.parentPath ?? e.path, e.name)).mtimeMs));
const dist = join(ROOT, 'dist', 'lsp.cjs');
if (!existsSync(dist) || statSync(dist).mtimeMs < Math.max(newest(join(ROOT, 'src')), newest(join(ROOT, 'rules')), statSync(join(ROOT, 'scripts', 'build.mjs')).mtimeMs)) {
  console.log('building dist/ …');
  execFileSync(process.execPath, [join(ROOT, 'scripts', 'build.mjs')], { cwd: ROOT, stdio: 'inherit' });
}

const proc = spawn(process.execPath, [join(ROOT, 'bin', 'polecheck.js'), 'lsp'], { cwd: ROOT, stdio: ['pipe', 'pipe', 'inherit'] });
const conn = createMessageConnection(new StreamMessageReader(proc.stdout), new StreamMessageWriter(proc.stdin));
const waiting = new Map();
conn.onNotification('textDocument/publishDiagnostics', (p) => {
  const w = waiting.get(`${p.uri}#${p.version}`);
  if (w) w(process.hrtime.bigint());
});
conn.onRequest('client/registerCapability', () => null);
conn.listen();
await conn.sendRequest('initialize', { processId: process.pid, rootUri: pathToFileURL(ROOT).href, capabilities: {}, initializationOptions: { debounceMs: DEBOUNCE_MS } });
await conn.sendNotification('initialized', {});

const quantile = (xs, q) => [...xs].sort((a, b) => a - b)[Math.min(xs.length - 1, Math.floor(q * xs.length))];
const rows = [];
let version = 0;
for (const [label, file, pattern, value] of SPECS) {
  const path = join(ROOT, 'specs', 'strand', file);
  const uri = pathToFileURL(path).href;
  const text = readFileSync(path, 'utf8');
  const arrived = (v) => new Promise((res) => waiting.set(`${uri}#${v}`, res));
  let v = ++version;
  let got = arrived(v);
  await conn.sendNotification('textDocument/didOpen', { textDocument: { uri, languageId: 'markdown', version: v, text } });
  await got;
  const times = [];
  // The first rounds warm the server's JIT, as the first minutes of an editing session do; they are not counted.
  for (let i = 0; i < ROUNDS + 5; i++) {
    v = ++version;
    got = arrived(v);
    const sent = process.hrtime.bigint();
    await conn.sendNotification('textDocument/didChange', { textDocument: { uri, version: v }, contentChanges: [{ text: text.replace(pattern, value(i + 1)) }] });
    const at = await got;
    if (i >= 5) times.push(Number(at - sent) / 1e6 - DEBOUNCE_MS);
  }
  await conn.sendNotification('textDocument/didClose', { textDocument: { uri } });
  rows.push({ label, median: quantile(times, 0.5), p90: quantile(times, 0.9), n: times.length });
}
await conn.sendRequest('shutdown');
await conn.sendNotification('exit');

console.log(`polecheck lsp: last keystroke (after the ${DEBOUNCE_MS} ms debounce) → diagnostics at the client, over stdio`);
console.log(`machine: ${cpus().length} × ${cpus()[0]?.model ?? 'cpu'}, load ${loadavg().map((x) => x.toFixed(2)).join(' ')}; ${ROUNDS} edits per spec after 5 warm-up edits`);
const w = Math.max(...rows.map((r) => r.label.length));
for (const r of rows) console.log(`  ${r.label.padEnd(w)}  median ${r.median.toFixed(1).padStart(6)} ms  p90 ${r.p90.toFixed(1).padStart(6)} ms  (bar ${BAR_MS} ms: median ${(r.median / BAR_MS).toFixed(2)}× the bar)`);
process.exitCode = rows.length ? 0 : 1;
