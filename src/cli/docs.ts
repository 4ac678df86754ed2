// Where the rule pages are: rules/ beside the bundle's dist/ or the sources' src/.

import { readFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { RULES } from '../../rules';

export function docsDir(): string {
  // The bundle lives in dist/ (its chunks in dist/chunks/), the sources in src/cli/.
  let dir = dirname(fileURLToPath(import.meta.url));
  for (const name of ['chunks', 'cli']) if (dir.endsWith(`/${name}`) || dir.endsWith(`\\${name}`)) dir = dirname(dir);
  return resolve(dir, '..', 'rules');
}

/** The rule pages by id; a page that cannot be read leaves the rule with its one-line description. */
export function ruleDocs(): Record<string, string> {
  const out: Record<string, string> = {};
  for (const r of RULES) {
    try {
      out[r.id] = readFileSync(join(docsDir(), `${r.id}.md`), 'utf8');
    } catch {
      // the rule keeps its one-line description
    }
  }
  return out;
}
