// The language server end to end, over stdio, as an editor's generic LSP
// client would drive it: the real built command (`node bin/polecheck.js lsp`,
// built by the project's build script into a scratch folder) spoken to through
// vscode-jsonrpc's message connection. Every expectation is read from what
// the command itself reports for the same text (`check --format json`, the
// text report, `report`), from `polecheck schema`, or from ngspice; none is
// a string made up here.

import { spawnSync } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, readFileSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CodeAction, CompletionItem, Diagnostic, DocumentSymbol, Hover } from 'vscode-languageserver-protocol';
import { checkText } from '../../src/check';
import { readDocument } from '../../src/pipeline';
import { type Client, ROOT, applyTextEdits, buildScratch, initialize, shutdown, startClient } from './client';
import { ngspiceAvailable, runTwoStage } from '../reference/ngspice';


let scratch: string;
let bin: string;
let ws: string;
let c: Client;

/** The command as a user runs it, in the workspace (where its polecheck.yaml is found). */
const cli = (args: string[], cwd = ws): { stdout: string; status: number | null } => {
  const r = spawnSync(process.execPath, [bin, ...args], { cwd, encoding: 'utf8', env: { ...process.env, NO_COLOR: '1', POLECHECK_WORKERS: '0' } });
  return { stdout: r.stdout, status: r.status };
};

interface JsonFinding {
  rule: string;
  severity: string;
  line: number;
  column: number;
  claim: string | null;
  message: string;
  related?: Array<{ line: number; column: number; message: string }>;
  waived?: { reason: string };
  derivation?: { how: string };
  fixes?: Array<{ kind: string; text: string; edit?: { line: number; column: number; endLine: number; endColumn: number; text: string } | null; meetsAll?: boolean; stable?: boolean; changes?: Record<string, number> }>;
  verdict?: { outcome: string };
}

/** `check --format json`'s findings for `text`, checked as a file beside the original, from its folder (the command finds polecheck.yaml upward from there, as the server does from the file). */
function checkJson(file: string, text: string): JsonFinding[] {
  const probe = join(dirname(file), `.probe-${Date.now()}-${Math.random().toString(36).slice(2)}.md`);
  writeFileSync(probe, text);
  try {
    const out = JSON.parse(cli(['--format', 'json', probe], dirname(file)).stdout) as { files: Array<{ findings: JsonFinding[] }> };
    return out.files[0]?.findings ?? [];
  } finally {
    rmSync(probe, { force: true });
  }
}

const SEVERITY: Record<string, number> = { error: 1, warning: 2, info: 3, note: 3 };

/** The diagnostics say what the command's findings say: same rule, place, severity, message, related places, rule page. */
function expectSameAsCheck(diags: Diagnostic[], findings: JsonFinding[]): void {
  // The range holds the finding's place (a finding just past what was written covers the word before it).
  const place = (d: Diagnostic, f: JsonFinding | undefined) => (f && d.range.start.line === f.line - 1 && d.range.start.character <= f.column - 1 && f.column - 1 <= d.range.end.character ? `${f.line}:${f.column}` : `${d.range.start.line + 1}:${d.range.start.character + 1}`);
  expect(diags.map((d, i) => `${d.code}@${place(d, findings[i])}`)).toEqual(findings.map((f) => `${f.rule}@${f.line}:${f.column}`));
  findings.forEach((f, i) => {
    const d = diags[i];
    expect(d.severity).toBe(f.waived ? 4 : SEVERITY[f.severity]);
    if (f.waived) expect(d.message).toContain(f.message);
    else expect(d.message).toBe(f.message);
    expect(d.range.end.line).toBe(d.range.start.line);
    expect(d.range.end.character).toBeGreaterThan(d.range.start.character);
    expect((d.relatedInformation ?? []).map((r) => [r.location.range.start.line + 1, r.location.range.start.character + 1, r.message])).toEqual((f.related ?? []).map((r) => [r.line, r.column, r.message]));
    if (d.codeDescription) {
      expect(d.codeDescription.href).toBe(pathToFileURL(join(scratch, 'rules', `${f.rule}.md`)).href);
      expect(existsSync(fileURLToPath(d.codeDescription.href))).toBe(true);
    } else expect(existsSync(join(ROOT, 'rules', `${f.rule}.md`))).toBe(false);
  });
}

const specPath = (name: string) => join(ws, 'specs', 'strand', name);
const uriOf = (path: string) => pathToFileURL(path).href;
let version = 1;

