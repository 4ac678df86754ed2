// The command: dispatch to check, report, rules, explain or schema; for a
// check, read the files one by one, keep what the output needs of each, then
// fix, render and choose the exit status. `run` is the process's way in
// (writers loaded on demand, worker threads for a large folder); src/cli.ts
// offers the same command synchronously, in this thread, for tests.

import { readFileSync, writeFileSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { join, resolve } from 'node:path';
import { RULES } from '../../rules';
import { ResultCache, hashOf } from '../cache';
import { type Config, ConfigError, defaultConfig, findConfig, loadConfig } from '../config';
import { useColor } from '../report/style';
import { summarize } from '../report/summary';
import { INPUT_DIAGNOSTICS } from '../diagnostics';
import { nearest } from '../spec/nearest';
import { todayIso } from '../verdicts/waivers';
import { HELP, type Options, UsageError, VERSION, parseArgs } from './args';
import { selectFiles } from './discover';
import { docsDir } from './docs';
import type { JobSettings, Outcome } from './job';
import { type Output, OutputError, loadWriters, outputFrom } from './output';
import { type Plan, checkInThread } from './plan';
import { checkInWorkers } from './pool';
import { writeFixes } from './write';
import { runSync } from '../sync/sync';
import { printable } from '../report/text';

export interface MainIO {
  stdout: (s: string) => void;
  stderr: (s: string) => void;
  env: NodeJS.ProcessEnv;
  isTTY: boolean;
  cwd?: string;
}

/** Entries of an earlier layout (without the review sheet) are not reused under the same version. */
const CACHE_FORMAT = 'findings+sheet';

export type Prepared = Plan | { kind: 'schema'; which: 'spec' | 'config' } | { kind: 'lsp' };

/** Parses the arguments and does what needs no file: help, version, rules, explain. Returns the exit status when done. */
export function prepare(argv: string[], io: MainIO): Prepared | number {
  if (argv[0] === 'sync') return runSync(argv.slice(1), io);
  let o: Options;
  try {
    o = parseArgs(argv);
  } catch (err) {
    if (err instanceof UsageError) {
      io.stderr(`polecheck: ${printable(err.message)}\n`);
      return 2;
    }
    throw err;
  }
  if (o.command === 'help') {
    io.stdout(`${HELP}\n`);
    return 0;
  }
  if (o.command === 'version') {
    io.stdout(`${VERSION}\n`);
    return 0;
  }
  if (o.command === 'rules') {
    // The reader findings follow the rules, so that every id a report shows is listed (and `explain` knows it).
    const readers = INPUT_DIAGNOSTICS.filter((d) => !RULES.some((r) => r.id === d.id));
    const w = Math.max(...RULES.map((r) => r.id.length), ...readers.map((d) => d.id.length));
    const line = (id: string, level: string, what: string) => `${id.padEnd(w)}  ${level.padEnd(7)}  ${what}`;
    io.stdout(`${RULES.map((r) => line(r.id, r.severity, r.description)).join('\n')}\n\nreader findings (about the document itself):\n${readers.map((d) => line(d.id, d.severity, d.description)).join('\n')}\n`);
    return 0;
  }
  if (o.command === 'explain') {
    const id = o.paths[0] ?? '';
    const rule = RULES.find((r) => r.id === id);
    const input = INPUT_DIAGNOSTICS.find((d) => d.id === id);
    if (input) {
      io.stdout(explainInput(input));
      return 0;
    }
    if (!rule) {
      const near = id ? nearest(id, [...RULES.map((r) => r.id), ...INPUT_DIAGNOSTICS.map((d) => d.id)]) : undefined;
      io.stderr(`polecheck: ${id ? `no rule or reader finding is called '${id}'` : 'explain takes the id of a rule or of a reader finding'}${near ? `; did you mean '${near}'?` : ''} ('polecheck rules' lists them)\n`);
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
    return { kind: 'schema', which };
  }
  if (o.command === 'lsp') return { kind: 'lsp' };

  const cwd = io.cwd ?? process.cwd();
  let config: Config;
  try {
    const found = o.config ?? findConfig(cwd);
    config = found ? loadConfig(found) : defaultConfig(cwd);
  } catch (err) {
    if (err instanceof ConfigError) {
      io.stderr(`polecheck: ${printable(err.message)}\n`);
      return 2;
    }
    throw err;
  }

  let files: string[];
  const notes: string[] = [];
  try {
    files = selectFiles(o, config, cwd, notes);
    for (const note of notes) io.stderr(`polecheck: ${printable(note)}\n`);
  } catch (err) {
    if (err instanceof UsageError) {
      io.stderr(`polecheck: ${printable(err.message)}\n`);
      return 2;
    }
    throw err;
  }

  const color = o.out ? false : useColor(io.env, io.isTTY);
  // One date for the whole run, in every thread: waiver expiry does not depend on which thread checked a file.
  const job: JobSettings = { check: { rules: config.rules, tolerances: config.tolerances, today: todayIso() } };
  if (o.restate || o.preview) job.fix = { bounds: o.restateBounds, recheck: !o.preview };
  if (o.command === 'report' && o.format !== 'json') job.review = o.html !== undefined ? { color, html: true } : { color };
  // The cache serves plain checks only: reports, fixes and their diffs need the models.
  const useCache = o.cache && o.command === 'check' && !o.restate && !o.preview;
  const cache = useCache ? new ResultCache(resolve(cwd, o.cacheDir), hashOf(VERSION, CACHE_FORMAT, JSON.stringify(config.rules), JSON.stringify(config.tolerances), new Date().toISOString().slice(0, 10))) : undefined;
  return { kind: 'files', o, files, cwd, color, job, cache };
}

/** `explain` for a reader finding: what it reports and whether a waiver may accept it. */
function explainInput(d: (typeof INPUT_DIAGNOSTICS)[number]): string {
  return `${d.id} — a reader finding (${d.severity})

${d.description}

Reader findings are about the document itself: it could not be read, parsed or
matched to its topology, so the claims it concerns were not judged. The message
names the key or cell and, where one is near, the value or name that was meant.
${d.waivable ? `A waiver in the front matter may accept it (\`waivers: [{rule: ${d.id}, reason: …}]\`).` : 'No waiver can accept it.'}
`;
}

export function printSchema(which: 'spec' | 'config', io: MainIO, m: typeof import('../schema-json')): number {
  io.stdout(`${JSON.stringify(which === 'config' ? m.configSchema() : m.jsonSchema(), null, 2)}\n`);
  return 0;
}

/** Writes the fixes, renders the report and returns the exit status. */
export function finish(plan: Plan, outcomes: Outcome[], output: Output, io: MainIO): number {
  const { o } = plan;
  if (o.restate || o.preview) {
    const status = writeFixes(outcomes, io, plan.cwd, o.preview ? output.diff : undefined);
    if (status !== undefined) return status;
  }
  let text: string;
  try {
    text = output.render(outcomes);
  } catch (err) {
    if (!(err instanceof OutputError)) throw err;
    io.stderr(`polecheck: ${err.message}\n`);
    return 2;
  }
  if (o.out) {
    try {
      writeFileSync(resolve(plan.cwd, o.out), text);
    } catch (err) {
      io.stderr(`polecheck: cannot write ${o.out}: ${(err as Error).message}\n`);
      return 2;
    }
  } else io.stdout(text);
  if (o.command === 'report') return 0;
  const s = summarize(outcomes);
  if (s.errors > 0) return 1;
  if (o.warningsAllowed !== undefined && s.warnings > o.warningsAllowed) {
    // The text report's tally says so; the other formats are read by programs, so the reason goes to standard error.
    if (o.format !== 'text' || o.out) io.stderr(`polecheck: ${s.warnings} warning${s.warnings === 1 ? '' : 's'}, more than the ${o.warningsAllowed} allowed (--warnings-allowed)\n`);
    return 1;
  }
  return 0;
}

/**
 * Folders of at least this many files are checked in worker threads. Measured
 * on 2 cores with generated specs: a worker is online about 45 ms after it is
 * asked for, and two workers spend 20–35 % more CPU time in all than one
 * thread (each has its own cold JIT; the two contend). With both cores free
 * that breaks even near 8 files; on a busy machine the workers lost at every
 * size tried (8 to 2,400 files). A few dozen keeps the small runs of a
 * pre-commit hook in one thread and gives large folders both cores.
 */
export const WORKER_THRESHOLD = 24;

/**
 * How many worker threads to start for `files` files: one per core, the main
 * thread only reading and dealing out files (see src/cli/pool.ts for why it
 * checks none) — one even on a single core, since a worker's heap can be
 * bounded and the main thread's cannot (the same CPU time was measured for a
 * folder checked by one worker as in the main thread). POLECHECK_WORKERS=N
 * overrides the choice (0: none), for tests and measurements; one file never
 * gets a worker.
 */
export function workerCount(files: number, env: NodeJS.ProcessEnv, cores: () => number): number {
  if (files < 2) return 0;
  const forced = env.POLECHECK_WORKERS;
  if (forced !== undefined && /^\d+$/.test(forced)) return Math.min(Number(forced), files);
  if (files < WORKER_THRESHOLD) return 0;
  return Math.max(1, cores());
}

/** The old-generation heap of a worker: far above what one spec needs (tens of MiB), low enough that V8 sizes the heap for a small program. */
export const WORKER_HEAP_MB = 256;

/** Files per message: up to 4 (a message costs far less than a check), fewer in a small folder so that no worker idles at the end. */
export const batchSize = (files: number, workers: number): number => Math.max(1, Math.min(4, Math.ceil(files / (workers * 8))));

export interface RunOptions {
  /** The worker thread's entry (dist/worker.js beside the bundle); without it, every file is checked in this thread. */
  workerEntry?: URL;
  /** Starts the language server from its own bundle (dist/lsp.js), loaded only by `polecheck lsp`; resolves never (the server ends the process). */
  lsp?: () => Promise<number>;
}

/** The command as the process runs it: writers loaded on demand, a large folder checked in worker threads. */
export async function run(argv: string[], io: MainIO, opts: RunOptions = {}): Promise<number> {
  const plan = prepare(argv, io);
  if (typeof plan === 'number') return plan;
  if (plan.kind === 'schema') return printSchema(plan.which, io, await import('../schema-json'));
  if (plan.kind === 'lsp') {
    if (!opts.lsp) {
      io.stderr('polecheck: `lsp` runs from the built command (npm run build)\n');
      return 2;
    }
    return opts.lsp();
  }
  const output = outputFrom(plan.o, plan.color, await loadWriters(plan.o), plan.cwd);
  const workers = opts.workerEntry ? workerCount(plan.files.length, io.env, () => availableParallelism()) : 0;
  const outcomes = workers > 0 && opts.workerEntry ? await checkInWorkers(plan, output.section, { entry: opts.workerEntry, workers, mainChecks: false, batch: batchSize(plan.files.length, workers), maxOldGenerationSizeMb: WORKER_HEAP_MB }) : checkInThread(plan, output.section);
  return finish(plan, outcomes, output, io);
}
