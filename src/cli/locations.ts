// Where the CI formats say a finding is: relative to the repository's root,
// whatever folder polecheck ran from and however the files were named (a
// hook may pass absolute paths), since GitHub, GitLab and code scanning place
// annotations by the path within the repository. The text and JSON reports
// keep the paths as given.

import { existsSync, realpathSync } from 'node:fs';
import { dirname, isAbsolute, join, relative, resolve } from 'node:path';

/**
 * The repository root: the nearest folder at or above `cwd` holding `.git`
 * (a folder, or the file of a worktree or submodule), which is git's top
 * level, found without running git; `cwd` itself outside a repository.
 */
export function repositoryRoot(cwd: string): string {
  const start = resolve(cwd);
  for (let dir = start; ; ) {
    if (existsSync(join(dir, '.git'))) return dir;
    const up = dirname(dir);
    if (up === dir) return start;
    dir = up;
  }
}

const real = (p: string): string => {
  try {
    return realpathSync(p);
  } catch {
    return p;
  }
};

const inside = (rel: string): boolean => rel !== '' && !rel.startsWith('..') && !isAbsolute(rel);

/**
 * `path` (as given on the command line, relative to `cwd`) relative to
 * `root`, with forward slashes; a file outside the root keeps its absolute
 * path. Paths that reach the repository through a symbolic link are compared
 * by their real paths.
 */
export function repoRelative(path: string, cwd: string, root: string): string {
  const abs = resolve(cwd, path);
  let rel = relative(root, abs);
  if (!inside(rel)) {
    const viaReal = relative(real(root), real(abs));
    if (inside(viaReal)) rel = viaReal;
    else return abs.split('\\').join('/');
  }
  return rel.split('\\').join('/');
}
