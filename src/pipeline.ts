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
  // Markdown parsing dominates the cost of a check, and is superlinear on
  // some hostile text: parse the front matter, and of the body only the
  // datasheet tables a linear line scan finds, every other line blanked to
  // spaces of the same length so that positions stay those of the file.
  const fence = /\n---[ \t]*(?:\n|$)/.exec(text.slice(3));
  const headEnd = fence ? 3 + fence.index + fence[0].length : text.length;
  const body = tableLines(text, headEnd);
  let tree: ReturnType<typeof processor.parse>;
  let bodyProblem: Finding | undefined;
  try {
    tree = processor.parse(body.blocks ? text.slice(0, headEnd) + body.masked : text.slice(0, headEnd));
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
    const tables = readTables(tree as never, spec.topology, text);
    spec.claims.push(...tables.claims);
    findings.push(...tables.findings);
    if (bodyProblem) findings.push(bodyProblem);
    if (body.cut !== undefined) findings.push({ rule: 'table', severity: 'warning', line: index.pos(body.cut).line, column: 1, claim: null, message: `the datasheet tables hold more than ${MAX_TABLE_LINES} lines: the table lines from here on were not read`, suggestions: [] });
    for (const line of body.tooLong) findings.push({ rule: 'table', severity: 'warning', line: index.pos(line).line, column: 1, claim: null, message: `a table line of more than ${MAX_TABLE_LINE} characters: the table was not read`, suggestions: [] });
  }
  return { kind: 'spec', spec, findings };
}

/** The table lines of a document parsed at most: a datasheet's tables hold far fewer. */
export const MAX_TABLE_LINES = 1000;

/** A datasheet table's line is short; a longer one is not parsed (inline Markdown can be superlinear). */
export const MAX_TABLE_LINE = 4000;

/** GFM's delimiter row (`| --- | :-: |`), checked without a pattern that could backtrack. */
function isDelimiterRow(line: string): boolean {
  let cells = 0;
  let i = 0;
  const n = line.length;
  const blank = (c: string) => c === ' ' || c === '\t';
  while (i < n && blank(line[i])) i++;
  if (line[i] === '|') i++;
  while (i < n) {
    while (i < n && blank(line[i])) i++;
    if (i >= n) break;
    if (line[i] === ':') i++;
    let dashes = 0;
    while (line[i] === '-') i++, dashes++;
    if (!dashes) return false;
    if (line[i] === ':') i++;
    while (i < n && blank(line[i])) i++;
    cells++;
    if (i < n) {
      if (line[i] !== '|') return false;
      i++;
    }
  }
  return cells > 0;
}

/**
 * The body (from `from`) with every line that is not part of a table blanked
 * to spaces, line breaks kept: one linear scan. A table is a line with a pipe
 * followed by a delimiter row, and the lines after it up to a blank line,
 * outside fenced code. `blocks` counts the tables; `tooLong` holds the offsets
 * of tables left out for an overlong line; past MAX_TABLE_LINES table lines
 * the rest is left out, from `cut` on.
 */
function tableLines(text: string, from: number): { masked: string; blocks: number; tooLong: number[]; cut?: number } {
  const lines: { start: number; end: number; brk: number }[] = [];
  for (let at = from; at < text.length; ) {
    let nl = text.indexOf('\n', at);
    if (nl < 0) nl = text.length;
    const end = nl > at && text[nl - 1] === '\r' ? nl - 1 : nl;
    lines.push({ start: at, end, brk: nl });
    at = nl + 1;
  }
  const keep = new Uint8Array(lines.length);
  const tooLong: number[] = [];
  let blocks = 0;
  let kept = 0;
  let cut: number | undefined;
  let fenceChar = '';
  let fenceLen = 0;
  const blankLine = (k: number) => text.slice(lines[k].start, lines[k].end).trim() === '';
  for (let k = 0; k < lines.length; k++) {
    const { start, end } = lines[k];
    let i = start;
    while (i < end && i - start < 4 && text[i] === ' ') i++;
    const c = text[i];
    if ((c === '`' || c === '~') && i - start < 4) {
      let j = i;
      while (text[j] === c) j++;
      if (j - i >= 3) {
        if (!fenceChar) (fenceChar = c), (fenceLen = j - i);
        else if (c === fenceChar && j - i >= fenceLen && text.slice(j, end).trim() === '') fenceChar = '';
        continue;
      }
    }
    if (fenceChar || k === 0 || end - start > MAX_TABLE_LINE * 4) continue;
    const prev = lines[k - 1];
    if (keep[k - 1] || !text.slice(prev.start, prev.end).includes('|') || !text.slice(start, end).includes('-')) continue;
    if (end - start > MAX_TABLE_LINE || !isDelimiterRow(text.slice(start, end))) continue;
    let last = k;
    while (last + 1 < lines.length && !blankLine(last + 1)) last++;
    let long = prev.end - prev.start > MAX_TABLE_LINE;
    for (let m = k; m <= last && !long; m++) long = lines[m].end - lines[m].start > MAX_TABLE_LINE;
    if (long) {
      tooLong.push(prev.start);
      k = last;
      continue;
    }
    if (kept + 2 > MAX_TABLE_LINES) {
      cut ??= prev.start;
      k = last;
      continue;
    }
    if (kept + (last - k + 2) > MAX_TABLE_LINES) {
      cut ??= lines[k + MAX_TABLE_LINES - kept - 1].start;
      last = k + MAX_TABLE_LINES - kept - 2;
    }
    blocks++;
    for (let m = k - 1; m <= last; m++) keep[m] = 1;
    kept += last - k + 2;
    k = last;
  }
  let masked = '';
  for (let k = 0; k < lines.length; k++) {
    const { start, end, brk } = lines[k];
    masked += keep[k] ? text.slice(start, brk + 1) : ' '.repeat(end - start) + text.slice(end, brk + 1);
  }
  return { masked, blocks, tooLong, cut };
}
