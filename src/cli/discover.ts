// Which files to check and their text: folder walks, the configuration's
// globs, --changed, --shard, and reading a file within the size limit.

import { type Dirent, type Stats, closeSync, constants, fstatSync, openSync, readSync, readdirSync, realpathSync, statSync } from 'node:fs';
import { createRequire } from 'node:module';
import { join, relative, resolve } from 'node:path';
import picomatch from 'picomatch';
import { type CheckOptions, type FileResult, checkText } from '../check';
import type { Config } from '../config';
import { type Options, UsageError, existsPath } from './args';

const SKIP_DIRS = new Set(['node_modules', '.git']);

/** What a file system entry is, when it is not a regular file or a folder. */
export function specialKind(st: { isFIFO(): boolean; isCharacterDevice(): boolean; isBlockDevice(): boolean; isSocket(): boolean }): string {
  return st.isFIFO() ? 'a FIFO (named pipe)' : st.isCharacterDevice() ? 'a character device' : st.isBlockDevice() ? 'a block device' : st.isSocket() ? 'a socket' : 'not a regular file';
}

/**
 * Expands paths to Markdown files, in a stable order; folders are searched
 * recursively. Paths are shown as given and read relative to `cwd`. A
 * `*.md` in a folder that is not a regular file (a FIFO, a device, a socket)
 * is left out and said in `notes`; one named on the command line is kept,
 * and reading it says what it is.
 */
export function discover(paths: string[], cwd = process.cwd(), notes: string[] = []): string[] {
  const out: string[] = [];
  const seen = new Set<string>();
  const walk = (shown: string): void => {
    const dir = resolve(cwd, shown);
    let id: string;
    try {
      // The folder's identity, not its real path: resolving a path of depth d costs d steps.
      const st = statSync(dir, { bigint: true });
      id = `${st.dev}:${st.ino}`;
    } catch {
      return;
    }
    if (seen.has(id)) return; // symlink loops
    seen.add(id);
    let entries: Dirent[];
    try {
      entries = readdirSync(dir, { withFileTypes: true }).sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0));
    } catch {
      out.push(shown); // reported as unreadable when read
      return;
    }
    for (const entry of entries) {
      const name = entry.name;
      const shownChild = shown.endsWith('/') ? shown + name : `${shown}/${name}`;
      let st: Dirent | Stats = entry;
      if (entry.isSymbolicLink()) {
        try {
          st = statSync(join(dir, name));
        } catch {
          continue; // a dangling link
        }
      }
      if (st.isDirectory()) {
        if (!SKIP_DIRS.has(name)) walk(shownChild);
      } else if (name.endsWith('.md')) {
        if (st.isFile()) out.push(shownChild);
        else notes.push(`skipped ${shownChild}: ${specialKind(st)}, not a regular file`);
      }
    }
  };
  for (const p of paths) {
    let st;
    try {
      st = statSync(resolve(cwd, p));
    } catch {
      throw new UsageError(`no such file or folder: ${p}`);
    }
    if (st.isDirectory()) walk(p.replace(/\/+$/, '') || '/');
    else out.push(p);
  }
  // One file under several names (`a.md ./a.md`, a link to it) is checked once, under its first.
  const ids = new Set<string>();
  return out.filter((f) => {
    let id: string;
    try {
      const st = statSync(resolve(cwd, f), { bigint: true });
      id = `${st.dev}:${st.ino}`;
    } catch {
      id = resolve(cwd, f);
    }
    if (ids.has(id)) return false;
    ids.add(id);
    return true;
  });
}

/** The files to check: discovery, the config's include/exclude, --changed, --shard. */
export function selectFiles(o: Options, config: Config, cwd: string, notes: string[] = []): string[] {
  const named = o.paths.length ? o.paths : ['.'];
  let files = discover(named, cwd, notes);
  const explicit = new Set(named.filter((p) => existsPath(resolve(cwd, p)) && !statSync(resolve(cwd, p)).isDirectory()));
  const rel = (f: string) => relative(config.baseDir, resolve(cwd, f)).split('\\').join('/');
  const included = config.include.length ? picomatch(config.include, { dot: true }) : () => true;
  const excluded = config.exclude.length ? picomatch(config.exclude, { dot: true }) : () => false;
  // A file named on the command line is checked unless excluded, and its exclusion is said; found files must also be included.
  files = files.filter((f) => {
    if (excluded(rel(f))) {
      if (explicit.has(f)) notes.push(`${f} is not checked: excluded by ${config.path ?? 'the configuration'} (exclude: ${config.exclude.join(', ')})`);
      return false;
    }
    return explicit.has(f) || included(rel(f));
  });
  if (o.changed) {
    const changed = changedFiles(o.changed, cwd);
    // git names files under the real path of the repository; the cwd may reach it through a link.
    const real = (f: string): string => {
      try {
        return realpathSync(resolve(cwd, f));
      } catch {
        return resolve(cwd, f);
      }
    };
    files = files.filter((f) => changed.has(resolve(cwd, f)) || changed.has(real(f)));
  }
  if (o.shard) {
    // Deterministic: the sorted list, dealt round-robin, so every file lands in exactly one shard.
    const { index, count } = o.shard;
    files = [...files].sort().filter((_, i) => i % count === index - 1);
  }
  return files;
}

