import { parse } from 'csv-parse/sync';
import { error, type Checked, type Diagnostic } from '../source/diagnostic.js';
import { LineIndex, type SourceSpan } from '../source/span.js';
import type { Reading } from './fit.js';

/** The columns a readings file must have, and those it may. */
export const READING_COLUMNS = ['tube', 'plate_v', 'grid_v', 'plate_ma'] as const;
export const OPTIONAL_COLUMNS = ['screen_v', 'screen_ma'] as const;

/**
 * Reads bench readings from CSV text with a header row: `tube,plate_v,grid_v,plate_ma`,
 * pentodes adding `screen_v` and optionally `screen_ma` (volts against the cathode,
 * milliamps). `tube` names the sample, so that several tubes of one type can be fitted
 * together. Lines starting with `#` are comments. Never throws: every bad row or value is a diagnostic at its line and column.
 * A well-kept parser (csv-parse) reads the CSV itself: quoting, separators and line ends
 * are its job.
 */
export function parseReadings(file: string, text: string): Checked<Reading[]> {
  const diagnostics: Diagnostic[] = [];
  const lines = new LineIndex(text);
  const lineText = (n: number) => lines.lineText(n);
  const spanAt = (line: number, field: number): SourceSpan => {
    const row = lineText(line);
    let col = 1;
    for (let f = 0, i = 0; i <= row.length; i++) {
      if (f === field) {
        col = i + 1;
        break;
      }
      if (row[i] === ',') f++;
    }
    const start = lines.at(lines.offsetOf(line, col));
    return { file, start, end: { ...start, col: start.col + 1, offset: start.offset + 1 } };
  };
  let records: { record: Record<string, string>; info: { lines: number } }[];
  try {
    records = parse(text, { columns: (header: string[]) => header.map((h) => h.trim().toLowerCase()), info: true, skip_empty_lines: true, trim: true, comment: '#', relax_column_count: false });
  } catch (e) {
    const line = (e as { lines?: number }).lines ?? 1;
    return { value: [], diagnostics: [error('csv-syntax', `not readable as CSV: ${(e as Error).message}`, spanAt(line, 0))] };
  }
  // The header is the first line that is not a comment.
  let headerLine = 1;
  const lineCount = text.split('\n').length;
  while (headerLine <= lineCount && (lineText(headerLine).trim().startsWith('#') || lineText(headerLine).trim() === '')) headerLine++;
  const header = lineText(headerLine).split(',').map((h) => h.trim().toLowerCase());
  const missing = READING_COLUMNS.filter((c) => !header.includes(c));
  if (missing.length > 0) return { value: [], diagnostics: [error('csv-column', `the header lacks ${missing.join(', ')}: it must name tube, plate_v, grid_v and plate_ma`, spanAt(headerLine, 0))] };
  const readings: Reading[] = [];
  for (const { record, info } of records) {
    const number = (column: string, optional: boolean): number | undefined => {
      const raw = record[column];
      if (raw === undefined || raw === '') {
        if (!optional) diagnostics.push(error('csv-value', `${column} is empty`, spanAt(info.lines, header.indexOf(column))));
        return undefined;
      }
      const v = Number(raw);
      if (!Number.isFinite(v)) {
        diagnostics.push(error('csv-value', `${column} must be a number, not '${raw}'`, spanAt(info.lines, header.indexOf(column))));
        return undefined;
      }
      return v;
    };
    const tube = (record.tube ?? '').trim();
    if (tube === '') diagnostics.push(error('csv-value', 'tube is empty: name the sample each reading is of', spanAt(info.lines, header.indexOf('tube'))));
    const plate = number('plate_v', false);
    const grid = number('grid_v', false);
    const ma = number('plate_ma', false);
    const screen = header.includes('screen_v') ? number('screen_v', true) : undefined;
    const screenMa = header.includes('screen_ma') ? number('screen_ma', true) : undefined;
    if (tube === '' || plate === undefined || grid === undefined || ma === undefined) continue;
    readings.push({ tube, plateVolts: plate, gridVolts: grid, plateAmps: ma / 1000, screenVolts: screen, screenAmps: screenMa === undefined ? undefined : screenMa / 1000 });
  }
  return { value: readings, diagnostics };
}
