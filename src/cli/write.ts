// --restate and --preview: the planned edits written atomically, or shown as diffs.

import { readFileSync, renameSync, statSync, unlinkSync, writeFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import type { Outcome } from './job';
import type { Differ } from './output';

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

interface FixIO {
  stdout: (s: string) => void;
  stderr: (s: string) => void;
}

/**
 * Writes (or, with a differ, prints as diffs) the edits planned for each file,
 * in file order. A written file's outcome becomes that of its fixed text.
 * Returns 2 when a file could not be fixed, or undefined to go on reporting.
 */
export function writeFixes(outcomes: Outcome[], io: FixIO, cwd: string, diff: Differ | undefined): number | undefined {
  let failed = false;
  for (let i = 0; i < outcomes.length; i++) {
    const { path, fix } = outcomes[i];
    if (!fix) continue;
    if (diff) {
      io.stdout(diff(path, fix.text, fix.fixed));
      continue;
    }
    try {
      if (writeAtomically(resolve(cwd, path), fix.text, fix.fixed) === 'changed') {
        io.stderr(`polecheck: ${path} changed while it was being checked; not fixed\n`);
        failed = true;
        continue;
      }
    } catch (err) {
      io.stderr(`polecheck: cannot write ${path}: ${(err as Error).message}\n`);
      failed = true;
      continue;
    }
    const { edits } = fix;
    io.stderr(`polecheck: fixed ${edits.length} claim${edits.length === 1 ? '' : 's'} in ${path} (${edits.map((e) => `${e.claim} at line ${e.line}`).join(', ')})\n`);
    if (fix.after) outcomes[i] = fix.after;
  }
  return failed ? 2 : undefined;
}
