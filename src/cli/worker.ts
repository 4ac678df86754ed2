// A worker thread's side of the pool (src/cli/pool.ts): checks the batches
// it is posted with the run's settings and posts back plain outcomes.

import { createRequire } from 'node:module';
import { type JobSettings, checkOne } from './job';
import { loadReviewer } from './output';
import type { Item, Reply } from './pool';

export async function serveChecks(): Promise<void> {
  // Loaded here, not at the command's start-up: only a worker thread needs it.
  const { parentPort: port, workerData } = createRequire(import.meta.url)('node:worker_threads') as typeof import('node:worker_threads');
  if (!port) throw new Error('the check worker runs only in a worker thread');
  const { job } = workerData as { job: JobSettings };
  const review = job.review ? await loadReviewer(job.review.color, job.review.html) : undefined;
  port.on('message', (batch: Item[]) => {
    let reply: Reply;
    try {
      reply = { results: batch.map((item) => [item.index, checkOne(item.path, item.text, job, review)]) };
    } catch (err) {
      const e = err instanceof Error ? err : new Error(String(err));
      reply = { error: { message: e.message, stack: e.stack } };
    }
    port.postMessage(reply);
  });
}
