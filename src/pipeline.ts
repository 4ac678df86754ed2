// Text → Spec: the front matter found by its fences, js-yaml reading it with
// positions, the schema turning it into a typed Spec; unified + remark-parse +
// remark-gfm reading the body's datasheet tables (and only those lines).

import remarkGfm from 'remark-gfm';
import remarkParse from 'remark-parse';
import { unified } from 'unified';
import type { Finding } from './verdicts/findings';
import { readSpec } from './spec/schema';
import { LineIndex } from './spec/position';
import { readTables } from './spec/tables';
import type { Spec } from './spec/types';
import { parseYaml } from './spec/yaml';

const processor = unified().use(remarkParse).use(remarkGfm);

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
  // The front matter is found by its fences (an opening `---` line, the next
  // `---` line closes it), as remark-frontmatter finds it. Markdown parsing
  // dominates the cost of a check and is superlinear on some hostile text: of
  // the body only the datasheet tables a linear line scan finds are parsed.
  const open = /^---[ \t]*\r?\n/.exec(text);
  const close = open ? /\n---[ \t]*\r?(?:\n|$)/.exec(text.slice(open[0].length - 1)) : null;
  if (!open || !close) {
    // An opening fence with the spec key but no closing fence is a broken spec, not a page.
    if (open && SPEC_KEY.test(text)) {
      return { kind: 'spec', spec: null, findings: [inputError('front-matter', { line: 1, column: 1 }, 'front matter has no closing `---` fence')] };
    }
    return { kind: 'skipped' };
  }
  const closeLine = open[0].length - 1 + close.index + 1;
  const headEnd = closeLine + close[0].length - 1;
  const body = tableLines(text, headEnd);
  // Each table is parsed on its own (blank lines cost the parser too), its
  // positions shifted to the file's.
  const tree: { children: unknown[] } = { children: [] };
  let bodyProblem: Finding | undefined;
  for (const [from, to] of body.blocks) {
    try {
      const at = index.pos(from);
      const part = processor.parse(text.slice(from, to));
      shiftPositions(part, from, at.line - 1);
      tree.children.push(...part.children);
    } catch (err) {
      // A table nested deeper than the Markdown parser's stack goes: say that it was not read.
      if (!(err instanceof RangeError)) throw err;
      bodyProblem ??= { rule: 'table', severity: 'warning', line: index.pos(from).line, column: 1, claim: null, message: 'a table is nested too deeply to parse; it was not read', suggestions: [] };
    }
  }
  const start = 0;
  const end = closeLine + 3;
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
export const MAX_TABLE_LINES = 200;

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
 * The body's tables (from `from`), as offset ranges of whole lines: one linear scan. A table is a line with a pipe
 * followed by a delimiter row, and the lines after it up to a blank line,
 * outside fenced code and HTML comments. `blocks` counts the tables; `tooLong` holds the offsets
 * of tables left out for an overlong line; past MAX_TABLE_LINES table lines
 * the rest is left out, from `cut` on.
 */
function tableLines(text: string, from: number): { blocks: Array<[number, number]>; tooLong: number[]; cut?: number } {
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
  const blocks: Array<[number, number]> = [];
  let kept = 0;
  let cut: number | undefined;
  let fenceChar = '';
  let fenceLen = 0;
  let inComment = false;
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
    // An HTML comment block (a table commented out) runs to the line that closes it.
    if (inComment) {
      if (text.slice(start, end).includes('-->')) inComment = false;
      continue;
    }
    if (!fenceChar && text.startsWith('<!--', i) && i - start < 4) {
      inComment = !text.slice(i + 4, end).includes('-->');
      continue;
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
    blocks.push([prev.start, lines[last].brk]);
    for (let m = k - 1; m <= last; m++) keep[m] = 1;
    kept += last - k + 2;
    k = last;
  }
  return { blocks, tooLong, cut };
}

interface Positioned {
  position?: { start: { line: number; offset?: number }; end: { line: number; offset?: number } };
  children?: Positioned[];
}

/** Moves a parsed fragment's positions to where it stands in the file (whole lines: columns stay). */
function shiftPositions(node: Positioned, offset: number, lines: number): void {
  const stack: Positioned[] = [node];
  while (stack.length) {
    const n = stack.pop()!;
    if (n.position) {
      for (const p of [n.position.start, n.position.end]) {
        p.line += lines;
        if (p.offset !== undefined) p.offset += offset;
      }
    }
    if (n.children) stack.push(...n.children);
  }
}
