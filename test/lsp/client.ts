// A JSON-RPC client over stdio for the language server's tests and bench:
// spawns the real `polecheck lsp` process (the built command, bin/polecheck.js)
// and speaks LSP to it through vscode-jsonrpc's message connection, as an
// editor's generic LSP client does.

import { type ChildProcess, execFileSync, spawn } from 'node:child_process';
import { cpSync, mkdtempSync, symlinkSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { type MessageConnection, StreamMessageReader, StreamMessageWriter, createMessageConnection } from 'vscode-jsonrpc/node';
import type { Diagnostic, PublishDiagnosticsParams } from 'vscode-languageserver-protocol';

export interface Client {
  proc: ChildProcess;
  conn: MessageConnection;
  /** Resolves with the next diagnostics published for `uri` (after `since`, a count of publications seen). */
  diagnostics(uri: string, pred?: (p: PublishDiagnosticsParams) => boolean, timeoutMs?: number): Promise<PublishDiagnosticsParams>;
  latest(uri: string): PublishDiagnosticsParams | undefined;
  published: PublishDiagnosticsParams[];
  stderr: () => string;
  exited: Promise<number | null>;
  /** Requests the client sent us (workspace/configuration, client/registerCapability). */
  registrations: unknown[];
}

export function startClient(bin: string, cwd: string, args: string[] = ['lsp']): Client {
  const proc = spawn(process.execPath, [bin, ...args], { cwd, stdio: ['pipe', 'pipe', 'pipe'], env: { ...process.env, NO_COLOR: '1' } });
  let err = '';
  proc.stderr!.on('data', (d) => (err += d));
  const exited = new Promise<number | null>((res) => proc.on('exit', (code) => res(code)));
  const conn = createMessageConnection(new StreamMessageReader(proc.stdout!), new StreamMessageWriter(proc.stdin!));
  const published: PublishDiagnosticsParams[] = [];
  const waiters: Array<{ uri: string; pred: (p: PublishDiagnosticsParams) => boolean; resolve: (p: PublishDiagnosticsParams) => void }> = [];
  const registrations: unknown[] = [];
  conn.onNotification('textDocument/publishDiagnostics', (p: PublishDiagnosticsParams) => {
    published.push(p);
    for (const w of [...waiters]) {
      if (w.uri === p.uri && w.pred(p)) {
        waiters.splice(waiters.indexOf(w), 1);
        w.resolve(p);
      }
    }
  });
  conn.onNotification('window/logMessage', (m: { message: string }) => {
    err += `${m.message}\n`;
  });
  conn.onRequest('client/registerCapability', (p: unknown) => {
    registrations.push(p);
    return null;
  });
  conn.listen();
  return {
    proc,
    conn,
    published,
    registrations,
    exited,
    stderr: () => err,
    latest: (uri) => [...published].reverse().find((p) => p.uri === uri),
    diagnostics: (uri, pred = () => true, timeoutMs = 20_000) =>
      new Promise((resolve, reject) => {
        const t = setTimeout(() => reject(new Error(`no diagnostics for ${uri} within ${timeoutMs} ms; stderr: ${err}`)), timeoutMs);
        waiters.push({
          uri,
          pred,
          resolve: (p) => {
            clearTimeout(t);
            resolve(p);
          },
        });
      }),
  };
}

export async function initialize(c: Client, rootUri: string, initializationOptions: Record<string, unknown> = {}): Promise<unknown> {
  const r = await c.conn.sendRequest('initialize', {
    processId: process.pid,
    rootUri,
    workspaceFolders: [{ uri: rootUri, name: 'specs' }],
    initializationOptions,
    capabilities: {
      workspace: { didChangeWatchedFiles: { dynamicRegistration: true }, fileOperations: { didRename: true } },
      textDocument: { publishDiagnostics: { relatedInformation: true, codeDescriptionSupport: true }, hover: { contentFormat: ['markdown'] }, codeAction: { isPreferredSupport: true } },
    },
  });
  await c.conn.sendNotification('initialized', {});
  return r;
}

export async function shutdown(c: Client): Promise<number | null> {
  await c.conn.sendRequest('shutdown');
  await c.conn.sendNotification('exit');
  const code = await c.exited;
  c.conn.dispose();
  return code;
}

export type { Diagnostic };

export const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');

/** The command built by the project's build script into a scratch folder (the shared dist/ is left alone); returns the folder and its bin/polecheck.js. */
export function buildScratch(prefix: string): { scratch: string; bin: string } {
  const scratch = mkdtempSync(join(tmpdir(), prefix));
  for (const name of ['src', 'rules', 'node_modules', 'package.json', 'README.md']) symlinkSync(join(ROOT, name), join(scratch, name));
  cpSync(join(ROOT, 'bin'), join(scratch, 'bin'), { recursive: true });
  execFileSync(process.execPath, [join(ROOT, 'scripts', 'build.mjs')], { cwd: scratch, stdio: 'pipe' });
  return { scratch, bin: join(scratch, 'bin', 'polecheck.js') };
}

/** The text with LSP edits applied (non-overlapping; lines ended by LF). */
export function applyTextEdits(text: string, edits: Array<{ range: { start: { line: number; character: number }; end: { line: number; character: number } }; newText: string }>): string {
  const lines = text.split('\n');
  const offset = (p: { line: number; character: number }) => lines.slice(0, p.line).reduce((n, l) => n + l.length + 1, 0) + p.character;
  let out = text;
  for (const e of [...edits].sort((a, b) => offset(b.range.start) - offset(a.range.start))) out = out.slice(0, offset(e.range.start)) + e.newText + out.slice(offset(e.range.end));
  return out;
}