/**
 * The absolute paths of the files changed since `ref`, and the untracked ones.
 * A branch (local or remote-tracking) is compared from its merge base with
 * HEAD, as a reviewer reads a branch: what this side changed, not what the
 * branch moved on to since. HEAD, a tag or a commit is compared as it is. The
 * comparison is with the working tree, so staged and unstaged edits count.
 */
export function changedFiles(ref: string, cwd: string): Set<string> {
  // A ref is never an option: `--changed=--output=FILE` must not reach git as one.
  if (ref.startsWith('-')) throw new UsageError(`--changed takes a git ref, got '${ref}'`);
  // Loaded here, not at start-up: only --changed runs git.
  const { spawnSync } = createRequire(import.meta.url)('node:child_process') as typeof import('node:child_process');
  const git = (args: string[], at = cwd): { ok: boolean; out: string; err: string } => {
    const r = spawnSync('git', args, { cwd: at, encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] });
    const err = r.error ? r.error.message : (r.stderr ?? '').trim().split('\n')[0].replace(/^(fatal|error): /, '');
    return { ok: r.status === 0, out: r.stdout ?? '', err };
  };
  const fail = (why: string): never => {
    throw new UsageError(`--changed ${ref}: ${why}`);
  };
  const top = git(['rev-parse', '--show-toplevel']);
  if (!top.ok) fail(`git found no repository here (git: ${top.err || 'no message'})`);
  const root = top.out.trim();
  // (No --end-of-options here: git 2.39's rev-parse prints it as a revision; the ref cannot start with '-'.)
  const commit = git(['rev-parse', '--verify', `${ref}^{commit}`]);
  if (!commit.ok) fail(`not a commit of the repository at ${root} (git: ${commit.err || 'no message'})`);
  let base = commit.out.trim();
  const full = git(['rev-parse', '--symbolic-full-name', ref]);
  if (full.ok && /^refs\/(heads|remotes)\//.test(full.out.trim())) {
    const mb = git(['merge-base', base, 'HEAD']);
    if (!mb.ok) fail(`${ref} and HEAD have no common commit to compare from (git: ${mb.err || 'no message'})`);
    base = mb.out.trim();
  }
  const diff = git(['diff', '--name-only', '-z', '--no-renames', '--diff-filter=ACMRT', base, '--'], root);
  if (!diff.ok) fail(`git could not list the changes (git: ${diff.err || 'no message'})`);
  const untracked = git(['ls-files', '-z', '--others', '--exclude-standard'], root);
  if (!untracked.ok) fail(`git could not list the untracked files (git: ${untracked.err || 'no message'})`);
  return new Set(`${diff.out}\0${untracked.out}`.split('\0').filter(Boolean).map((f) => resolve(root, f)));
}

function readError(path: string, rule: string, message: string): FileResult {
  return { path, skipped: false, findings: [{ rule, severity: 'error', line: 1, column: 1, claim: null, message, suggestions: [] }] };
}