async function open(path: string, text = readFileSync(path, 'utf8')): Promise<Diagnostic[]> {
  const uri = uriOf(path);
  const v = version++;
  const got = c.diagnostics(uri, (p) => p.version === v);
  await c.conn.sendNotification('textDocument/didOpen', { textDocument: { uri, languageId: 'markdown', version: v, text } });
  return (await got).diagnostics;
}

async function change(path: string, text: string): Promise<Diagnostic[]> {
  const uri = uriOf(path);
  const v = version++;
  const got = c.diagnostics(uri, (p) => p.version === v);
  await c.conn.sendNotification('textDocument/didChange', { textDocument: { uri, version: v }, contentChanges: [{ text }] });
  return (await got).diagnostics;
}

const close = (path: string) => c.conn.sendNotification('textDocument/didClose', { textDocument: { uri: uriOf(path) } });

const hover = (path: string, line: number, character: number) => c.conn.sendRequest('textDocument/hover', { textDocument: { uri: uriOf(path) }, position: { line, character } }) as Promise<Hover | null>;

const actionsAt = (path: string, line: number, character: number) =>
  c.conn.sendRequest('textDocument/codeAction', { textDocument: { uri: uriOf(path) }, range: { start: { line, character }, end: { line, character } }, context: { diagnostics: [] } }) as Promise<CodeAction[]>;

/** The line (0-based) that starts with `prefix` in `text`. */
const lineOf = (text: string, prefix: string): number => {
  const i = text.split('\n').findIndex((l) => l.startsWith(prefix));
  if (i < 0) throw new Error(`no line starts with ${prefix}`);
  return i;
};

beforeAll(async () => {
  ({ scratch, bin } = buildScratch('polecheck-lsp-'));
  ws = join(scratch, 'ws');
  mkdirSync(join(ws, '.git'), { recursive: true });
  cpSync(join(ROOT, 'specs'), join(ws, 'specs'), { recursive: true });
  c = startClient(bin, ws);
  await initialize(c, uriOf(ws), { debounceMs: 20 });
}, 120_000);

afterAll(async () => {
  if (c && c.proc.exitCode === null) c.proc.kill();
  if (scratch) rmSync(scratch, { recursive: true, force: true });
});

describe('diagnostics', () => {
  it.each(['thermo-amp.md', 'vcm-buffer.md', 'adc-driver.md', 'bridge-preamp.md'])('%s: the findings of `check --format json`', async (name) => {
    const path = specPath(name);
    const text = readFileSync(path, 'utf8');
    const diags = await open(path);
    expectSameAsCheck(diags, checkJson(path, text));
    await close(path);
  });

  it('a page that is not a spec gets none', async () => {
    const path = join(ws, 'specs', 'README.md');
    expect(await open(path)).toEqual([]);
    await close(path);
  });

  it('an edit is checked again: a claim restated by hand stops failing, one broken starts', async () => {
    const path = specPath('thermo-amp.md');
    const text = readFileSync(path, 'utf8');
    await open(path, text);
    const edited = text.replace('gbw: 21 MHz', 'gbw: 29 MHz').replace('dc_gain: 99 dB', 'dc_gain: 90 dB');
    const diags = await change(path, edited);
    const expected = checkJson(path, edited);
    expect(expected.some((f) => f.claim === 'dc_gain')).toBe(true);
    expect(expected.some((f) => f.rule === 'gain-bandwidth')).toBe(false);
    expectSameAsCheck(diags, expected);
    await close(path);
  });

  it('a number typed without its unit yet: the diagnostic covers the number, as the command reports the finding', async () => {
    const path = specPath('adc-driver.md');
    const text = readFileSync(path, 'utf8');
    await open(path, text);
    const typing = text.replace('gbw: 57 MHz', 'gbw: 7');
    const diags = await change(path, typing);
    const expected = checkJson(path, typing);
    expect(expected.map((f) => f.rule)).toEqual(['wrong-unit']);
    expectSameAsCheck(diags, expected);
    const line = typing.split('\n')[diags[0].range.start.line];
    expect(line.slice(diags[0].range.start.character, diags[0].range.end.character)).toBe('7');
    await close(path);
  });

  it('broken YAML mid-edit: one diagnostic at the break, as the command reports it; the good text brings the rest back', async () => {
    const path = specPath('thermo-amp.md');
    const text = readFileSync(path, 'utf8');
    await open(path, text);
    const broken = text.replace('phase_margin: {min: 60 deg}', 'phase_margin: {min: 60 deg');
    const diags = await change(path, broken);
    const expected = checkJson(path, broken);
    expect(expected.map((f) => f.rule)).toEqual(['yaml-syntax']);
    expectSameAsCheck(diags, expected);
    expectSameAsCheck(await change(path, text), checkJson(path, text));
    await close(path);
  });
});

