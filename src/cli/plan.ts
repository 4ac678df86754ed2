// A check's plan — the files, the settings of each file's job, the cache —
// and the files read and checked one after another in this thread.

import { resolve } from 'node:path';
import type { ResultCache } from '../cache';
import type { Options } from './args';
import { readSpecFile } from './discover';
import { type JobSettings, type Outcome, type Reviewer, checkOne } from './job';

/** A check or report, ready to read its files. */
export interface Plan {
  kind: 'files';
  o: Options;
  files: string[];
  cwd: string;
  color: boolean;
  job: JobSettings;
  cache?: ResultCache;
}

/** File `i` of the plan: already settled (unreadable, not a spec, a cache hit), or its text to check. */
export function readOne(plan: Plan, i: number): { outcome: Outcome } | { text: string } {
  const path = plan.files[i];
  const read = readSpecFile(resolve(plan.cwd, path), plan.o.maxBytes, path);
  if (read.kind === 'done') {
    const { skipped, findings } = read.result;
    return { outcome: { path, skipped, findings } };
  }
  const hit = plan.cache?.get(read.text);
  if (hit) return { outcome: { path, skipped: hit.skipped, findings: hit.findings, ...(hit.sheet ? { sheet: hit.sheet } : {}) } };
  return { text: read.text };
}

/** Stores a checked file's findings in the cache, when there is one. */
export function remember(plan: Plan, text: string, outcome: Outcome): void {
  plan.cache?.set(text, { skipped: outcome.skipped, findings: outcome.findings, ...(outcome.sheet ? { sheet: outcome.sheet } : {}) });
}

/** Checks the plan's files one after another in this thread. */
export function checkInThread(plan: Plan, review: Reviewer | undefined): Outcome[] {
  const outcomes: Outcome[] = [];
  for (let i = 0; i < plan.files.length; i++) {
    const read = readOne(plan, i);
    if ('outcome' in read) {
      outcomes.push(read.outcome);
      continue;
    }
    const outcome = checkOne(plan.files[i], read.text, plan.job, review);
    remember(plan, read.text, outcome);
    outcomes.push(outcome);
  }
  return outcomes;
}
