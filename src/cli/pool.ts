// Worker threads for a large folder. The main thread reads the files (and
// serves cache hits) and deals them out in small batches; each worker checks
// what it is given and posts back plain outcomes. Outcomes are stored by file
// index, so the report is the same, byte for byte and in the same order, as a
// check in one thread.
//
// The main thread checks no file itself unless asked to (`mainChecks`): the
// workers' heaps can be sized (`resourceLimits`), the main thread's cannot
// once the process runs. Measured on 2,400 specs with failing claims, 2 cores:
// the main thread and one worker with V8's default heap sizing peak near
// 400 MiB of resident memory; two workers with a 256 MiB old generation near
// 250 MiB, for about 15 % more CPU time spent collecting. A worker that cannot
// start, dies or runs out of heap hands its files back: the main thread checks them.

import { createRequire } from 'node:module';
import type { Worker } from 'node:worker_threads';
import { type Outcome, type Reviewer, checkOne } from './job';
import { type Plan, readOne, remember } from './plan';

export interface PoolSettings {
  /** The worker entry (dist/worker.js in the bundle). */
  entry: URL;
  workers: number;
  /** Whether the main thread checks files too, besides those handed back by a lost worker. */
  mainChecks: boolean;
  /** Files per message. */
  batch: number;
  /** The heap of each worker (V8 sizes its young generation and its growth from the old generation's limit). */
  maxOldGenerationSizeMb?: number;
}

/** A file to check, as posted to a worker. */
export interface Item {
  index: number;
  path: string;
  text: string;
}

export type Reply = { results: Array<[number, Outcome]> } | { error: { message: string; stack?: string } };

interface Slot {
  worker: Worker;
  /** Batches posted and not answered yet, oldest first (a worker answers in order). */
  inFlight: Item[][];
  alive: boolean;
}

/** Batches kept queued at each worker, so that it never waits for the main thread. */
const QUEUED = 2;

export async function checkInWorkers(plan: Plan, review: Reviewer | undefined, s: PoolSettings): Promise<Outcome[]> {
  // Loaded here, not at start-up: most runs check a few files in this thread.
  const { Worker } = createRequire(import.meta.url)('node:worker_threads') as typeof import('node:worker_threads');
  const n = plan.files.length;
  const outcomes: Outcome[] = new Array(n);
  let settled = 0;
  let next = 0;
  /** Files handed back by a lost worker: the main thread checks them. */
  const handedBack: Item[] = [];
  let failure: Error | undefined;
  let wake: (() => void) | undefined;
  const poke = () => {
    const w = wake;
    wake = undefined;
    w?.();
  };

  const settle = (index: number, outcome: Outcome) => {
    outcomes[index] = outcome;
    settled++;
  };
  /** The next file to check; files that need no check are settled on the way. */
  const take = (): Item | undefined => {
    while (next < n) {
      const index = next++;
      const read = readOne(plan, index);
      if ('outcome' in read) settle(index, read.outcome);
      else return { index, path: plan.files[index], text: read.text };
    }
    return undefined;
  };
  const feed = (slot: Slot) => {
    while (slot.alive && !failure && slot.inFlight.length < QUEUED) {
      const batch: Item[] = [];
      for (let item = take(); item; item = batch.length < s.batch ? take() : undefined) batch.push(item);
      if (!batch.length) return;
      slot.inFlight.push(batch);
      slot.worker.postMessage(batch);
    }
  };
  const lose = (slot: Slot) => {
    if (!slot.alive) return;
    slot.alive = false;
    for (const batch of slot.inFlight) handedBack.push(...batch);
    slot.inFlight = [];
    poke();
  };

  let stopping = false;
  const slots: Slot[] = [];
  for (let k = 0; k < s.workers; k++) {
    let worker: Worker;
    try {
      const resourceLimits = s.maxOldGenerationSizeMb ? { maxOldGenerationSizeMb: s.maxOldGenerationSizeMb } : undefined;
      worker = new Worker(s.entry, { workerData: { job: plan.job }, resourceLimits });
    } catch {
      break; // no worker: the main thread checks what is left
    }
    const slot: Slot = { worker, inFlight: [], alive: true };
    slots.push(slot);
    worker.on('message', (reply: Reply) => {
      if ('error' in reply) {
        // A check that throws in a worker fails the run as it would in one thread.
        const err = new Error(reply.error.message);
        if (reply.error.stack) err.stack = reply.error.stack;
        failure ??= err;
        poke();
        return;
      }
      const batch = slot.inFlight.shift() ?? [];
      const texts = new Map(batch.map((item) => [item.index, item.text]));
      for (const [index, outcome] of reply.results) {
        const text = texts.get(index);
        if (text !== undefined) remember(plan, text, outcome);
        settle(index, outcome);
      }
      feed(slot);
      poke();
    });
    // Failing to start, an uncaught error, running out of heap: the worker's files come back.
    worker.on('error', () => lose(slot));
    worker.on('exit', () => {
      if (!stopping) lose(slot);
    });
    feed(slot);
  }

  try {
    while (settled < n && !failure) {
      const alone = !slots.some((x) => x.alive);
      const item = handedBack.shift() ?? (s.mainChecks || alone ? take() : undefined);
      if (item) {
        const outcome = checkOne(item.path, item.text, plan.job, review);
        remember(plan, item.text, outcome);
        settle(item.index, outcome);
        // Let the replies in before the next file.
        await new Promise<void>((r) => setImmediate(r));
        continue;
      }
      // take() may have settled the last files (pages, unreadable files) on its way.
      if (settled >= n) break;
      // Nothing for this thread now: wait for a reply, or for a worker lost.
      await new Promise<void>((r) => {
        wake = r;
      });
    }
  } finally {
    stopping = true;
    await Promise.all(slots.map((x) => x.worker.terminate()));
  }
  if (failure) throw failure;
  return outcomes;
}
