// The command line: arguments, file discovery, output format, exit status.
// The only module that touches the file system or the process.

import { execFileSync } from 'node:child_process';
import { closeSync, openSync, readFileSync, readSync, readdirSync, realpathSync, renameSync, statSync, unlinkSync, writeFileSync } from 'node:fs';
import { dirname, join, relative, resolve } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { FILE_HEADERS_ONLY, createTwoFilesPatch } from 'diff';
import picomatch from 'picomatch';
import { RULES } from '../rules';
import { DEFAULT_CACHE_DIR, ResultCache, hashOf } from './cache';
import { type CheckOptions, type FileResult, checkText } from './check';
import { type Config, ConfigError, defaultConfig, findConfig, loadConfig } from './config';
import { applyEdits, planFixes } from './fix';
import { configSchema, jsonSchema } from './schema-json';
import { jsonReport } from './report/json';
import { reviewReport } from './report/review';
import { paint, useColor } from './report/style';
import { summarize } from './report/summary';
import { githubReport } from './report/github';
import { gitlabReport } from './report/gitlab';
import { sarifReport } from './report/sarif';
import { textReport } from './report/text';

declare const POLECHECK_VERSION: string;
const VERSION = typeof POLECHECK_VERSION === 'string' ? POLECHECK_VERSION : '0.0.0-dev';

/** Files above this size are refused rather than parsed (a spec is a few kilobytes). */
export const DEFAULT_MAX_BYTES = 5 * 1024 * 1024;

const HELP = `polecheck ${VERSION} — checks the claims of analog block specs against their exact small-signal model

usage:
  polecheck [check] [options] [paths…]   check specs (files, or folders searched for *.md)
  polecheck report [options] [paths…]    every claim: claimed, exact, hand estimate, verdict (exit 0)
  polecheck rules                        list the rules with their default severity
  polecheck explain RULE                 print a rule's documentation
  polecheck schema [spec|config]         print the JSON Schema (draft-07) of the front matter or of polecheck.yaml

options:
  --format FORMAT        text (default), json, sarif, github or gitlab
  --max-warnings N       exit 1 when there are more than N warnings
  --quiet                show errors only
  --output-file PATH     write the report to PATH instead of standard output
  --config PATH          use this configuration instead of the nearest polecheck.yaml
  --fix                  rewrite stale typical claims to the model's figures (atomically)
  --fix-bounds           with --fix: also rewrite failing min/max bounds
  --fix-dry-run          print the --fix edits as a unified diff; write nothing
  --changed [REF]        check only the files changed against a git ref (default HEAD)
  --shard I/N            check the I-th of N deterministic slices of the file list
  --cache                reuse findings of unchanged files (keyed by content, config, version)
  --cache-location DIR   where the cache lives (default ${DEFAULT_CACHE_DIR})
  --max-bytes N          refuse files larger than N bytes (default ${DEFAULT_MAX_BYTES})
  -h, --help             this text
  -v, --version          the version

exit status: 0 no errors, 1 errors found (or too many warnings), 2 the command could not run.`;

export class UsageError extends Error {}

export const FORMATS = ['text', 'json', 'sarif', 'github', 'gitlab'] as const;

interface Options {
  command: 'check' | 'report' | 'rules' | 'explain' | 'schema' | 'help' | 'version';
  format: (typeof FORMATS)[number];
  maxWarnings?: number;
  quiet: boolean;
  outputFile?: string;
  maxBytes: number;
  config?: string;
  fix: boolean;
  fixBounds: boolean;
  fixDryRun: boolean;
  changed?: string;
  shard?: { index: number; count: number };
  cache: boolean;
  cacheLocation: string;
  paths: string[];
}

