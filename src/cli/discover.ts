// Which files to check and their text: folder walks, the configuration's
// globs, --changed, --shard, and reading a file within the size limit.

import { closeSync, openSync, readFileSync, readSync, readdirSync, realpathSync, statSync } from 'node:fs';
import { createRequire } from 'node:module';
import { join, relative, resolve } from 'node:path';
import picomatch from 'picomatch';
import { type CheckOptions, type FileResult, checkText } from '../check';
import type { Config } from '../config';
import { type Options, UsageError, existsPath } from './args';

const SKIP_DIRS = new Set(['node_modules', '.git']);

/**
 * Expands paths to Markdown files, in a stable order; folders are searched
 * recursively. Paths are shown as given and read relative to `cwd`.
 */
export function discover(paths: string[], cwd = process.cwd()): string[] {
  const out: string[] = [];
  const seen = new Set<string>();
  const walk = (shown: string): void => {
    const dir = resolve(cwd, shown);
    let real: string;
    try {
      real = realpathSync(dir);
    } catch {
      return;
    }
    if (seen.has(real)) return; // symlink loops
    seen.add(real);
    let names: string[];
    try {
      names = readdirSync(dir).sort();
    } catch {
      out.push(shown); // reported as unreadable when read
      return;
    }
    for (const name of names) {
      const shownChild = shown.endsWith('/') ? shown + name : `${shown}/${name}`;
      let st;
      try {
        st = statSync(join(dir, name));
      } catch {
        continue; // a dangling link
      }
      if (st.isDirectory()) {
        if (!SKIP_DIRS.has(name)) walk(shownChild);
      } else if (name.endsWith('.md')) out.push(shownChild);
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
  return [...new Set(out)];
}

/** The files to check: discovery, the config's include/exclude, --changed, --shard. */
export function selectFiles(o: Options, config: Config, cwd: string): string[] {
  const named = o.paths.length ? o.paths : ['.'];
  let files = discover(named, cwd);
  const explicit = new Set(named.filter((p) => existsPath(resolve(cwd, p)) && !statSync(resolve(cwd, p)).isDirectory()));
  const rel = (f: string) => relative(config.baseDir, resolve(cwd, f)).split('\\').join('/');
  const included = config.include.length ? picomatch(config.include, { dot: true }) : () => true;
  const excluded = config.exclude.length ? picomatch(config.exclude, { dot: true }) : () => false;
  // A file named on the command line is checked unless excluded; found files must also be included.
  files = files.filter((f) => !excluded(rel(f)) && (explicit.has(f) || included(rel(f))));
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
const SPEC_HEAD = /^---[ \t]*(\r\n|\r|\n)[\s\S]*?^[ \t{]*["']?polecheck["']?[ \t]*:/m;

/** Whether the start of a file could be a spec: front matter with the `polecheck` key. */
function looksLikeSpec(head: Buffer): boolean {
  const bom = head[0] === 0xef && head[1] === 0xbb && head[2] === 0xbf;
  return SPEC_HEAD.test((bom ? head.subarray(3) : head).toString('latin1'));
}

/** A file read for checking: its text, or the finding that says why it cannot be read. */
export type ReadFile = { kind: 'text'; text: string } | { kind: 'done'; result: FileResult };

export function readSpecFile(file: string, maxBytes: number, path = file): ReadFile {
  let bytes: Buffer;
  try {
    const size = statSync(file).size;
    if (size > maxBytes) {
      // A large page that is not a spec is skipped like any other page.
      const head = Buffer.alloc(Math.min(HEAD_BYTES, size));
      const fd = openSync(file, 'r');
      try {
        readSync(fd, head, 0, head.length, 0);
      } finally {
        closeSync(fd);
      }
      if (!looksLikeSpec(head)) return { kind: 'done', result: { path, skipped: true, findings: [] } };
      return { kind: 'done', result: readError(path, 'file-too-large', `file is ${size} bytes, above the limit of ${maxBytes} (--max-bytes)`) };
    }
    bytes = readFileSync(file);
  } catch (err) {
    return { kind: 'done', result: readError(path, 'read-error', `cannot read the file: ${(err as NodeJS.ErrnoException).code ?? (err as Error).message}`) };
  }
  // A spec saved as UTF-16 would otherwise pass for a page without front matter.
  const utf16 = (bytes[0] === 0xff && bytes[1] === 0xfe) || (bytes[0] === 0xfe && bytes[1] === 0xff);
  if (utf16) {
    const le = bytes[0] === 0xff;
    const body = le ? bytes.subarray(2) : Buffer.from(bytes.subarray(2)).swap16();
    if (looksLikeSpec(Buffer.from(body.toString('utf16le').slice(0, HEAD_BYTES), 'utf8'))) {
      return { kind: 'done', result: readError(path, 'encoding', `the file is UTF-16 (${le ? 'little' : 'big'}-endian); specs are read as UTF-8: save it as UTF-8`) };
    }
    return { kind: 'done', result: { path, skipped: true, findings: [] } };
  }
  if (!looksLikeSpec(bytes.subarray(0, HEAD_BYTES))) return { kind: 'done', result: { path, skipped: true, findings: [] } };
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
