/** A point in a source file. `line` and `col` are 1-based; `offset` is a 0-based UTF-16 index. */
export interface Position {
  line: number;
  col: number;
  offset: number;
}

/** The stretch of a source file that something came from; `end` is exclusive. */
export interface SourceSpan {
  file: string;
  start: Position;
  end: Position;
}

/**
 * Maps offsets of one text to line/column positions.
 * Built once per file; `at` is a binary search over line starts.
 *
 * Example: `new LineIndex("ab\ncd").at(4)` is `{ line: 2, col: 2, offset: 4 }`.
 */
export class LineIndex {
  private readonly lineStarts: number[] = [0];

  constructor(readonly text: string) {
    for (let i = 0; i < text.length; i++) {
      if (text.charCodeAt(i) === 10) this.lineStarts.push(i + 1);
    }
  }

  at(offset: number): Position {
    const starts = this.lineStarts;
    let lo = 0;
    let hi = starts.length - 1;
    while (lo < hi) {
      const mid = (lo + hi + 1) >> 1;
      if ((starts[mid] as number) <= offset) lo = mid;
      else hi = mid - 1;
    }
    return { line: lo + 1, col: offset - (starts[lo] as number) + 1, offset };
  }

  /** The offset of 1-based `line` and `col` (clamped to the text). */
  offsetOf(line: number, col: number): number {
    const start = this.lineStarts[Math.max(0, Math.min(line, this.lineStarts.length) - 1)] ?? 0;
    return Math.min(this.text.length, start + col - 1);
  }

  span(file: string, start: number, end: number): SourceSpan {
    return { file, start: this.at(start), end: this.at(end) };
  }

  /** The text of 1-based line `line`, without its line break. */
  lineText(line: number): string {
    const start = this.lineStarts[line - 1];
    if (start === undefined) return '';
    const next = this.lineStarts[line];
    let end = next === undefined ? this.text.length : next - 1;
    if (end > start && this.text.charCodeAt(end - 1) === 13) end--;
    return this.text.slice(start, end);
  }
}

/** A span covering `a` through `b` (same file assumed). */
export function joinSpans(a: SourceSpan, b: SourceSpan): SourceSpan {
  return { file: a.file, start: a.start, end: b.end };
}

/** `file:line:col` of a span's start, the form every diagnostic leads with. */
export function formatLocation(span: SourceSpan): string {
  return `${span.file}:${span.start.line}:${span.start.col}`;
}