export function parseArgs(argv: string[]): Options {
  const o: Options = { command: 'check', format: 'text', quiet: false, maxBytes: DEFAULT_MAX_BYTES, fix: false, fixBounds: false, fixDryRun: false, cache: false, cacheLocation: DEFAULT_CACHE_DIR, paths: [] };
  const args = [...argv];
  if (args[0] && ['check', 'report', 'rules', 'explain', 'schema'].includes(args[0])) o.command = args.shift() as Options['command'];
  const value = (flag: string, inline: string | undefined): string => {
    const v = inline ?? args.shift();
    if (v === undefined || (inline === undefined && v.startsWith('--'))) throw new UsageError(`${flag} needs a value`);
    return v;
  };
  const count = (flag: string, v: string): number => {
    if (!/^\d+$/.test(v)) throw new UsageError(`${flag} takes a whole number, got '${v}'`);
    return Number(v);
  };
  let onlyPaths = false;
  while (args.length) {
    const a = args.shift()!;
    if (onlyPaths || !a.startsWith('-') || a === '-') {
      o.paths.push(a);
      continue;
    }
    const [flag, inline] = a.startsWith('--') && a.includes('=') ? [a.slice(0, a.indexOf('=')), a.slice(a.indexOf('=') + 1)] : [a, undefined];
    switch (flag) {
      case '--':
        onlyPaths = true;
        break;
      case '--format': {
        const f = value(flag, inline);
        if (!(FORMATS as readonly string[]).includes(f)) throw new UsageError(`--format takes ${FORMATS.join(', ')}, got '${f}'`);
        o.format = f as Options['format'];
        break;
      }
      case '--config':
        o.config = value(flag, inline);
        break;
      case '--fix':
        o.fix = true;
        break;
      case '--fix-bounds':
        o.fixBounds = true;
        break;
      case '--fix-dry-run':
        o.fixDryRun = true;
        break;
      case '--changed':
        // The ref is optional: take the next word only if it is not a path that exists or an option.
        if (inline !== undefined) o.changed = inline;
        else if (args[0] !== undefined && !args[0].startsWith('-') && !existsPath(args[0])) o.changed = args.shift()!;
        else o.changed = 'HEAD';
        break;
      case '--shard': {
        const v = value(flag, inline);
        const m = v.match(/^(\d+)\/(\d+)$/);
        if (!m || Number(m[2]) < 1 || Number(m[1]) < 1 || Number(m[1]) > Number(m[2])) throw new UsageError(`--shard takes I/N with 1 ≤ I ≤ N, got '${v}'`);
        o.shard = { index: Number(m[1]), count: Number(m[2]) };
        break;
      }
      case '--cache':
        o.cache = true;
        break;
      case '--cache-location':
        o.cacheLocation = value(flag, inline);
        o.cache = true;
        break;
      case '--max-warnings':
        o.maxWarnings = count(flag, value(flag, inline));
        break;
      case '--max-bytes':
        o.maxBytes = count(flag, value(flag, inline));
        break;
      case '--quiet':
        o.quiet = true;
        break;
      case '--output-file':
        o.outputFile = value(flag, inline);
        break;
      case '-h':
      case '--help':
        o.command = 'help';
        break;
      case '-v':
      case '--version':
        o.command = 'version';
        break;
      default:
        throw new UsageError(`unknown option '${a}' (see polecheck --help)`);
    }
  }
  if (o.fixBounds && !o.fix && !o.fixDryRun) throw new UsageError('--fix-bounds goes with --fix or --fix-dry-run');
  return o;
}

function existsPath(p: string): boolean {
  try {
    statSync(p);
    return true;
  } catch {
    return false;
  }
}

const SKIP_DIRS = new Set(['node_modules', '.git']);

/**
 * Expands paths to Markdown files, in a stable order; folders are searched
 * recursively. Paths are shown as given and read relative to `cwd`.
 */
export function discover(paths: string[], cwd = process.cwd()): string[] {
  const out: string[] = [];
  const seen = new Set<string>();
  const walk = (shown: string): void => {
    const dir = resolve(cwd, shown);
    let real: string;
    try {
      real = realpathSync(dir);
    } catch {
      return;
    }
    if (seen.has(real)) return; // symlink loops
    seen.add(real);
    let names: string[];
    try {
      names = readdirSync(dir).sort();
    } catch {
      out.push(shown); // reported as unreadable when read
      return;
    }
    for (const name of names) {
      const shownChild = shown.endsWith('/') ? shown + name : `${shown}/${name}`;
      let st;
      try {
        st = statSync(join(dir, name));
      } catch {
        continue; // a dangling link
      }
      if (st.isDirectory()) {
        if (!SKIP_DIRS.has(name)) walk(shownChild);
      } else if (name.endsWith('.md')) out.push(shownChild);
    }
  };
  for (const p of paths) {
    let st;
    try {
      st = statSync(resolve(cwd, p));
    } catch {
      throw new UsageError(`no such file or folder: ${p}`);
    }
    if (st.isDirectory()) walk(p.replace(/\/+$/, '') || '/');
    else out.push(p);
  }
  return [...new Set(out)];
}

function readError(path: string, rule: string, message: string): FileResult {
  return { path, skipped: false, findings: [{ rule, severity: 'error', line: 1, column: 1, claim: null, message, suggestions: [] }] };
}

