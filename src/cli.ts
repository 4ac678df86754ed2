// The command line as a library: the command the process runs (src/cli/run.ts),
// synchronously and in this thread, with every writer loaded up front. Tests
// and embedders call `main`; the bundle's entry (src/main.ts) does not import
// this module, so its static imports stay out of the command's start-up.

import * as diff from 'diff';
import * as schemaJson from './schema-json';
import * as github from './report/github';
import * as gitlab from './report/gitlab';
import * as json from './report/json';
import * as review from './report/review';
import * as sarif from './report/sarif';
import * as text from './report/text';
import { type WriterModules, outputFrom } from './cli/output';
import { checkInThread } from './cli/plan';
import { type MainIO, finish, prepare, printSchema } from './cli/run';

export { DEFAULT_MAX_BYTES, FORMATS, UsageError, parseArgs } from './cli/args';
export { type ReadFile, checkFile, discover, readSpecFile } from './cli/discover';
export { writeAtomically } from './cli/write';
export type { MainIO } from './cli/run';

const WRITERS: WriterModules = { text, json, sarif, github, gitlab, review, diff };

export function main(argv: string[], io: MainIO): number {
  const plan = prepare(argv, io);
  if (typeof plan === 'number') return plan;
  if (plan.kind === 'schema') return printSchema(plan.which, io, schemaJson);
  const output = outputFrom(plan.o, plan.color, WRITERS, plan.cwd);
  return finish(plan, checkInThread(plan, output.section), output, io);
}