describe('hover', () => {
  it('over a failing claim: stated, model, verdict, exact, hand estimate and its error, derivation — as the reports give them', async () => {
    const path = specPath('thermo-amp.md');
    const text = readFileSync(path, 'utf8');
    await open(path, text);
    const line = lineOf(text, '  gbw:');
    const h = await hover(path, line, 3);
    const value = (h!.contents as { value: string }).value.split('\n');
    // The text report's row: stated, model, deviation.
    const row = cli([path]).stdout.split('\n').find((l) => /^\s+fails\s+gbw\s/.test(l))!;
    const [, , stated, model, deviation] = row.trim().split(/\s{2,}/);
    // The reviewer report's row: exact model, hand estimate, hand error.
    const review = cli(['report', path]).stdout.split('\n').find((l) => /^\s+gbw\s+front matter/.test(l))!.trim().split(/\s{2,}/);
    const [exact, hand, handErr] = [review[4], review[6], review[7]];
    const finding = checkJson(path, text).find((f) => f.rule === 'gain-bandwidth')!;
    const schema = JSON.parse(cli(['schema']).stdout) as { allOf: Array<{ if: { properties: { topology: { const: string } } }; then: { properties: { claims: { properties: Record<string, { description: string }> } } } }> };
    const description = schema.allOf.find((b) => b.if.properties.topology.const === 'two-stage-miller')!.then.properties.claims.properties.gbw.description;
    const caution = cli([path]).stdout.trim().split('\n').pop()!;
    const point = /at (cl = [^)]*?) \(/.exec(finding.message)![1];
    expect(value[0]).toBe(`**gbw** — ${description}`);
    expect(value[2]).toBe(`- ${stated} · ${model} — **fails**, ${deviation}`);
    expect(value[3]).toBe(`- exact at the typical point (${point}): ${exact}`);
    expect(value[4].startsWith(`- hand estimate: ${hand} (error ${handErr})`)).toBe(true);
    expect(value[5]).toBe(`- derivation: ${finding.derivation!.how}`);
    expect(value[value.length - 1]).toBe(`_${caution}_`);
    await close(path);
  });

  it('over a param: how much each claim moves for +10 %, as the model re-read from the edited text gives it', async () => {
    const path = specPath('thermo-amp.md');
    const text = readFileSync(path, 'utf8');
    await open(path, text);
    const h = await hover(path, lineOf(text, '  cc:'), 3);
    const value = (h!.contents as { value: string }).value;
    const moves = new Map([...value.matchAll(/(\w+) ([+\u2212])(\d+\.\d)(°| %)/g)].filter((m) => !value.slice(0, m.index).includes('(', value.lastIndexOf(',', m.index))).map((m) => [m[1], (m[2] === '+' ? 1 : -1) * Number(m[3])]));
    // The same spec with cc written 10 % larger, read and checked from its text.
    const before = checkText(path, text).model!;
    const after = checkText(path, text.replace('cc: 0.9 pF', 'cc: 0.99 pF')).model!;
    for (const key of ['gbw', 'slew_rate']) expect(moves.get(key)).toBeCloseTo((100 * (after.exact[key].value! - before.exact[key].value!)) / before.exact[key].value!, 1);
    expect(moves.get('phase_margin')).toBeCloseTo(after.exact.phase_margin.value! - before.exact.phase_margin.value!, 1);
    expect(value).toContain('- not: dc_gain');
    await close(path);
  });

  it.skipIf(!ngspiceAvailable())('the +10 % movements of gbw and phase margin agree with ngspice AC analyses of the same network', async () => {
    const path = specPath('thermo-amp.md');
    const text = readFileSync(path, 'utf8');
    await open(path, text);
    const value = (((await hover(path, lineOf(text, '  cc:'), 3))!.contents) as { value: string }).value;
    const num = (re: RegExp) => {
      const m = re.exec(value)!;
      return (m[1] === '+' ? 1 : -1) * Number(m[2]);
    };
    // thermo-amp.md's params and conditions (no rz, no rl), in SI units.
    const d = { id: 'thermo-amp', gm1: 200e-6, r1: 2e6, c1: 80e-15, gm2: 1.5e-3, r2: 150e3, c2: 300e-15, cc: 0.9e-12, cl: 5e-12, beta: 1 };
    const a = runTwoStage(d);
    const b = runTwoStage({ ...d, cc: 0.99e-12 });
    expect(Math.abs(num(/gbw ([+\u2212])(\d+\.\d) %/) - (100 * (b.unityGainHz! - a.unityGainHz!)) / a.unityGainHz!)).toBeLessThan(0.06);
    expect(Math.abs(num(/phase_margin ([+\u2212])(\d+\.\d)°/) - (b.phaseMarginDeg! - a.phaseMarginDeg!))).toBeLessThan(0.06);
    await close(path);
  });
});

