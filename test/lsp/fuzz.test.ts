// A bounded fuzz slice of the language server: a few hundred seeded random
// edits to a demo spec, sent as incremental changes the way an editor sends
// keystrokes — half-typed YAML, broken flow mappings, stray fences, table
// pipes, digits and units in the wrong places — with hover, code action,
// completion and outline requests in between. The server must answer every
// request, publish diagnostics for the final text equal to a fresh check of
// it, never log a failure of its own, and exit cleanly at the end.

import { readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { afterAll, beforeAll, expect, it } from 'vitest';
import { checkText } from '../../src/check';
import { mulberry32 } from '../reference/designs';
import { type Client, ROOT, buildScratch, initialize, shutdown, startClient } from './client';

const SEED = 20261202;
const EDITS = 300;

let scratch: string;
let c: Client;

beforeAll(async () => {
  let bin: string;
  ({ scratch, bin } = buildScratch('polecheck-lsp-fuzz-'));
  c = startClient(bin, ROOT);
  await initialize(c, pathToFileURL(ROOT).href, { debounceMs: 5 });
}, 120_000);

afterAll(() => {
  if (c && c.proc.exitCode === null) c.proc.kill();
  if (scratch) rmSync(scratch, { recursive: true, force: true });
});

const SNIPPETS = [':', ': ', '{', '}', '[', ']', ',', '- ', '\n', '  ', '#', '"', "'", '---', '|', '\t', 'µ', ' MHz', ' pF', ' deg', '°', '±', '%', 'min: ', '{min: 6', 'gbw: ', 'cc', 'beta: 0.', '&a', '*a', '!!str ', '1', '2', '5', '.', 'e', 'k', 'M'];

/** The 0-based line and character of an offset. */
function position(text: string, offset: number): { line: number; character: number } {
  const before = text.slice(0, offset);
  const line = (before.match(/\n/g) ?? []).length;
  return { line, character: offset - (before.lastIndexOf('\n') + 1) };
}

it(`survives ${EDITS} seeded random edits (seed ${SEED}) and answers every request`, async () => {
  const rnd = mulberry32(SEED);
  const pick = <T>(xs: readonly T[]): T => xs[Math.floor(rnd() * xs.length)];
  const path = join(ROOT, 'specs', 'strand', 'thermo-amp.md');
  const uri = pathToFileURL(path).href;
  let text = readFileSync(path, 'utf8');
  let version = 1;
  await c.conn.sendNotification('textDocument/didOpen', { textDocument: { uri, languageId: 'markdown', version, text } });
  const answered: string[] = [];
  const original = text;
  for (let i = 0; i < EDITS; i++) {
    // Now and then the author undoes everything (a whole-text change): the edits start again from a spec that parses.
    if (i % 20 === 0 && i > 0) {
      text = original;
      version++;
      await c.conn.sendNotification('textDocument/didChange', { textDocument: { uri, version }, contentChanges: [{ text }] });
    }
    // Edits cluster in the front matter, where the YAML is.
    const head = text.indexOf('\n---', 3) > 0 ? text.indexOf('\n---', 3) + 4 : text.length;
    const at = Math.floor(rnd() * (rnd() < 0.85 ? head : text.length));
    const del = rnd() < 0.4 ? Math.floor(rnd() * 8) : 0;
    const insert = rnd() < 0.8 ? pick(SNIPPETS) : '';
    const end = Math.min(text.length, at + del);
    const range = { start: position(text, at), end: position(text, end) };
    text = text.slice(0, at) + insert + text.slice(end);
    version++;
    await c.conn.sendNotification('textDocument/didChange', { textDocument: { uri, version }, contentChanges: [{ range, text: insert }] });
    // Two edits in three wait for their diagnostics (each state checked); the third comes within the debounce.
    if (i % 3 !== 2) {
      const v = version;
      if (c.latest(uri)?.version !== v) await c.diagnostics(uri, (p) => p.version === v);
    }
    if (i % 10 === 9) {
      const p = position(text, Math.floor(rnd() * text.length));
      const doc = { textDocument: { uri } };
      const replies = await Promise.all([
        c.conn.sendRequest('textDocument/hover', { ...doc, position: p }),
        c.conn.sendRequest('textDocument/codeAction', { ...doc, range: { start: p, end: p }, context: { diagnostics: [] } }),
        c.conn.sendRequest('textDocument/completion', { ...doc, position: p }),
        c.conn.sendRequest('textDocument/documentSymbol', doc),
      ]);
      expect(Array.isArray(replies[1]) && Array.isArray(replies[2]) && Array.isArray(replies[3])).toBe(true);
      answered.push(`${i}`);
    }
  }
  // Published already if the last requests made the server check the final text.
  const final = c.latest(uri)?.version === version ? c.latest(uri)! : await c.diagnostics(uri, (p) => p.version === version);
  // The final text's diagnostics are those of a fresh check of the same text.
  const expected = checkText(path, text).findings;
  expect(final.diagnostics.map((d) => d.code)).toEqual(expected.map((f) => f.rule));
  final.diagnostics.forEach((d, i) => {
    // The range holds the finding's place (a finding just past what was written covers the word before it).
    expect(d.range.start.line).toBe(expected[i].line - 1);
    expect(d.range.start.character <= expected[i].column - 1 && expected[i].column - 1 <= d.range.end.character).toBe(true);
  });
  expect(answered.length).toBe(EDITS / 10);
  // The slice went through both half-typed YAML and documents that parse and were checked.
  const states = c.published.filter((p) => p.uri === uri);
  expect(states.filter((p) => p.diagnostics.some((d) => d.code === 'yaml-syntax')).length).toBeGreaterThan(10);
  expect(states.filter((p) => p.diagnostics.some((d) => d.code === 'phase-margin')).length).toBeGreaterThan(10);
  expect(c.stderr()).not.toMatch(/failed/);
  expect(await shutdown(c)).toBe(0);
}, 240_000);
