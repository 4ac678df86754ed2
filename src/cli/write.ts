// --restate and --preview: the planned edits written atomically, or shown as diffs.

import { chmodSync, chownSync, closeSync, fstatSync, fsyncSync, ftruncateSync, openSync, readFileSync, readSync, realpathSync, renameSync, statSync, unlinkSync, writeFileSync, writeSync } from 'node:fs';
import { basename, dirname, join, resolve } from 'node:path';
import { printable } from '../report/text';
import type { Outcome } from './job';
import type { Differ } from './output';

/** A file that is not written, and why (read-only, not a regular file). */
export class WriteRefused extends Error {}

const sideName = (target: string, what: string): string => join(dirname(target), `.${basename(target)}.polecheck-${process.pid}-${Math.random().toString(36).slice(2)}.${what}`);

/**
 * Writes `content` to the file at `path` — unless the file no longer holds
 * `expected` (it changed since it was read), in which case nothing is written.
 * A symbolic link is followed: its target is written and the link stays. The
 * file's mode (and owner, where allowed) is kept. A read-only file, or one
 * that is not a regular file, is refused (WriteRefused).
 *
 * A file with one link is written beside itself and renamed over: atomic on
 * one file system. A file with several hard links is written in place through
 * the inode they share (a rename would split them): a copy of the old text is
 * kept beside it until the new text is on disk, and named if the write fails.
 */
export function writeAtomically(path: string, expected: string, content: string): 'written' | 'changed' {
  const target = realpathSync(path);
  const st = statSync(target);
  if (!st.isFile()) throw new WriteRefused('it is not a regular file');
  if ((st.mode & 0o222) === 0) throw new WriteRefused('the file is read-only (no write permission); make it writable to restate it');
  if (st.nlink > 1) return writeInPlace(target, expected, content);
  const tmp = sideName(target, 'tmp');
  try {
    writeFileSync(tmp, content, { mode: 0o600 });
    chmodSync(tmp, st.mode & 0o7777);
    try {
      chownSync(tmp, st.uid, st.gid);
    } catch {
      // only the owner's group or root may give a file away: the writer's owner stands
    }
    if (readFileSync(target, 'utf8') !== expected) {
      unlinkSync(tmp);
      return 'changed';
    }
    renameSync(tmp, target);
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

function writeInPlace(target: string, expected: string, content: string): 'written' | 'changed' {
  const fd = openSync(target, 'r+');
  let backup: string | undefined;
  try {
    const size = fstatSync(fd).size;
    const old = Buffer.alloc(size);
    let got = 0;
    while (got < size) {
      const n = readSync(fd, old, got, size - got, got);
      if (n === 0) break;
      got += n;
    }
    if (old.subarray(0, got).toString('utf8') !== expected) return 'changed';
    backup = sideName(target, 'bak');
    writeFileSync(backup, old.subarray(0, got), { mode: 0o600 });
    const bytes = Buffer.from(content, 'utf8');
    let put = 0;
    while (put < bytes.length) put += writeSync(fd, bytes, put, bytes.length - put, put);
    ftruncateSync(fd, bytes.length);
    fsyncSync(fd);
    unlinkSync(backup);
    backup = undefined;
    return 'written';
  } catch (err) {
    if (backup) (err as Error).message += ` (the text before the write is kept in ${backup})`;
    throw err;
  } finally {
    closeSync(fd);
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
  // The same file under two names (`a.md ./a.md`, a link) is written once.
  const written = new Set<string>();
  for (let i = 0; i < outcomes.length; i++) {
    const { path, fix } = outcomes[i];
    if (!fix) continue;
    const shown = printable(path);
    if (fix.refused) {
      io.stderr(`polecheck: ${shown} not restated: ${printable(fix.refused)}\n`);
      failed = true;
      continue;
    }
    if (diff) {
      io.stdout(diff(path, fix.text, fix.fixed));
      continue;
    }
    let real: string;
    try {
      real = realpathSync(resolve(cwd, path));
    } catch {
      real = resolve(cwd, path);
    }
    if (written.has(real)) continue;
    written.add(real);
    try {
      if (writeAtomically(resolve(cwd, path), fix.text, fix.fixed) === 'changed') {
        io.stderr(`polecheck: ${shown} changed while it was being checked; not restated\n`);
        failed = true;
        continue;
      }
    } catch (err) {
      io.stderr(`polecheck: cannot write ${shown}: ${printable(err instanceof WriteRefused ? err.message : (err as NodeJS.ErrnoException).code === 'EACCES' || (err as NodeJS.ErrnoException).code === 'EPERM' || (err as NodeJS.ErrnoException).code === 'EROFS' ? `${(err as Error).message} (the file or its folder is not writable)` : (err as Error).message)}\n`);
      failed = true;
      continue;
    }
    const { edits } = fix;
    io.stderr(`polecheck: fixed ${edits.length} claim${edits.length === 1 ? '' : 's'} in ${shown} (${edits.map((e) => `${e.claim} at line ${e.line}`).join(', ')})\n`);
    if (fix.after) outcomes[i] = fix.after;
  }
  return failed ? 2 : undefined;
}