const HEAD_BYTES = 64 * 1024;
const SPEC_HEAD = /^---[ \t]*(\r\n|\r|\n)[\s\S]*?^[ \t{]*["']?polecheck["']?[ \t]*:/m;

/** Whether the start of a file could be a spec: front matter with the `polecheck` key. */
function looksLikeSpec(head: Buffer): boolean {
  const bom = head[0] === 0xef && head[1] === 0xbb && head[2] === 0xbf;
  return SPEC_HEAD.test((bom ? head.subarray(3) : head).toString('latin1'));
}

/** A file read for checking: its text, or the finding that says why it cannot be read. */
export type ReadFile = { kind: 'text'; text: string } | { kind: 'done'; result: FileResult };

export function readSpecFile(file: string, maxBytes: number, path = file): ReadFile {
  let bytes: Buffer;
  try {
    const size = statSync(file).size;
    if (size > maxBytes) {
      // A large page that is not a spec is skipped like any other page.
      const head = Buffer.alloc(Math.min(HEAD_BYTES, size));
      const fd = openSync(file, 'r');
      try {
        readSync(fd, head, 0, head.length, 0);
      } finally {
        closeSync(fd);
      }
      if (!looksLikeSpec(head)) return { kind: 'done', result: { path, skipped: true, findings: [] } };
      return { kind: 'done', result: readError(path, 'file-too-large', `file is ${size} bytes, above the limit of ${maxBytes} (--max-bytes)`) };
    }
    bytes = readFileSync(file);
  } catch (err) {
    return { kind: 'done', result: readError(path, 'read-error', `cannot read the file: ${(err as NodeJS.ErrnoException).code ?? (err as Error).message}`) };
  }
  // A spec saved as UTF-16 would otherwise pass for a page without front matter.
  const utf16 = (bytes[0] === 0xff && bytes[1] === 0xfe) || (bytes[0] === 0xfe && bytes[1] === 0xff);
  if (utf16) {
    const le = bytes[0] === 0xff;
    const body = le ? bytes.subarray(2) : Buffer.from(bytes.subarray(2)).swap16();
    if (looksLikeSpec(Buffer.from(body.toString('utf16le').slice(0, HEAD_BYTES), 'utf8'))) {
      return { kind: 'done', result: readError(path, 'encoding', `the file is UTF-16 (${le ? 'little' : 'big'}-endian); specs are read as UTF-8: save it as UTF-8`) };
    }
    return { kind: 'done', result: { path, skipped: true, findings: [] } };
  }
  if (!looksLikeSpec(bytes.subarray(0, HEAD_BYTES))) return { kind: 'done', result: { path, skipped: true, findings: [] } };
  try {
    // ignoreBOM keeps a byte-order mark in the text, so that --fix writes it back.
    return { kind: 'text', text: new TextDecoder('utf-8', { fatal: true, ignoreBOM: true }).decode(bytes) };
  } catch {
    return { kind: 'done', result: readError(path, 'encoding', 'the file is not valid UTF-8') };
  }
}

export function checkFile(path: string, maxBytes: number, options: CheckOptions = {}): FileResult {
  const read = readSpecFile(path, maxBytes);
  return read.kind === 'done' ? read.result : checkText(path, read.text, options);
}

function docsDir(): string {
  // The bundle lives in dist/, the sources in src/: rule docs are in rules/ beside either.
  return resolve(dirname(fileURLToPath(import.meta.url)), '..', 'rules');
}

export interface MainIO {
  stdout: (s: string) => void;
  stderr: (s: string) => void;
  env: NodeJS.ProcessEnv;
  isTTY: boolean;
  cwd?: string;
}

export function main(argv: string[], io: MainIO): number {
  let o: Options;
  try {
    o = parseArgs(argv);
  } catch (err) {
    if (err instanceof UsageError) {
      io.stderr(`polecheck: ${err.message}\n`);
      return 2;
    }
    throw err;
  }
  const p = paint(o.outputFile ? false : useColor(io.env, io.isTTY));
  if (o.command === 'help') {
    io.stdout(`${HELP}\n`);
    return 0;
  }
  if (o.command === 'version') {
    io.stdout(`${VERSION}\n`);
    return 0;
  }
  if (o.command === 'rules') {
    const w = Math.max(...RULES.map((r) => r.id.length));
    io.stdout(`${RULES.map((r) => `${r.id.padEnd(w)}  ${r.severity.padEnd(7)}  ${r.description}`).join('\n')}\n`);
    return 0;
  }
  if (o.command === 'explain') {
    const id = o.paths[0];
    const rule = RULES.find((r) => r.id === id);
    if (!rule) {
      io.stderr(`polecheck: unknown rule '${id ?? ''}'; 'polecheck rules' lists them\n`);
      return 2;
    }
    try {
      io.stdout(readFileSync(join(docsDir(), `${rule.id}.md`), 'utf8'));
    } catch {
      io.stdout(`${rule.id}: ${rule.description}\n`);
    }
    return 0;
  }
  if (o.command === 'schema') {
    // `polecheck schema` for specs, `polecheck schema config` for polecheck.yaml.
    const which = o.paths[0] ?? 'spec';
    if (which !== 'spec' && which !== 'config') {
      io.stderr(`polecheck: schema takes \`spec\` (default) or \`config\`, got '${which}'\n`);
      return 2;
    }
    io.stdout(`${JSON.stringify(which === 'config' ? configSchema() : jsonSchema(), null, 2)}\n`);
    return 0;
  }

  const cwd = io.cwd ?? process.cwd();
  let config: Config;
  try {
    const found = o.config ?? findConfig(cwd);
    config = found ? loadConfig(found) : defaultConfig(cwd);
  } catch (err) {
    if (err instanceof ConfigError) {
      io.stderr(`polecheck: ${err.message}\n`);
      return 2;
    }
    throw err;
  }

  let files: string[];
  try {
    files = selectFiles(o, config, cwd);
  } catch (err) {
    if (err instanceof UsageError) {
      io.stderr(`polecheck: ${err.message}\n`);
      return 2;
    }
    throw err;
  }

  const options: CheckOptions = { rules: config.rules, tolerances: config.tolerances };
  // The cache serves plain checks only: reports, fixes and their diffs need the models.
  const useCache = o.cache && o.command === 'check' && !o.fix && !o.fixDryRun;
  const cache = useCache ? new ResultCache(resolve(cwd, o.cacheLocation), hashOf(VERSION, JSON.stringify(config.rules), JSON.stringify(config.tolerances), new Date().toISOString().slice(0, 10))) : undefined;
  const texts = new Map<string, string>();
  const results = files.map((f): FileResult => {
    const read = readSpecFile(resolve(cwd, f), o.maxBytes, f);
    if (read.kind === 'done') return read.result;
    texts.set(f, read.text);
    const hit = cache?.get(read.text);
    if (hit) return { path: f, skipped: hit.skipped, findings: hit.findings };
    const r = checkText(f, read.text, options);
    cache?.set(read.text, { skipped: r.skipped, findings: r.findings });
    return r;
  });

  if (o.fix || o.fixDryRun) {
    const status = fixFiles(results, texts, o, options, io, cwd);
    if (status !== undefined) return status;
  }

  let text: string;
  if (o.command === 'report') text = o.format === 'json' ? jsonReport(results) : reviewReport(results, p);
  else text = render(o, results, p);
  if (o.outputFile) {
    try {
      writeFileSync(o.outputFile, text);
    } catch (err) {
      io.stderr(`polecheck: cannot write ${o.outputFile}: ${(err as Error).message}\n`);
      return 2;
    }
  } else io.stdout(text);
  if (o.command === 'report') return 0;
  const s = summarize(results);
  if (s.errors > 0) return 1;
  if (o.maxWarnings !== undefined && s.warnings > o.maxWarnings) return 1;
  return 0;
}

function render(o: Options, results: FileResult[], p: ReturnType<typeof paint>): string {
  switch (o.format) {
    case 'json':
      return jsonReport(results, { quiet: o.quiet });
    case 'sarif':
      // The rule pages ship with the package; link them where it is installed.
      return sarifReport(results, {
        version: VERSION,
        rules: RULES,
        docs: ruleDocs(),
        docsBase: pathToFileURL(docsDir()).href,
        informationUri: pathToFileURL(resolve(docsDir(), '..', 'README.md')).href,
      });
    case 'github':
      return githubReport(quietly(results, o.quiet));
    case 'gitlab':
      return gitlabReport(quietly(results, o.quiet));
    default:
      return textReport(results, p, { quiet: o.quiet });
  }
}

const quietly = (results: FileResult[], quiet: boolean): FileResult[] =>
  quiet ? results.map((r) => ({ ...r, findings: r.findings.filter((f) => f.severity === 'error' && !f.waived) })) : results;

function ruleDocs(): Record<string, string> {
  const out: Record<string, string> = {};
  for (const r of RULES) {
    try {
      out[r.id] = readFileSync(join(docsDir(), `${r.id}.md`), 'utf8');
    } catch {
      // a page that cannot be read leaves the rule with its one-line description
    }
  }
  return out;
}

/** The files to check: discovery, the config's include/exclude, --changed, --shard. */
function selectFiles(o: Options, config: Config, cwd: string): string[] {
  const named = o.paths.length ? o.paths : ['.'];
  let files = discover(named, cwd);
  const explicit = new Set(named.filter((p) => existsPath(resolve(cwd, p)) && !statSync(resolve(cwd, p)).isDirectory()));
  const rel = (f: string) => relative(config.baseDir, resolve(cwd, f)).split('\\').join('/');
  const included = config.include.length ? picomatch(config.include, { dot: true }) : () => true;
  const excluded = config.exclude.length ? picomatch(config.exclude, { dot: true }) : () => false;
  // A file named on the command line is checked unless excluded; found files must also be included.
  files = files.filter((f) => !excluded(rel(f)) && (explicit.has(f) || included(rel(f))));
  if (o.changed) {
    // A ref is never an option: `--changed=--output=FILE` must not reach git as one.
    if (o.changed.startsWith('-')) throw new UsageError(`--changed takes a git ref, got '${o.changed}'`);
    let out: string;
    try {
      execFileSync('git', ['rev-parse', '--verify', '--quiet', '--end-of-options', `${o.changed}^{commit}`], { cwd, stdio: ['ignore', 'pipe', 'pipe'] });
      const top = execFileSync('git', ['rev-parse', '--show-toplevel'], { cwd, encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] }).trim();
      const diff = execFileSync('git', ['diff', '--name-only', '--diff-filter=ACMR', '--end-of-options', o.changed, '--'], { cwd: top, encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] });
      const untracked = execFileSync('git', ['ls-files', '--others', '--exclude-standard'], { cwd: top, encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] });
      out = [diff, untracked].join('\n');
      const changed = new Set(out.split('\n').filter(Boolean).map((f) => resolve(top, f)));
      files = files.filter((f) => changed.has(resolve(cwd, f)));
    } catch (err) {
      throw new UsageError(`--changed ${o.changed}: git could not list the changes (${((err as { stderr?: string }).stderr ?? (err as Error).message).toString().trim().split('\n')[0]})`);
    }
  }
  if (o.shard) {
    // Deterministic: the sorted list, dealt round-robin, so every file lands in exactly one shard.
    const { index, count } = o.shard;
    files = [...files].sort().filter((_, i) => i % count === index - 1);
  }
  return files;
}

