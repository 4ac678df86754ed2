// Text → Spec: unified + remark-parse + remark-frontmatter + remark-gfm find
// the front matter (and, later, datasheet tables); js-yaml reads it with
// positions; the schema turns it into a typed Spec.

import remarkFrontmatter from 'remark-frontmatter';
import remarkGfm from 'remark-gfm';
import remarkParse from 'remark-parse';
import { unified } from 'unified';
import type { Finding } from './findings';
import { readSpec } from './spec/schema';
import { LineIndex } from './spec/position';
import { readTables } from './spec/tables';
import type { Spec } from './spec/types';
import { parseYaml } from './spec/yaml';

const processor = unified().use(remarkParse).use(remarkFrontmatter, ['yaml']).use(remarkGfm);

export type ReadResult =
  | { kind: 'skipped' }
  | { kind: 'spec'; spec: Spec | null; findings: Finding[] };

// The key may be quoted, or open a flow mapping (`{"polecheck": 1, …}`).
const SPEC_KEY = /^[ \t{]*["']?polecheck["']?[ \t]*:/m;

const inputError = (rule: string, pos: { line: number; column: number }, message: string, suggestions: string[] = []): Finding => ({
  rule,
  severity: 'error',
  line: pos.line,
  column: pos.column,
  claim: null,
  message,
  suggestions,
});

export function readDocument(path: string, raw: string): ReadResult {
  // A byte-order mark is not part of the text; positions are counted without it.
  // Lone CRs (old Mac line ends) become LFs: same length, so offsets stay put.
  const text = (raw.charCodeAt(0) === 0xfeff ? raw.slice(1) : raw).replace(/\r(?!\n)/g, '\n');
  // Front matter can only open a file; most non-spec pages leave here unparsed.
  if (!text.startsWith('---') || !SPEC_KEY.test(text)) return { kind: 'skipped' };
  const index = new LineIndex(text);
  // Markdown parsing dominates the cost of a check: parse just the front matter
  // (its node is the same as in the whole document's tree), and the whole
  // document only when its body may hold a table.
  const fence = /\n---[ \t]*(?:\n|$)/.exec(text.slice(3));
  const headEnd = fence ? 3 + fence.index + fence[0].length : text.length;
  // A GFM table needs a delimiter row (`| --- | :-: |`); without one the body
  // holds no table and is not parsed (Markdown parsing can be superlinear in
  // pathological text).
  const bodyHasTable = text.indexOf('|', headEnd) >= 0 && /^[ \t]*\|?[ \t]*:?-+:?[ \t]*(\|[ \t]*:?-+:?[ \t]*)*\|?[ \t]*$/m.test(text.slice(headEnd)) && /-[ \t]*\|/.test(text.slice(headEnd));
  let tree: ReturnType<typeof processor.parse>;
  let bodyProblem: Finding | undefined;
  try {
    tree = processor.parse(bodyHasTable ? text : text.slice(0, headEnd));
  } catch (err) {
    // A body nested deeper than the Markdown parser's stack goes: check the
    // front matter alone and say that the body's tables were not read.
    if (!(err instanceof RangeError)) throw err;
    tree = processor.parse(text.slice(0, headEnd));
    bodyProblem = { rule: 'table', severity: 'warning', line: index.pos(headEnd).line, column: 1, claim: null, message: 'the Markdown body is nested too deeply to parse; its datasheet tables were not read', suggestions: [] };
  }
  const yamlNode = tree.children[0]?.type === 'yaml' ? tree.children[0] : undefined;
  if (!yamlNode?.position) {
    // An opening fence with the spec key but no closing fence is a broken spec, not a page.
    if (/^---[ \t]*\r?\n/.test(text) && SPEC_KEY.test(text)) {
      return { kind: 'spec', spec: null, findings: [inputError('front-matter', { line: 1, column: 1 }, 'front matter has no closing `---` fence')] };
    }
    return { kind: 'skipped' };
  }
  const start = yamlNode.position.start.offset ?? 0;
  const end = yamlNode.position.end.offset ?? text.length;
  // Content runs from after the opening fence's line break to the start of the closing fence line.
  const nl = text.indexOf('\n', start);
  const contentStart = nl < 0 || nl > end ? end : nl + 1;
  let contentEnd = text.lastIndexOf('\n', end - 1);
  if (contentEnd < contentStart) contentEnd = contentStart;
  const source = text.slice(contentStart, contentEnd + (contentEnd > contentStart ? 1 : 0));
  if (!SPEC_KEY.test(source)) return { kind: 'skipped' };

  const where = (offset: number) => index.pos(contentStart + offset);
  const parsed = parseYaml(source, where);
  if (!parsed.ok) return { kind: 'spec', spec: null, findings: [inputError('yaml-syntax', parsed.error.pos, parsed.error.message)] };
  if (!parsed.root || parsed.root.kind !== 'map' || !parsed.root.entries.some((e) => e.key === 'polecheck')) return { kind: 'skipped' };
  const { spec, findings } = readSpec(path, parsed.root, index.pos(start));
  if (spec) {
    spec.lines = index;
    const tables = readTables(tree as never, spec.topology);
    spec.claims.push(...tables.claims);
    findings.push(...tables.findings);
    if (bodyProblem) findings.push(bodyProblem);
  }
  return { kind: 'spec', spec, findings };
}