describe('code actions', () => {
  it('restate: the edit `--restate` would write; applied, the claim holds when the command checks the text', async () => {
    const path = specPath('thermo-amp.md');
    const text = readFileSync(path, 'utf8');
    await open(path, text);
    const finding = checkJson(path, text).find((f) => f.rule === 'gain-bandwidth')!;
    const fix = finding.fixes!.find((f) => f.kind === 'restate')!.edit!;
    const actions = await actionsAt(path, finding.line - 1, finding.column - 1);
    const restate = actions.find((a) => a.title.startsWith('Restate gbw'))!;
    const [edit] = restate.edit!.changes![uriOf(path)];
    expect([edit.range.start.line + 1, edit.range.start.character + 1, edit.range.end.line + 1, edit.range.end.character + 1, edit.newText]).toEqual([fix.line, fix.column, fix.endLine, fix.endColumn, fix.text]);
    const fixed = applyTextEdits(text, [edit]);
    expect(checkJson(path, fixed).filter((f) => f.claim === 'gbw' && f.verdict?.outcome === 'fails')).toEqual([]);
    await close(path);
  });

  // vcm-buffer.md as it stands, and adc-driver.md with its gbw claim raised (a larger claim that a smaller cc meets without breaking another).
  it.each([
    ['vcm-buffer.md', (t: string) => t],
    ['adc-driver.md', (t: string) => t.replace('gbw: 57 MHz', 'gbw: 66 MHz')],
  ])('%s: one design change per computed one, preferred exactly when every claim then holds; applied, the command agrees', async (name, edit) => {
    const path = specPath(name);
    const text = edit(readFileSync(path, 'utf8'));
    await open(path, text);
    const findings = checkJson(path, text);
    let designsSeen = 0;
    for (const f of findings.filter((x) => x.fixes?.some((y) => y.kind === 'design'))) {
      const designs = f.fixes!.filter((y) => y.kind === 'design');
      const actions = (await actionsAt(path, f.line - 1, f.column - 1)).filter((a) => a.title.startsWith('Design change') && (a.diagnostics ?? []).some((d) => d.code === f.rule));
      expect(actions.length).toBe(designs.length);
      designsSeen += designs.length;
      for (const [i, a] of actions.entries()) {
        const fix = designs[i];
        expect(a.isPreferred ?? false).toBe(Boolean(fix.meetsAll && fix.stable));
        const changed = applyTextEdits(text, a.edit!.changes![uriOf(path)]);
        const after = checkJson(path, changed);
        // The claim the change was solved for holds; with meetsAll, no claim fails at all.
        expect(after.filter((x) => x.claim === f.claim && x.verdict?.outcome === 'fails')).toEqual([]);
        if (fix.meetsAll) {
          expect(after.filter((x) => x.verdict?.outcome === 'fails')).toEqual([]);
        }
      }
    }
    expect(designsSeen).toBeGreaterThan(0);
    if (name === 'adc-driver.md') expect(findings.some((f) => f.fixes?.some((y) => y.meetsAll))).toBe(true);
    await close(path);
  });

  it('a design change that adds a param the spec does not write (rz)', async () => {
    const path = specPath('thermo-amp.md');
    const text = readFileSync(path, 'utf8');
    await open(path, text);
    const f = checkJson(path, text).find((x) => x.rule === 'phase-margin')!;
    const rz = f.fixes!.find((y) => y.kind === 'design' && y.changes && 'rz' in y.changes)!;
    const a = (await actionsAt(path, f.line - 1, f.column - 1)).find((x) => x.title.startsWith('Design change: rz'))!;
    const changed = applyTextEdits(text, a.edit!.changes![uriOf(path)]);
    // The command reads the new param back as the value the change was computed for (3 significant digits, as printed).
    const read = checkText(path, changed).spec!.params.get('rz')!.typ.quantity.value;
    expect(read / rz.changes!.rz).toBeCloseTo(1, 2);
    expect(checkJson(path, changed).filter((x) => x.claim === 'phase_margin' && x.verdict?.outcome === 'fails')).toEqual([]);
    await close(path);
  });

  it('waiver: a skeleton whose empty reason the command asks for; with a reason written, the finding is waived', async () => {
    const path = specPath('thermo-amp.md');
    const text = readFileSync(path, 'utf8');
    await open(path, text);
    const f = checkJson(path, text).find((x) => x.rule === 'slew-rate')!;
    const a = (await actionsAt(path, f.line - 1, f.column - 1)).find((x) => x.title.startsWith('Waive slew-rate'))!;
    const skeleton = applyTextEdits(text, a.edit!.changes![uriOf(path)]);
    const asked = checkJson(path, skeleton).filter((x) => x.rule === 'waiver');
    expect(asked.length).toBe(1);
    expect(asked[0].message).toContain('no `reason`');
    const filled = skeleton.replace('reason: ""', 'reason: slew measured at 17 V/µs on rev B silicon');
    const after = checkJson(path, filled);
    expect(after.find((x) => x.rule === 'slew-rate')!.waived).toBeTruthy();
    expect(after.filter((x) => x.rule === 'waiver')).toEqual([]);
    // The server checks the waived text as the command does.
    expectSameAsCheck(await change(path, filled), after);
    await close(path);
  });
});

