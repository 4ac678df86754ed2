// Reads a rule page (rules/<id>.md) with remark: its headings and its fenced
// example blocks (```markdown example=failing|passing).

import { readFileSync } from 'node:fs';
import remarkParse from 'remark-parse';
import { unified } from 'unified';

export interface Example {
  kind: 'failing' | 'passing';
  text: string;
  /** Line of the opening fence in the page. */
  line: number;
  /** The paragraph after the block, if the next node is one (what the tool reports). */
  after?: string;
}

export interface RulePage {
  title?: string;
  /** The first paragraph after the title. */
  summary?: string;
  /** Level-2 headings in order. */
  sections: string[];
  examples: Example[];
  /** Code blocks whose info string names an example kind this reader does not know. */
  malformed: string[];
}

interface Node {
  type: string;
  depth?: number;
  lang?: string | null;
  meta?: string | null;
  value?: string;
  children?: Node[];
  position?: { start: { line: number } };
}

const textOf = (n: Node): string => (n.value ?? '') + (n.children ?? []).map(textOf).join('');

export function readRulePage(path: string): RulePage {
  const tree = unified().use(remarkParse).parse(readFileSync(path, 'utf8')) as unknown as Node;
  const nodes = tree.children ?? [];
  const page: RulePage = { sections: [], examples: [], malformed: [] };
  nodes.forEach((n, i) => {
    if (n.type === 'heading' && n.depth === 1 && page.title === undefined) {
      page.title = textOf(n);
      const next = nodes[i + 1];
      if (next?.type === 'paragraph') page.summary = textOf(next);
    } else if (n.type === 'heading' && n.depth === 2) {
      page.sections.push(textOf(n));
    } else if (n.type === 'code') {
      const m = /(?:^|\s)example=(\S+)/.exec(n.meta ?? '');
      if (!m) return;
      if (n.lang !== 'markdown' || (m[1] !== 'failing' && m[1] !== 'passing')) {
        page.malformed.push(`${n.lang ?? ''} ${n.meta ?? ''}`.trim());
        return;
      }
      const next = nodes[i + 1];
      page.examples.push({
        kind: m[1],
        text: n.value ?? '',
        line: n.position?.start.line ?? 0,
        ...(next?.type === 'paragraph' ? { after: textOf(next) } : {}),
      });
    }
  });
  return page;
}
