import { parse } from 'csv-parse/sync';
import { error, type Checked, type Diagnostic } from '../source/diagnostic.js';
import { LineIndex, type SourceSpan } from '../source/span.js';
import type { Reading } from './fit.js';

/** The columns a readings file of plate currents must have, and those it may. */
export const READING_COLUMNS = ['tube', 'plate_v', 'grid_v', 'plate_ma'] as const;
export const OPTIONAL_COLUMNS = ['screen_v', 'screen_ma'] as const;

/**
 * The columns of a file of meter readings taken across a plate load instead (the tube in
 * a stage on the bench, a voltmeter on its plate): the supply and the load give the
 * plate current by Ohm's law. The grid is given as `grid_v`, or as the divider that
 * drives it (`drive_v`, `series_ohms`, `pulldown_ohms` to `bias_v`), whose tap voltage
 * is the grid's while the grid draws no current. `meter_ohms` (optional) is the
 * voltmeter's input resistance, whose current the load also carries.
 */
export const LOAD_COLUMNS = ['tube', 'supply_v', 'load_ohms', 'plate_v'] as const;
export const DIVIDER_COLUMNS = ['drive_v', 'series_ohms', 'pulldown_ohms', 'bias_v'] as const;

/**
 * Reads bench readings from CSV text with a header row, in one of two layouts (volts
 * against the cathode):
 * - plate currents: `tube,plate_v,grid_v,plate_ma`, pentodes adding `screen_v` and
 *   optionally `screen_ma` (milliamps);
 * - meter readings across a plate load: `tube,supply_v,load_ohms,plate_v` with `grid_v`
 *   or the grid's divider `drive_v,series_ohms,pulldown_ohms,bias_v`, and optionally
 *   `meter_ohms` and `screen_v` (`LOAD_COLUMNS`). Each row becomes the plate current
 *   (supply − plate) / load, less the meter's plate / meter_ohms. A divider that would
 *   lift the grid above the cathode is an error at its row: the grid then conducts, and
 *   its voltage is no longer the divider's.
 * `tube` names the sample, so that several tubes of one type can be fitted together.
 * Lines starting with `#` are comments. Never throws: every bad row or value is a
 * diagnostic at its line and column. A well-kept parser (csv-parse) reads the CSV itself:
 * quoting, separators and line ends are its job.
 *
 * Example: the row `A,24,100000,4.0,-1` under `tube,supply_v,load_ohms,plate_v,grid_v`
 * is the reading of tube A at 4 V plate, −1 V grid and 0.2 mA.
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
  const acrossLoad = header.includes('supply_v') || header.includes('load_ohms');
  const byDivider = acrossLoad && !header.includes('grid_v');
  const required = acrossLoad ? [...LOAD_COLUMNS, ...(byDivider ? DIVIDER_COLUMNS : ['grid_v'])] : READING_COLUMNS;
  const missing = required.filter((c) => !header.includes(c));
  if (missing.length > 0) {
    const layout = acrossLoad
      ? 'readings across a plate load need tube, supply_v, load_ohms and plate_v, and grid_v or the divider drive_v, series_ohms, pulldown_ohms and bias_v'
      : 'it must name tube, plate_v, grid_v and plate_ma (or, for readings across a plate load, tube, supply_v, load_ohms, plate_v and grid_v)';
    return { value: [], diagnostics: [error('csv-column', `the header lacks ${missing.join(', ')}: ${layout}`, spanAt(headerLine, 0))] };
  }
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
    const fail: Fail = (column, message) => void diagnostics.push(error('csv-value', message, spanAt(info.lines, header.indexOf(column))));
    const tube = (record.tube ?? '').trim();
    if (tube === '') fail('tube', 'tube is empty: name the sample each reading is of');
    const plate = number('plate_v', false);
    const screen = header.includes('screen_v') ? number('screen_v', true) : undefined;
    const screenMa = header.includes('screen_ma') ? number('screen_ma', true) : undefined;
    const grid = byDivider ? dividerGrid(number, fail) : number('grid_v', false);
    const ma = acrossLoad ? loadCurrent(number, fail, plate) : number('plate_ma', false);
    if (tube === '' || plate === undefined || grid === undefined || ma === undefined) continue;
    readings.push({ tube, plateVolts: plate, gridVolts: grid, plateAmps: ma / 1000, screenVolts: screen, screenAmps: screenMa === undefined ? undefined : screenMa / 1000 });
  }
  return { value: readings, diagnostics };
}

type NumberOf = (column: string, optional: boolean) => number | undefined;
/** Records an error at a column of the row being read. */
type Fail = (column: string, message: string) => void;

/** A positive resistance from its column, or undefined with an error. */
function ohms(number: NumberOf, fail: Fail, column: string, optional = false): number | undefined {
  const r = number(column, optional);
  if (r !== undefined && !(r > 0)) {
    fail(column, `${column} must be above 0 Ω, not ${r}`);
    return undefined;
  }
  return r;
}

/**
 * The plate current (mA) of a reading across a plate load: what the load carries by Ohm's
 * law, (supply − plate) / load, less what the voltmeter across the plate draws.
 */
function loadCurrent(number: NumberOf, fail: Fail, plate: number | undefined): number | undefined {
  const supply = number('supply_v', false);
  const load = ohms(number, fail, 'load_ohms');
  const meter = ohms(number, fail, 'meter_ohms', true);
  if (supply === undefined || load === undefined || plate === undefined) return undefined;
  if (plate > supply) {
    fail('plate_v', `plate_v ${plate} V is above supply_v ${supply} V: a plate load cannot lift the plate above its supply`);
    return undefined;
  }
  return 1000 * ((supply - plate) / load - (meter === undefined ? 0 : plate / meter));
}

/** The grid voltage a divider sets (its open-circuit tap), or undefined with an error where it would lift the grid above the cathode. */
function dividerGrid(number: NumberOf, fail: Fail): number | undefined {
  const drive = number('drive_v', false);
  const series = ohms(number, fail, 'series_ohms');
  const pulldown = ohms(number, fail, 'pulldown_ohms');
  const bias = number('bias_v', false);
  if (drive === undefined || series === undefined || pulldown === undefined || bias === undefined) return undefined;
  const grid = (drive * pulldown + bias * series) / (series + pulldown);
  if (grid > 0) {
    fail('drive_v', `this divider puts the grid at +${grid.toFixed(2)} V: the grid conducts there and its voltage is not the divider's; leave the row out, or measure the grid and give grid_v`);
    return undefined;
  }
  return grid;
}