const HEAD_BYTES = 64 * 1024;
// The key may be quoted, or open a flow mapping (`{"polecheck": 1, …}`). Linear: `^` anchors at line starts only.
const SPEC_KEY = /^[ \t{]*["']?polecheck["']?[ \t]*:/m;

/** Whether text could be a spec: it opens front matter and holds the `polecheck` key (the reader decides). */
function looksLikeSpec(text: string): boolean {
  const t = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text.startsWith('\xef\xbb\xbf') ? text.slice(3) : text;
  return t.startsWith('---') && SPEC_KEY.test(t);
}

/**
 * A file in an encoding the reader does not take (UTF-16 or UTF-32, with or
 * without a byte-order mark): its name and its start decoded, or undefined.
 */
function wideEncoding(b: Buffer): { name: string; head: string } | undefined {
  const n = Math.min(b.length, HEAD_BYTES * 4);
  const u32 = (le: boolean, from: number): string => {
    let out = '';
    for (let i = from; i + 3 < n; i += 4) {
      const cp = le ? b.readUInt32LE(i) : b.readUInt32BE(i);
      out += cp <= 0x10ffff ? String.fromCodePoint(cp) : '\ufffd';
    }
    return out;
  };
  const u16 = (le: boolean, from: number): string => {
    const part = Buffer.from(b.subarray(from, from + ((n - from) & ~1)));
    return (le ? part : part.swap16()).toString('utf16le');
  };
  if (b[0] === 0xff && b[1] === 0xfe && b[2] === 0 && b[3] === 0) return { name: 'UTF-32 (little-endian, with a byte-order mark)', head: u32(true, 4) };
  if (b[0] === 0 && b[1] === 0 && b[2] === 0xfe && b[3] === 0xff) return { name: 'UTF-32 (big-endian, with a byte-order mark)', head: u32(false, 4) };
  if (b[0] === 0xff && b[1] === 0xfe) return { name: 'UTF-16 (little-endian)', head: u16(true, 2) };
  if (b[0] === 0xfe && b[1] === 0xff) return { name: 'UTF-16 (big-endian)', head: u16(false, 2) };
  if (b.length >= 4 && b[0] && !b[1] && !b[2] && !b[3]) return { name: 'UTF-32 (little-endian, without a byte-order mark)', head: u32(true, 0) };
  if (b.length >= 4 && !b[0] && !b[1] && !b[2] && b[3]) return { name: 'UTF-32 (big-endian, without a byte-order mark)', head: u32(false, 0) };
  if (b.length >= 4 && b[0] && !b[1] && b[2] && !b[3]) return { name: 'UTF-16 (little-endian, without a byte-order mark)', head: u16(true, 0) };
  if (b.length >= 4 && !b[0] && b[1] && !b[2] && b[3]) return { name: 'UTF-16 (big-endian, without a byte-order mark)', head: u16(false, 0) };
  return undefined;
}

/** A file read for checking: its text, or the finding that says why it cannot be read. */
export type ReadFile = { kind: 'text'; text: string } | { kind: 'done'; result: FileResult };

/**
 * Reads a file for checking. Only a regular file is read (a FIFO, a device or
 * a socket is an error, never opened for reading in a way that could block),
 * and never more than `maxBytes` + 1 bytes, whatever its size is said to be.
 */
export function readSpecFile(file: string, maxBytes: number, path = file): ReadFile {
  let bytes: Buffer;
  let size: number;
  try {
    const pre = statSync(file);
    if (!pre.isFile()) {
      if (pre.isDirectory()) return { kind: 'done', result: readError(path, 'read-error', 'cannot read the file: EISDIR') };
      return { kind: 'done', result: readError(path, 'read-error', `not read: it is ${specialKind(pre)}, not a regular file`) };
    }
    // Non-blocking: a file swapped for a FIFO after the stat above does not hang the run.
    const fd = openSync(file, constants.O_RDONLY | (constants.O_NONBLOCK ?? 0));
    try {
      const st = fstatSync(fd);
      if (!st.isFile()) return { kind: 'done', result: readError(path, 'read-error', `not read: it is ${specialKind(st)}, not a regular file`) };
      const limit = maxBytes + 1;
      let buf = Buffer.alloc(Math.min(limit, Math.max(st.size, 4096)));
      let got = 0;
      for (;;) {
        if (got === buf.length) {
          if (buf.length >= limit) break;
          const bigger = Buffer.alloc(Math.min(limit, buf.length * 2));
          buf.copy(bigger, 0, 0, got);
          buf = bigger;
        }
        const k = readSync(fd, buf, got, buf.length - got, null);
        if (k === 0) break;
        got += k;
      }
      bytes = buf.subarray(0, got);
      size = Math.max(st.size, got);
    } finally {
      closeSync(fd);
    }
  } catch (err) {
    return { kind: 'done', result: readError(path, 'read-error', `cannot read the file: ${(err as NodeJS.ErrnoException).code ?? (err as Error).message}`) };
  }
  const wide = wideEncoding(bytes);
  if (wide) {
    // A spec saved as UTF-16 or UTF-32 would otherwise pass for a page without front matter.
    if (looksLikeSpec(wide.head)) return { kind: 'done', result: readError(path, 'encoding', `the file is ${wide.name}; specs are read as UTF-8: save it as UTF-8`) };
    return { kind: 'done', result: { path, skipped: true, findings: [] } };
  }
  if (bytes.length > maxBytes) {
    // A large page that is not a spec is skipped like any other page.
    if (!looksLikeSpec(bytes.subarray(0, HEAD_BYTES).toString('latin1'))) return { kind: 'done', result: { path, skipped: true, findings: [] } };
    return { kind: 'done', result: readError(path, 'file-too-large', `file is ${size > maxBytes ? `${size} bytes` : `more than ${maxBytes} bytes`}, above the limit of ${maxBytes} (--max-bytes)`) };
  }
  // The whole file is searched for the key: front matter may be longer than any fixed head.
  if (!looksLikeSpec(bytes.toString('latin1'))) return { kind: 'done', result: { path, skipped: true, findings: [] } };
  try {
    // ignoreBOM keeps a byte-order mark in the text, so that --restate writes it back.
    return { kind: 'text', text: new TextDecoder('utf-8', { fatal: true, ignoreBOM: true }).decode(bytes) };
  } catch {
    return { kind: 'done', result: readError(path, 'encoding', 'the file is not valid UTF-8') };
  }
}

/** Reads and checks one file (the whole result, models included: for tests and embedding). */
export function checkFile(path: string, maxBytes: number, options: CheckOptions = {}): FileResult {
  const read = readSpecFile(path, maxBytes);
  return read.kind === 'done' ? read.result : checkText(path, read.text, options);
}