describe('completion and outline', () => {
  const schemaBranch = () => (JSON.parse(cli(['schema']).stdout) as { allOf: Array<{ if: { properties: { topology: { const: string } } }; then: { properties: Record<string, { properties: Record<string, unknown> }> } }> }).allOf.find((b) => b.if.properties.topology.const === 'two-stage-miller')!.then.properties;

  it('keys of the topology not yet written, as the JSON Schema lists them; units after a number, the plausible one preselected', async () => {
    const path = specPath('thermo-amp.md');
    const text = readFileSync(path, 'utf8');
    const at = lineOf(text, 'claims:') + 1;
    const lines = text.split('\n');
    lines.splice(at, 0, '  ');
    const edited = lines.join('\n');
    await open(path, edited);
    const items = (await c.conn.sendRequest('textDocument/completion', { textDocument: { uri: uriOf(path) }, position: { line: at, character: 2 } })) as CompletionItem[];
    const written = ['dc_gain', 'gbw', 'phase_margin', 'slew_rate'];
    expect(items.map((i) => i.label).sort()).toEqual(Object.keys(schemaBranch().claims.properties).filter((k) => !written.includes(k)).sort());
    lines[at] = '  cc2: 1.5 ';
    lines[lineOf(text, '  cc:')] = '  cc: 1.5 ';
    const withNumber = lines.join('\n');
    await change(path, withNumber);
    const units = (await c.conn.sendRequest('textDocument/completion', { textDocument: { uri: uriOf(path) }, position: { line: lineOf(text, '  cc:'), character: 10 } })) as CompletionItem[];
    expect(units.map((u) => u.label)).toContain('pF');
    expect(units.filter((u) => u.preselect).map((u) => u.label)).toEqual(['pF']);
    // Each offered unit is one the reader reads as a capacitance (the reader alone: a check of `1.5 kF` would solve absurd designs).
    for (const u of units) {
      const probe = withNumber.replace('  cc: 1.5 ', `  cc: 1.5 ${u.label}`).replace('  cc2: 1.5 \n', '');
      const read = readDocument(path, probe);
      expect(read.kind === 'spec' && read.findings.filter((f) => f.rule === 'wrong-unit' || f.rule === 'invalid-value')).toEqual([]);
      expect(read.kind === 'spec' && read.spec!.params.get('cc')!.typ.quantity.written.unit).toBe(u.label);
    }
    await close(path);
  });

  it('outline: the block, params, conditions, claims and table rows', async () => {
    const path = specPath('thermo-amp.md');
    const text = readFileSync(path, 'utf8');
    await open(path, text);
    const [block] = (await c.conn.sendRequest('textDocument/documentSymbol', { textDocument: { uri: uriOf(path) } })) as DocumentSymbol[];
    const spec = checkText(path, text).spec!;
    expect(block.name).toBe(spec.block);
    const group = (n: string) => block.children!.find((s) => s.name === n)!.children!.map((s) => s.name);
    expect(group('params')).toEqual([...spec.params.keys()]);
    expect(group('conditions')).toEqual([...spec.conditions.keys()]);
    expect(group('claims')).toEqual(spec.claims.filter((x) => x.source !== 'table').map((x) => x.key));
    expect(group('table rows').length).toBe(spec.claims.filter((x) => x.source === 'table').length);
    await close(path);
  });
});

