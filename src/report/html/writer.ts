// `polecheck report --html DIR`: each checked file becomes its page's data
// (JSON, made in the thread that checked it, while the models are at hand);
// once every file is checked, the pages are laid out and written to DIR with
// the index. The plotting library is loaded by `ready()`, never by `check`.

import { mkdirSync, renameSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { FileResult } from '../../check';
import { blockHtml, indexHtml } from './page';
import { type BlockPage, pageData, pageName } from './page-data';
import { Plotter } from './plots';

let plotter: Plotter | undefined;

/** Loads the plotting library and its DOM (once). */
export async function ready(): Promise<void> {
  plotter ??= new Plotter(await import('./libs'));
}

/** One file's page data as JSON ('' for a file that is not a spec): what crosses from a worker thread. */
export function htmlSection(r: FileResult): string {
  const d = pageData(r);
  return d ? JSON.stringify(d) : '';
}

export interface Site {
  /** File name → HTML text, index.html first. */
  files: Map<string, string>;
  pages: BlockPage[];
}

/** The pages of the sections (in the order the files were given), and the index. */
export function renderSite(sections: string[]): Site {
  if (!plotter) throw new Error('the HTML writer was not loaded (call ready() first)');
  const taken = new Set<string>();
  const pages: BlockPage[] = sections.filter(Boolean).map((s) => {
    const d = JSON.parse(s) as Omit<BlockPage, 'file'>;
    return { ...d, file: pageName(d.block, taken) };
  });
  const files = new Map<string, string>([['index.html', indexHtml(pages)]]);
  for (const p of pages) files.set(p.file, blockHtml(p, plotter));
  return { files, pages };
}

/** Writes the site into `dir` (created if need be), each file through a temporary name. */
export function writeSite(dir: string, site: Site): void {
  mkdirSync(dir, { recursive: true });
  for (const [name, text] of site.files) {
    const path = join(dir, name);
    const tmp = `${path}.${process.pid}.tmp`;
    writeFileSync(tmp, text);
    renameSync(tmp, path);
  }
}
