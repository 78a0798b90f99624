// Maps UTF-16 offsets to zero-based line and column numbers and back. A line ends at LF, at
// CRLF, or at a lone CR, so positions agree with editors on files from any platform.

export interface LineCol {
  line: number;
  col: number;
}

export class LineIndex {
  /** Offset at which each line starts; lineStarts[0] is always 0. */
  readonly lineStarts: number[];

  constructor(readonly text: string) {
    const starts = [0];
    for (let offset = 0; offset < text.length; offset++) {
      const ch = text.charCodeAt(offset);
      if (ch === 13 /* CR */) {
        if (text.charCodeAt(offset + 1) === 10) offset++;
        starts.push(offset + 1);
      } else if (ch === 10 /* LF */) {
        starts.push(offset + 1);
      }
    }
    this.lineStarts = starts;
  }

  get lineCount(): number {
    return this.lineStarts.length;
  }

  /** Zero-based line and column (UTF-16 units) of an offset; offsets past the end clamp. */
  position(offset: number): LineCol {
    const clamped = Math.max(0, Math.min(offset, this.text.length));
    let lo = 0;
    let hi = this.lineStarts.length - 1;
    while (lo < hi) {
      const mid = (lo + hi + 1) >> 1;
      if (this.lineStarts[mid] <= clamped) lo = mid;
      else hi = mid - 1;
    }
    return { line: lo, col: clamped - this.lineStarts[lo] };
  }

  /** Offset of a zero-based line and column; positions past a line's end clamp to its end. */
  offset(pos: LineCol): number {
    if (pos.line < 0) return 0;
    if (pos.line >= this.lineStarts.length) return this.text.length;
    const start = this.lineStarts[pos.line];
    const end = this.lineEnd(pos.line);
    return Math.min(start + Math.max(0, pos.col), end);
  }

  /** Offset of the end of a line's content, before its line break. */
  lineEnd(line: number): number {
    const next = line + 1 < this.lineStarts.length ? this.lineStarts[line + 1] : this.text.length;
    let end = next;
    if (end > this.lineStarts[line] && this.text.charCodeAt(end - 1) === 10) end--;
    if (end > this.lineStarts[line] && this.text.charCodeAt(end - 1) === 13) end--;
    return end;
  }

  lineText(line: number): string {
    return this.text.slice(this.lineStarts[line], this.lineEnd(line));
  }
}
