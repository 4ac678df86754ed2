// The configuration that governs a document: the nearest polecheck.yaml
// above it (src/config.ts), read from the editor's buffer when the file is
// open there, from disk otherwise. Looked up once per folder and forgotten
// whenever a configuration changes, is created, deleted or renamed.

import { dirname, relative } from 'node:path';
import picomatch from 'picomatch';
import { CONFIG_NAME, type Config, ConfigError, defaultConfig, findConfig, loadConfig, parseConfig } from '../config';

export type Governing = { ok: true; config: Config } | { ok: false; error: ConfigError };

export class Configs {
  /** Folder → the configuration file that governs it (undefined: none). */
  private readonly found = new Map<string, string | undefined>();
  /** Configuration file → what it holds. */
  private readonly loaded = new Map<string, Governing>();

  /** `buffer(path)` gives the text of a configuration open in the editor. */
  constructor(private readonly buffer: (path: string) => string | undefined) {}

  /** Forget everything: a configuration changed, appeared, vanished or moved. */
  reset(): void {
    this.found.clear();
    this.loaded.clear();
  }

  /** The configuration of a file at `path` (absolute). */
  forFile(path: string): Governing {
    const dir = dirname(path);
    if (!this.found.has(dir)) this.found.set(dir, findConfig(dir));
    const file = this.found.get(dir);
    if (!file) return { ok: true, config: defaultConfig(dir) };
    let hit = this.loaded.get(file);
    if (!hit) {
      try {
        const text = this.buffer(file);
        hit = { ok: true, config: text !== undefined ? parseConfig(file, text) : loadConfig(file) };
      } catch (err) {
        if (!(err instanceof ConfigError)) throw err;
        hit = { ok: false, error: err };
      }
      this.loaded.set(file, hit);
    }
    return hit;
  }
}

/** A configuration's `exclude` globs name the file: it is never checked (as on the command line). */
export function excluded(config: Config, path: string): boolean {
  if (!config.exclude.length) return false;
  return picomatch(config.exclude, { dot: true })(relative(config.baseDir, path).split('\\').join('/'));
}

export const isConfigFile = (path: string): boolean => path.endsWith(`/${CONFIG_NAME}`) || path.endsWith(`\\${CONFIG_NAME}`) || path === CONFIG_NAME;
