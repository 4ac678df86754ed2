// The language server: `polecheck lsp` speaks LSP over standard input and
// output. Open Markdown specs are checked as `polecheck check` checks them
// (src/check.ts, with the configuration and waivers that govern the file), a
// short while after the last keystroke (without the design-change search, which
// waits for a code action); the findings become diagnostics, and
// hover, code actions, completion and the outline read the same check.

import { fileURLToPath, pathToFileURL } from 'node:url';
import {
  type CodeAction,
  type CompletionItem,
  type Connection,
  type Diagnostic,
  DiagnosticSeverity,
  DidChangeWatchedFilesNotification,
  type DocumentSymbol,
  type Hover,
  type InitializeResult,
  MarkupKind,
  TextDocumentSyncKind,
  TextDocuments,
} from 'vscode-languageserver';
import { TextDocument } from 'vscode-languageserver-textdocument';
import { CONFIG_NAME, ConfigError, parseConfig } from '../config';
import { todayIso } from '../verdicts/waivers';
import { codeActions } from './actions';
import { type Analysis, SOURCE, analyze } from './analysis';
import { complete } from './completion';
import { claimHover, targetAt, valueHover } from './hover';
import { fromPosition } from './positions';
import { documentSymbols } from './symbols';
import { Configs, excluded, isConfigFile } from './workspace';

/** Milliseconds after the last change before a document is checked again (initializationOptions.debounceMs overrides it). */
export const DEFAULT_DEBOUNCE_MS = 150;

const pathOf = (uri: string): string | undefined => {
  if (!uri.startsWith('file:')) return undefined;
  try {
    return fileURLToPath(uri);
  } catch {
    return undefined;
  }
};

const isMarkdown = (doc: TextDocument): boolean => doc.languageId === 'markdown' || /\.(md|markdown)$/i.test(doc.uri);

