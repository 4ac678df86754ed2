// Places in a document as the editor counts them: LSP positions are 0-based
// lines and UTF-16 code units, the findings' 1-based lines and columns count
// code units too, in the text without its byte-order mark.

import type { Position, Range } from 'vscode-languageserver';

/** The document's lines (CR, LF and CRLF end a line, as in spec/position.ts). */
export const splitLines = (text: string): string[] => text.split(/\r\n|\r|\n/);

/** An LSP position from a finding's 1-based line and column; a byte-order mark shifts the first line. */
export function toPosition(text: string, line: number, column: number): Position {
  const bom = line === 1 && text.charCodeAt(0) === 0xfeff ? 1 : 0;
  return { line: Math.max(0, line - 1), character: Math.max(0, column - 1 + bom) };
}

/** A finding's 1-based line and column from an LSP position. */
export function fromPosition(text: string, p: Position): { line: number; column: number } {
  const bom = p.line === 0 && text.charCodeAt(0) === 0xfeff ? 1 : 0;
  return { line: p.line + 1, column: p.character + 1 - bom };
}

// What one place names: a key (up to its colon), a value with its unit ("21 MHz", "240 µS ±15%"), a table cell.
const TOKEN = /^["']?[^\s:,{}[\]|#"']+(?:[ \t]+[^\s:,{}[\]|#"']+)*["']?/;

/** The range of the key, value or cell that starts at a finding's line and column (at least one character where the line has one). */
export function tokenRange(text: string, lines: string[], line: number, column: number): Range {
  const start = toPosition(text, line, column);
  const src = lines[start.line] ?? '';
  const at = Math.min(start.character, src.length);
  const m = TOKEN.exec(src.slice(at));
  if (m) return { start: { line: start.line, character: at }, end: { line: start.line, character: at + m[0].length } };
  // Past the end of what was written (`gbw: 7` lacks its unit after the 7): the word before.
  const back = /[^\s:,{}[\]|#]+[ \t]*$/.exec(src.slice(0, at));
  if (back) return { start: { line: start.line, character: at - back[0].length }, end: { line: start.line, character: at } };
  return { start: { line: start.line, character: at }, end: { line: start.line, character: Math.min(src.length, at + 1) } };
}

export const inRange = (p: Position, r: Range): boolean =>
  (p.line > r.start.line || (p.line === r.start.line && p.character >= r.start.character)) && (p.line < r.end.line || (p.line === r.end.line && p.character <= r.end.character));

export const overlaps = (a: Range, b: Range): boolean => !(a.end.line < b.start.line || (a.end.line === b.start.line && a.end.character < b.start.character) || b.end.line < a.start.line || (b.end.line === a.start.line && b.end.character < a.start.character));