/**
 * Writes `content` beside `path` and renames it over the file — unless the
 * file no longer holds `expected` (it changed since it was read), in which
 * case nothing is written. The rename is atomic on one file system.
 */
export function writeAtomically(path: string, expected: string, content: string): 'written' | 'changed' {
  const tmp = join(dirname(path), `.${path.split(/[\\/]/).pop()}.polecheck-${process.pid}-${Math.random().toString(36).slice(2)}.tmp`);
  try {
    writeFileSync(tmp, content, { mode: statSync(path).mode });
    if (readFileSync(path, 'utf8') !== expected) {
      unlinkSync(tmp);
      return 'changed';
    }
    renameSync(tmp, path);
    return 'written';
  } catch (err) {
    try {
      unlinkSync(tmp);
    } catch {
      // nothing left to clean up
    }
    throw err;
  }
}

/** --fix and --fix-dry-run. Returns an exit status to stop with, or undefined to go on reporting. */
function fixFiles(results: FileResult[], texts: Map<string, string>, o: Options, options: CheckOptions, io: MainIO, cwd: string): number | undefined {
  let failed = false;
  for (let i = 0; i < results.length; i++) {
    const r = results[i];
    const text = texts.get(r.path);
    if (!text || !r.spec) continue;
    const edits = planFixes(r, text.charCodeAt(0) === 0xfeff ? text.slice(1) : text, { bounds: o.fixBounds });
    if (!edits.length) continue;
    const shift = text.charCodeAt(0) === 0xfeff ? 1 : 0;
    const fixed = applyEdits(text, edits, shift);
    if (o.fixDryRun) {
      io.stdout(createTwoFilesPatch(r.path, r.path, text, fixed, undefined, undefined, { context: 3, headerOptions: FILE_HEADERS_ONLY }));
      continue;
    }
    try {
      if (writeAtomically(resolve(cwd, r.path), text, fixed) === 'changed') {
        io.stderr(`polecheck: ${r.path} changed while it was being checked; not fixed\n`);
        failed = true;
        continue;
      }
    } catch (err) {
      io.stderr(`polecheck: cannot write ${r.path}: ${(err as Error).message}\n`);
      failed = true;
      continue;
    }
    io.stderr(`polecheck: fixed ${edits.length} claim${edits.length === 1 ? '' : 's'} in ${r.path} (${edits.map((e) => `${e.claim} at line ${e.line}`).join(', ')})\n`);
    results[i] = checkText(r.path, fixed, options);
  }
  return failed ? 2 : undefined;
}
