// The command line: arguments, file discovery, output format, exit status.
// The only module that touches the file system or the process.

import { closeSync, openSync, readFileSync, readSync, readdirSync, realpathSync, statSync, writeFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { RULES } from '../rules';
import { type CheckOptions, type FileResult, checkText } from './check';
import { jsonReport } from './report/json';
import { reviewReport } from './report/review';
import { paint, useColor } from './report/style';
import { summarize } from './report/summary';
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

options:
  --format text|json     output format (default text)
  --max-warnings N       exit 1 when there are more than N warnings
  --quiet                show errors only
  --output-file PATH     write the report to PATH instead of standard output
  --max-bytes N          refuse files larger than N bytes (default ${DEFAULT_MAX_BYTES})
  -h, --help             this text
  -v, --version          the version

exit status: 0 no errors, 1 errors found (or too many warnings), 2 the command could not run.`;

export class UsageError extends Error {}

interface Options {
  command: 'check' | 'report' | 'rules' | 'explain' | 'help' | 'version';
  format: 'text' | 'json';
  maxWarnings?: number;
  quiet: boolean;
  outputFile?: string;
  maxBytes: number;
  paths: string[];
}

export function parseArgs(argv: string[]): Options {
  const o: Options = { command: 'check', format: 'text', quiet: false, maxBytes: DEFAULT_MAX_BYTES, paths: [] };
  const args = [...argv];
  if (args[0] && ['check', 'report', 'rules', 'explain'].includes(args[0])) o.command = args.shift() as Options['command'];
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
        if (f !== 'text' && f !== 'json') throw new UsageError(`--format takes text or json, got '${f}'`);
        o.format = f;
        break;
      }
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
  return o;
}

const SKIP_DIRS = new Set(['node_modules', '.git']);

/** Expands paths to Markdown files, in a stable order; folders are searched recursively. */
export function discover(paths: string[]): string[] {
  const out: string[] = [];
  const seen = new Set<string>();
  const walk = (dir: string, shown: string): void => {
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
      const full = join(dir, name);
      const shownChild = shown.endsWith('/') ? shown + name : `${shown}/${name}`;
      let st;
      try {
        st = statSync(full);
      } catch {
        continue; // a dangling link
      }
      if (st.isDirectory()) {
        if (!SKIP_DIRS.has(name)) walk(full, shownChild);
      } else if (name.endsWith('.md')) out.push(shownChild);
    }
  };
  for (const p of paths) {
    let st;
    try {
      st = statSync(p);
    } catch {
      throw new UsageError(`no such file or folder: ${p}`);
    }
    if (st.isDirectory()) walk(p, p.replace(/\/+$/, '') || '/');
    else out.push(p);
  }
  return [...new Set(out)];
}

function readError(path: string, rule: string, message: string): FileResult {
  return { path, skipped: false, findings: [{ rule, severity: 'error', line: 1, column: 1, claim: null, message, suggestions: [] }] };
}

const HEAD_BYTES = 64 * 1024;
const SPEC_HEAD = /^(\uFEFF)?---[ \t]*(\r\n|\r|\n)[\s\S]*?^polecheck[ \t]*:/m;

/** Whether the start of a file could be a spec: front matter with the `polecheck` key. */
function looksLikeSpec(head: Buffer): boolean {
  return SPEC_HEAD.test(head.toString('latin1'));
}

export function checkFile(path: string, maxBytes: number, options: CheckOptions = {}): FileResult {
  let bytes: Buffer;
  try {
    const size = statSync(path).size;
    if (size > maxBytes) {
      // A large page that is not a spec is skipped like any other page.
      const head = Buffer.alloc(Math.min(HEAD_BYTES, size));
      const fd = openSync(path, 'r');
      try {
        readSync(fd, head, 0, head.length, 0);
      } finally {
        closeSync(fd);
      }
      if (!looksLikeSpec(head)) return { path, skipped: true, findings: [] };
      return readError(path, 'file-too-large', `file is ${size} bytes, above the limit of ${maxBytes} (--max-bytes)`);
    }
    bytes = readFileSync(path);
  } catch (err) {
    return readError(path, 'read-error', `cannot read the file: ${(err as NodeJS.ErrnoException).code ?? (err as Error).message}`);
  }
  if (!looksLikeSpec(bytes.subarray(0, HEAD_BYTES))) return { path, skipped: true, findings: [] };
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
  } catch {
    return readError(path, 'encoding', 'the file is not valid UTF-8');
  }
  return checkText(path, text, options);
}

function docsDir(): string {
  // The bundle lives in dist/, the sources in src/: rule docs are in rules/ beside either.
  return resolve(dirname(fileURLToPath(import.meta.url)), '..', 'rules');
}

export function main(argv: string[], io: { stdout: (s: string) => void; stderr: (s: string) => void; env: NodeJS.ProcessEnv; isTTY: boolean }): number {
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
  let files: string[];
  try {
    files = discover(o.paths.length ? o.paths : ['.']);
  } catch (err) {
    if (err instanceof UsageError) {
      io.stderr(`polecheck: ${err.message}\n`);
      return 2;
    }
    throw err;
  }
  const results = files.map((f) => checkFile(f, o.maxBytes));
  const text = o.command === 'report'
    ? o.format === 'json' ? jsonReport(results) : reviewReport(results, p)
    : o.format === 'json' ? jsonReport(results, { quiet: o.quiet }) : textReport(results, p, { quiet: o.quiet });
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
