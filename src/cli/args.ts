// The command line's words: options, their values, the help text. No I/O
// beyond asking whether a path exists (to tell `--changed REF` from a path).

import { statSync } from 'node:fs';
import { DEFAULT_CACHE_DIR } from '../cache';

declare const POLECHECK_VERSION: string;
export const VERSION = typeof POLECHECK_VERSION === 'string' ? POLECHECK_VERSION : '0.0.0-dev';

/** Files above this size are refused rather than parsed (a spec is a few kilobytes). */
export const DEFAULT_MAX_BYTES = 5 * 1024 * 1024;

export const HELP = `polecheck ${VERSION} — checks the claims of analog block specs against their exact small-signal model

  polecheck [check] [paths…]      judge every claim of the specs (files, or folders searched for *.md)
  polecheck report [paths…]       every claim: stated, exact, hand estimate, verdict (exit 0)
  polecheck report --html DIR [paths…]
                                  the review pages: DIR/index.html and one page per block, with plots
  polecheck rules                 the rules and their levels
  polecheck explain ID            a rule's page, or what a reader finding means
  polecheck schema [spec|config]  the JSON Schema (draft-07) of the front matter or of polecheck.yaml
  polecheck lsp                   a language server for editors, over standard input and output
  polecheck sync SPEC --raw FILE  update design quantities and params that name their source (\`from:\`)
                                  from an ngspice operating point (raw file of an .op); --preview shows the diff

what to check
  --config PATH            settings from PATH instead of the nearest polecheck.yaml
  --changed [REF]          only files changed since REF (default HEAD; a branch: since the merge base)
  --shard I/N              the I-th of N fixed slices of the file list (parallel CI jobs)
  --max-bytes N            refuse files larger than N bytes (default ${DEFAULT_MAX_BYTES})
  --cache                  reuse the findings of unchanged files
  --cache-dir DIR          where those are kept (default ${DEFAULT_CACHE_DIR}; it ignores itself in git)

how to say it
  --format FORMAT          text (the review sheet, default), json, sarif, github or gitlab
  --out PATH               write the report to PATH instead of standard output
  --errors-only            leave out warnings, notes and claims that hold
  --warnings-allowed N     exit 1 when there are more than N warnings

rewriting stated claims (never a design)
  --restate                rewrite stale typical claims to the model's figures, atomically
  --restate-bounds         with --restate: also move failing min/max bounds
  --preview                show what --restate would write as a unified diff; write nothing

  -h, --help               this text
  -v, --version            the version

exit status: 0 nothing fails, 1 a claim fails or too many warnings, 2 the command could not run.
Figures are first-order small-signal estimates; transistor-level simulation and sign-off decide.`;

export class UsageError extends Error {}

export const FORMATS = ['text', 'json', 'sarif', 'github', 'gitlab'] as const;
export type Format = (typeof FORMATS)[number];

export interface Options {
  command: 'check' | 'report' | 'rules' | 'explain' | 'schema' | 'lsp' | 'help' | 'version';
  format: Format;
  warningsAllowed?: number;
  errorsOnly: boolean;
  out?: string;
  /** `report --html DIR`: write the review pages into DIR. */
  html?: string;
  maxBytes: number;
  config?: string;
  restate: boolean;
  restateBounds: boolean;
  preview: boolean;
  changed?: string;
  shard?: { index: number; count: number };
  cache: boolean;
  cacheDir: string;
  paths: string[];
}

export function parseArgs(argv: string[]): Options {
  const o: Options = { command: 'check', format: 'text', errorsOnly: false, maxBytes: DEFAULT_MAX_BYTES, restate: false, restateBounds: false, preview: false, cache: false, cacheDir: DEFAULT_CACHE_DIR, paths: [] };
  const args = [...argv];
  if (args[0] && ['check', 'report', 'rules', 'explain', 'schema', 'lsp'].includes(args[0])) o.command = args.shift() as Options['command'];
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
      case '--html':
        o.html = value(flag, inline);
        break;
      case '--restate':
        o.restate = true;
        break;
      case '--restate-bounds':
        o.restateBounds = true;
        break;
      case '--preview':
        o.preview = true;
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
      case '--cache-dir':
        o.cacheDir = value(flag, inline);
        o.cache = true;
        break;
      case '--warnings-allowed':
        o.warningsAllowed = count(flag, value(flag, inline));
        break;
      case '--max-bytes':
        o.maxBytes = count(flag, value(flag, inline));
        break;
      case '--errors-only':
        o.errorsOnly = true;
        break;
      case '--out':
        o.out = value(flag, inline);
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
  if (o.html !== undefined && o.command !== 'report') throw new UsageError('--html goes with report (polecheck report --html DIR [paths…])');
  if (o.html !== undefined && o.format !== 'text') throw new UsageError('--html writes the review pages; it takes no --format');
  if (o.restateBounds && !o.restate && !o.preview) throw new UsageError('--restate-bounds goes with --restate or --preview');
  return o;
}

export function existsPath(p: string): boolean {
  try {
    statSync(p);
    return true;
  } catch {
    return false;
  }
}
