import { highest } from '../lists.js';

export { formatSI } from '../netlist/units.js';

/** A fraction as a ± percentage: `formatTolerance(0.05)` is "±5 %". */
export function formatTolerance(fraction: number): string {
  return `±${Number((fraction * 100).toPrecision(3))} %`;
}

/** Pads or cuts `text` to `width` columns, marking a cut with '…'. */
export function fit(text: string, width: number): string {
  if (text.length <= width) return text.padEnd(width);
  return text.slice(0, Math.max(0, width - 1)) + '…';
}

/**
 * A plain text table: columns padded to their widest cell (at most `maxWidths`), two spaces
 * apart. A row's last cell may be a list of items, which is cut to the room left in
 * `columns` and ends with "… +N" for what did not fit.
 */
export function table(header: string[], rows: (string | string[])[][], maxWidths: number[] = [], columns = 80): string[] {
  const text = (c: string | string[] | undefined) => (Array.isArray(c) ? c.join(', ') : (c ?? ''));
  const widths = header.map((h, i) => Math.min(maxWidths[i] ?? Infinity, Math.max(h.length, highest(rows.map((r) => text(r[i]).length)))));
  const line = (cells: (string | string[])[]) => {
    let used = 0;
    return cells
      .map((c, i) => {
        if (i < cells.length - 1) {
          used += (widths[i] as number) + 2;
          return fit(text(c), widths[i] as number);
        }
        return Array.isArray(c) ? cutList(c, Math.max(12, columns - used)) : c;
      })
      .join('  ')
      .trimEnd();
  };
  return [line(header), ...rows.map(line)];
}

/** Joins items with commas within `room` columns, ending with "… +N" for the rest; "—" for none. */
export function cutList(items: string[], room: number): string {
  let out = '';
  for (let i = 0; i < items.length; i++) {
    const next = (out ? out + ', ' : '') + items[i];
    const rest = items.length - i - 1;
    const tail = rest > 0 ? `, … +${rest}`.length : 0;
    if (next.length + tail > room) return `${out}${out ? ', ' : ''}… +${items.length - i}`;
    out = next;
  }
  return out || '—';
}

/** Breaks prose into lines of at most `width` columns at spaces; continuation lines are indented by `indent`. */
export function wrap(text: string, width: number, indent = '  '): string[] {
  const lines: string[] = [];
  let line = '';
  for (const word of text.split(/\s+/)) {
    const candidate = line ? `${line} ${word}` : word;
    if (candidate.length > width && line) {
      lines.push(line);
      line = indent + word;
    } else line = candidate;
  }
  if (line) lines.push(line);
  return lines;
}