export function startServer(connection: Connection): void {
  const documents = new TextDocuments(TextDocument);
  const analyses = new Map<string, Analysis>();
  const timers = new Map<string, NodeJS.Timeout>();
  let debounceMs = DEFAULT_DEBOUNCE_MS;
  let watchDynamically = false;
  let cwd = process.cwd();

  const configs = new Configs((path) => {
    const open = documents.get(pathToFileURL(path).href);
    return open?.getText();
  });

  /** Never lets a failure of ours take the server down: it is logged, and the request gets an empty answer. */
  const guard = <T>(what: string, fallback: T, f: () => T): T => {
    try {
      return f();
    } catch (err) {
      connection.console.error(`polecheck: ${what} failed: ${(err as Error).stack ?? String(err)}`);
      return fallback;
    }
  };

  const configDiagnostics = (doc: TextDocument): Diagnostic[] => {
    const path = pathOf(doc.uri) ?? doc.uri;
    try {
      parseConfig(path, doc.getText());
      return [];
    } catch (err) {
      if (!(err instanceof ConfigError)) throw err;
      const p = { line: err.pos.line - 1, character: err.pos.column - 1 };
      return [{ range: { start: p, end: { line: p.line, character: p.character + 1 } }, severity: DiagnosticSeverity.Error, code: 'config', source: SOURCE, message: err.message.replace(/^.*?:\d+:\d+: /, '') }];
    }
  };

  /** Checks the document as it stands now and publishes its diagnostics. */
  const validate = (doc: TextDocument): Analysis | undefined => {
    const t = timers.get(doc.uri);
    if (t) clearTimeout(t);
    timers.delete(doc.uri);
    return guard('checking', undefined, () => {
      const path = pathOf(doc.uri);
      if (path && isConfigFile(path)) {
        void connection.sendDiagnostics({ uri: doc.uri, version: doc.version, diagnostics: configDiagnostics(doc) });
        return undefined;
      }
      const file = path ?? `${cwd}/untitled.md`;
      const config = configs.forFile(file);
      const checked = isMarkdown(doc) && !(config.ok && path && excluded(config.config, path));
      const configUri = !config.ok ? pathToFileURL(config.error.path).href : undefined;
      const a = analyze({ uri: doc.uri, version: doc.version, text: doc.getText(), path: file, checked, config, configUri, today: todayIso() });
      analyses.set(doc.uri, a);
      void connection.sendDiagnostics({ uri: doc.uri, version: doc.version, diagnostics: a.diagnostics });
      return a;
    });
  };

  const schedule = (doc: TextDocument) => {
    const t = timers.get(doc.uri);
    if (t) clearTimeout(t);
    timers.set(
      doc.uri,
      setTimeout(() => {
        const now = documents.get(doc.uri);
        if (now) validate(now);
      }, debounceMs),
    );
  };

  /** The analysis of the document's current text (checked now if an edit is still waiting for its turn). */
  const current = (uri: string): Analysis | undefined => {
    const doc = documents.get(uri);
    if (!doc) return undefined;
    const a = analyses.get(uri);
    return a && a.version === doc.version ? a : validate(doc);
  };

  /** A configuration changed, appeared, vanished or moved: every open document is checked again under what now governs it. */
  const revalidateAll = () => {
    configs.reset();
    for (const doc of documents.all()) validate(doc);
  };

  connection.onInitialize((params): InitializeResult => {
    const opts = (params.initializationOptions ?? {}) as { debounceMs?: unknown };
    if (typeof opts.debounceMs === 'number' && opts.debounceMs >= 0) debounceMs = opts.debounceMs;
    const root = params.workspaceFolders?.[0]?.uri ?? params.rootUri;
    const rootPath = root ? pathOf(root) : undefined;
    if (rootPath) cwd = rootPath;
    watchDynamically = Boolean(params.capabilities.workspace?.didChangeWatchedFiles?.dynamicRegistration);
    const renameFilters = [{ pattern: { glob: '**/*.{md,markdown}' } }, { pattern: { glob: `**/${CONFIG_NAME}` } }, { pattern: { glob: '**/', matches: 'folder' as const } }];
    return {
      capabilities: {
        textDocumentSync: { openClose: true, change: TextDocumentSyncKind.Incremental },
        hoverProvider: true,
        codeActionProvider: { codeActionKinds: ['quickfix'] },
        completionProvider: { triggerCharacters: [' ', ':'] },
        documentSymbolProvider: true,
        workspace: { fileOperations: { didRename: { filters: renameFilters } } },
      },
      serverInfo: { name: 'polecheck' },
    };
  });

  connection.onInitialized(() => {
    if (watchDynamically) void connection.client.register(DidChangeWatchedFilesNotification.type, { watchers: [{ globPattern: `**/${CONFIG_NAME}` }] });
  });

  /** The versions of configurations open in the editor that the specs were last checked under. */
  const configVersions = new Map<string, number>();
  documents.onDidOpen((e) => {
    const path = pathOf(e.document.uri);
    if (path && isConfigFile(path)) {
      configVersions.set(e.document.uri, e.document.version);
      revalidateAll();
    } else validate(e.document);
  });
  documents.onDidChangeContent((e) => {
    const path = pathOf(e.document.uri);
    if (path && isConfigFile(path)) {
      // An edit to the configuration in the editor governs the specs at once (opening it fires this too).
      if (configVersions.get(e.document.uri) === e.document.version) return;
      configVersions.set(e.document.uri, e.document.version);
      revalidateAll();
      return;
    }
    // Opening a document fires this too, after it was checked on open.
    if (analyses.get(e.document.uri)?.version === e.document.version) return;
    schedule(e.document);
  });
  documents.onDidClose((e) => {
    const t = timers.get(e.document.uri);
    if (t) clearTimeout(t);
    timers.delete(e.document.uri);
    analyses.delete(e.document.uri);
    void connection.sendDiagnostics({ uri: e.document.uri, diagnostics: [] });
    const path = pathOf(e.document.uri);
    configVersions.delete(e.document.uri);
    // Closed without saving: the file on disk governs again.
    if (path && isConfigFile(path)) revalidateAll();
  });

  connection.onDidChangeWatchedFiles((e) => {
    if (e.changes.some((c) => (pathOf(c.uri) ?? c.uri).endsWith(CONFIG_NAME))) revalidateAll();
  });
  connection.workspace.onDidRenameFiles((e) => {
    for (const f of e.files) {
      analyses.delete(f.oldUri);
      void connection.sendDiagnostics({ uri: f.oldUri, diagnostics: [] });
    }
    revalidateAll();
  });

  connection.onHover((p): Hover | null =>
    guard('hover', null, () => {
      const a = current(p.textDocument.uri);
      const spec = a?.result?.spec;
      if (!a?.result || !spec) return null;
      const at = fromPosition(a.text, p.position);
      const t = targetAt(spec, at.line, at.column);
      if (!t) return null;
      const value = t.kind === 'claim' ? claimHover(a.result, t.entry) : valueHover(a.result, t.entry, t.kind);
      return { contents: { kind: MarkupKind.Markdown, value } };
    }),
  );

  connection.onCodeAction((p): CodeAction[] =>
    guard('code actions', [], () => {
      const a = current(p.textDocument.uri);
      return a ? codeActions(a, p.range, todayIso()) : [];
    }),
  );

  connection.onCompletion((p): CompletionItem[] =>
    guard('completion', [], () => {
      const doc = documents.get(p.textDocument.uri);
      if (!doc || !isMarkdown(doc)) return [];
      const text = doc.getText();
      return complete(text, text.split(/\r\n|\r|\n/), p.position);
    }),
  );

  connection.onDocumentSymbol((p): DocumentSymbol[] =>
    guard('outline', [], () => {
      const a = current(p.textDocument.uri);
      return a?.result?.spec ? documentSymbols(a.result.spec, a.text, a.lines) : [];
    }),
  );

  documents.listen(connection);
  connection.listen();
}
