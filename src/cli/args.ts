// The command line's words: options, their values, the help text. No I/O
// beyond asking whether a path exists (to tell `--changed REF` from a path).

import { statSync } from 'node:fs';
import { DEFAULT_CACHE_DIR } from '../cache';

declare const POLECHECK_VERSION: string;
export const VERSION = typeof POLECHECK_VERSION === 'string' ? POLECHECK_VERSION : '0.0.0-dev';

/** Files above this size are refused rather than parsed (a spec is a few kilobytes). */
export const DEFAULT_MAX_BYTES = 5 * 1024 * 1024;

export const HELP = `polecheck ${VERSION} — checks the claims of analog block specs against their exact small-signal model

usage:
  polecheck [check] [options] [paths…]   check specs (files, or folders searched for *.md)
  polecheck report [options] [paths…]    every claim: claimed, exact, hand estimate, verdict (exit 0)
  polecheck rules                        list the rules with their default severity
  polecheck explain RULE                 print a rule's documentation
  polecheck schema [spec|config]         print the JSON Schema (draft-07) of the front matter or of polecheck.yaml
  polecheck sync SPEC --raw FILE [--preview]
                                         update design quantities and params that name their source (\`from:\`)
                                         from an ngspice operating point (raw file of an .op); --preview shows the diff

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
export type Format = (typeof FORMATS)[number];

export interface Options {
  command: 'check' | 'report' | 'rules' | 'explain' | 'schema' | 'help' | 'version';
  format: Format;
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

export function existsPath(p: string): boolean {
  try {
    statSync(p);
    return true;
  } catch {
    return false;
  }
}
