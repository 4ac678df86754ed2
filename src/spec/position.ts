/** A place in a file: 1-based line and column, 0-based offset. */
export interface Pos {
  line: number;
  column: number;
  offset: number;
}

/** Maps offsets to lines and columns; CR, LF and CRLF all end a line. */
export class LineIndex {
  private readonly starts: number[] = [0];
  /** Where each line's text ends (before its line break). */
  private readonly ends: number[] = [];

  constructor(text: string) {
    for (let i = 0; i < text.length; i++) {
      const c = text.charCodeAt(i);
      if (c === 10) {
        this.ends.push(i);
        this.starts.push(i + 1);
      } else if (c === 13) {
        this.ends.push(i);
        if (text.charCodeAt(i + 1) === 10) i++;
        this.starts.push(i + 1);
      }
    }
    this.ends.push(text.length);
  }

  /** The place of `offset`, clamped to the text: at most just past the last character of its line. */
  pos(offset: number): Pos {
    offset = Math.max(0, Math.min(Number.isFinite(offset) ? offset : 0, this.ends[this.ends.length - 1]));
    let lo = 0;
    let hi = this.starts.length - 1;
    while (lo < hi) {
      const mid = (lo + hi + 1) >> 1;
      if (this.starts[mid] <= offset) lo = mid;
      else hi = mid - 1;
    }
    offset = Math.min(offset, this.ends[lo]);
    return { line: lo + 1, column: offset - this.starts[lo] + 1, offset };
  }
}