describe('workspace', () => {
  it('a polecheck.yaml created, changed on disk, edited in the editor and broken is picked up without a restart', async () => {
    // The server asks the client to watch configurations (dynamic registration, after `initialized`).
    for (let i = 0; i < 100 && !c.registrations.length; i++) await new Promise((r) => setTimeout(r, 50));
    expect(JSON.stringify(c.registrations)).toContain('workspace/didChangeWatchedFiles');
    expect(JSON.stringify(c.registrations)).toContain('**/polecheck.yaml');
    const path = specPath('thermo-amp.md');
    const text = readFileSync(path, 'utf8');
    await open(path, text);
    const config = join(ws, 'polecheck.yaml');
    writeFileSync(config, 'rules:\n  gain-bandwidth: none\n  rhp-zero-spacing: error\n');
    const uri = uriOf(path);
    let got = c.diagnostics(uri);
    await c.conn.sendNotification('workspace/didChangeWatchedFiles', { changes: [{ uri: uriOf(config), type: 1 }] });
    let diags = (await got).diagnostics;
    const expected = checkJson(path, text);
    expect(expected.some((f) => f.rule === 'gain-bandwidth')).toBe(false);
    expectSameAsCheck(diags, expected);
    // Edited in the editor, not yet saved: the buffer governs.
    got = c.diagnostics(uri);
    await c.conn.sendNotification('textDocument/didOpen', { textDocument: { uri: uriOf(config), languageId: 'yaml', version: 1, text: 'rules:\n  gain-bandwidth: warning\n' } });
    diags = (await got).diagnostics;
    expect(diags.find((d) => d.code === 'gain-bandwidth')!.severity).toBe(2);
    const configDiags = c.diagnostics(uriOf(config), (p) => p.diagnostics.length > 0);
    got = c.diagnostics(uri);
    await c.conn.sendNotification('textDocument/didChange', { textDocument: { uri: uriOf(config), version: 2 }, contentChanges: [{ text: 'rules:\n  gain-bandwith: warning\n' }] });
    diags = (await got).diagnostics;
    expect(diags.map((d) => d.code)).toEqual(['config']);
    expect(diags[0].message).toContain('did you mean `gain-bandwidth`');
    expect((await configDiags).diagnostics[0].range.start).toEqual({ line: 1, character: 2 });
    // Closed without saving: the file on disk governs again; deleted: the defaults.
    got = c.diagnostics(uri);
    await c.conn.sendNotification('textDocument/didClose', { textDocument: { uri: uriOf(config) } });
    expectSameAsCheck((await got).diagnostics, expected);
    rmSync(config);
    got = c.diagnostics(uri);
    await c.conn.sendNotification('workspace/didChangeWatchedFiles', { changes: [{ uri: uriOf(config), type: 3 }] });
    expectSameAsCheck((await got).diagnostics, checkJson(path, text));
    await close(path);
  });

  it('a spec renamed into a folder with its own configuration is checked under it', async () => {
    const from = specPath('vcm-buffer.md');
    const text = readFileSync(from, 'utf8');
    await open(from, text);
    const folder = join(ws, 'specs', 'archive');
    mkdirSync(folder, { recursive: true });
    writeFileSync(join(folder, 'polecheck.yaml'), 'rules:\n  hand-estimate-drift: none\n');
    const to = join(folder, 'vcm-buffer.md');
    renameSync(from, to);
    const cleared = c.diagnostics(uriOf(from), (p) => p.diagnostics.length === 0);
    await c.conn.sendNotification('workspace/didRenameFiles', { files: [{ oldUri: uriOf(from), newUri: uriOf(to) }] });
    await close(from);
    await cleared;
    const diags = await open(to, text);
    const expected = checkJson(to, text);
    expect(expected.some((f) => f.rule === 'hand-estimate-drift')).toBe(false);
    expectSameAsCheck(diags, expected);
    await close(to);
    renameSync(to, from);
  });
});

describe('lifecycle', () => {
  it('shuts down and exits cleanly, having logged no failure of its own', async () => {
    expect(c.stderr()).not.toMatch(/failed/);
    expect(await shutdown(c)).toBe(0);
  });
});
