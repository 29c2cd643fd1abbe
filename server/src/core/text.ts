/** Source positions. The core works in UTF-16 offsets (JavaScript string indices); shells convert. */

export interface Span {
  start: number;
  end: number;
}

export interface Position {
  line: number; // 0-based
  character: number; // 0-based UTF-16 column
}

export function span(start: number, end: number): Span {
  return { start, end };
}

export function cover(a: Span, b: Span): Span {
  return { start: Math.min(a.start, b.start), end: Math.max(a.end, b.end) };
}

/** Maps offsets to line/character and back. The line starts are found on first use (a large model that
 * reports nothing never needs them). */
export class LineMap {
  private starts: number[] | undefined;
  constructor(readonly text: string) {}

  get lineStarts(): number[] {
    if (this.starts) return this.starts;
    const text = this.text;
    const starts = [0];
    for (let i = 0; i < text.length; i++) {
      const ch = text.charCodeAt(i);
      if (ch === 10) starts.push(i + 1);
      else if (ch === 13) {
        if (text.charCodeAt(i + 1) === 10) i++;
        starts.push(i + 1);
      }
    }
    this.starts = starts;
    return starts;
  }

  get lineCount(): number {
    return this.lineStarts.length;
  }

  position(offset: number): Position {
    const o = Math.max(0, Math.min(offset, this.text.length));
    const starts = this.lineStarts;
    let lo = 0;
    let hi = starts.length - 1;
    while (lo < hi) {
      const mid = (lo + hi + 1) >> 1;
      if (starts[mid] <= o) lo = mid;
      else hi = mid - 1;
    }
    return { line: lo, character: o - starts[lo] };
  }

  offset(pos: Position): number {
    if (pos.line < 0) return 0;
    if (pos.line >= this.lineStarts.length) return this.text.length;
    const start = this.lineStarts[pos.line];
    const end = this.lineEnd(pos.line);
    return Math.min(start + Math.max(0, pos.character), end);
  }

  /** Offset of the end of a line, before its line break. */
  lineEnd(line: number): number {
    if (line + 1 < this.lineStarts.length) {
      let e = this.lineStarts[line + 1] - 1;
      if (e > 0 && this.text.charCodeAt(e) === 10 && this.text.charCodeAt(e - 1) === 13) e--;
      return e;
    }
    return this.text.length;
  }

  lineText(line: number): string {
    return this.text.slice(this.lineStarts[line], this.lineEnd(line));
  }
}
