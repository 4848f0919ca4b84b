import { highest } from '../lists.js';
import { formatSI } from '../netlist/units.js';

export { formatSI };

/** Escapes text for HTML and SVG content and attribute values. */
export function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

/**
 * A current or power a builder could read on the bench: below a pico-unit it shows as 0, so
 * a cut-off section reads 0 A and 0 W alike (its plate current times its plate voltage once
 * showed '1.43 fW' beside '0 A').
 */
export function formatReading(value: number, unit: string): string {
  return formatSI(Math.abs(value) < 1e-12 ? 0 : value, unit);
}

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

/**
 * A number and the unit after it ("2.01 V", "220 kΩ", "-12 V", "12 %"), matched up to the
 * space between them. The number stands alone (not the end of a name such as `V1`) and the
 * unit is a whole word: an SI unit the reports print, with an optional SI prefix, or `%`.
 */
const NUMBER_THEN_UNIT = /(?<![\p{L}\p{N}_.])([-+±−]?\d+(?:\.\d+)?(?:e[-+]?\d+)?) (?=(?:[fpnuµμmkMG]?(?:V|A|W|Ω|F|s|Hz)|%)(?![\p{L}\p{N}]))/gu;

/** Holds a number to its unit while lines are broken; printed as a plain space again. */
const GLUE = '\u00a0';

/**
 * Breaks prose into lines of at most `width` columns at spaces; continuation lines are
 * indented by `indent`. Any run of white space counts as one space, and a number is never
 * parted from its unit: "99.0 %" moves to the next line whole. A word longer than the
 * width stands on a line of its own. Only where lines break does the text differ from the
 * input with its white space squeezed: the glue is printed as the plain space it was, so
 * copied or searched output reads as before.
 *
 * Example: `wrap('yield 99.2 %, interval 99.0 % to 99.3 %', 27)` is
 * `['yield 99.2 %, interval', '  99.0 % to 99.3 %']`.
 *
 * We keep this loop rather than wrap-ansi: colour is added by cli/ after wrapping, so no
 * escape codes reach it; wrap-ansi has no continuation indent (it would take two passes);
 * it NFC-normalises the text (a user's U+2126 OHM SIGN would print as U+03A9); and its
 * string-width loads emoji-regex and builds an Intl.Segmenter at import, about 30 ms on
 * every command's start (`--version` 263 → 295 ms, median of 15), against issue #16's goal.
 */
export function wrap(text: string, width: number, indent = '  '): string[] {
  const lines: string[] = [];
  let line = '';
  // Our own NBSP is the only one left: any the text had is white space like the rest, as it always was.
  for (const word of text.split(/\s+/).join(' ').replace(NUMBER_THEN_UNIT, `$1${GLUE}`).split(' ')) {
    const candidate = line ? `${line} ${word}` : word;
    if (candidate.length > width && line) {
      lines.push(line);
      line = indent + word;
    } else line = candidate;
  }
  if (line) lines.push(line);
  return lines.map((l) => l.replaceAll(GLUE, ' '));
}
