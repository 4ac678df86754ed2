// --cache: findings keyed by the content of the file, the configuration and
// the tool's version (not by modification time, which a fresh clone resets).
// One small file per entry, written to a temporary name and renamed, so
// parallel runs never see a half-written entry.

import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, renameSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Finding } from './verdicts/findings';
import type { Sheet } from './report/sheet';

export const DEFAULT_CACHE_DIR = '.polecheck-cache';

export interface CacheEntry {
  skipped: boolean;
  findings: Finding[];
  /** The block's review sheet, for the text report. */
  sheet?: Sheet;
}

export const hashOf = (...parts: string[]): string => {
  const h = createHash('sha256');
  for (const p of parts) h.update(p).update('\u0000');
  return h.digest('hex');
};

export class ResultCache {
  hits = 0;
  misses = 0;
  private made = false;
  constructor(
    readonly dir: string,
    /** Hash of everything besides the file that decides the findings: version, config. */
    readonly salt: string,
  ) {}

  key(content: string): string {
    return hashOf(this.salt, content);
  }

  get(content: string): CacheEntry | undefined {
    try {
      const entry = JSON.parse(readFileSync(join(this.dir, `${this.key(content)}.json`), 'utf8')) as CacheEntry;
      this.hits++;
      return entry;
    } catch {
      this.misses++;
      return undefined;
    }
  }

  set(content: string, entry: CacheEntry): void {
    try {
      if (!this.made) {
        mkdirSync(this.dir, { recursive: true });
        this.made = true;
        // The folder ignores itself in git, so it never lands in a commit.
        if (!existsSync(join(this.dir, '.gitignore'))) writeFileSync(join(this.dir, '.gitignore'), '# written by polecheck --cache\n*\n');
      }
      const file = join(this.dir, `${this.key(content)}.json`);
      const tmp = `${file}.${process.pid}.${Math.random().toString(36).slice(2)}.tmp`;
      writeFileSync(tmp, JSON.stringify(entry));
      renameSync(tmp, file);
    } catch {
      // A cache that cannot be written only costs time.
    }
  }
}
