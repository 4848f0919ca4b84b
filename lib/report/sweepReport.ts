import type { RailSweepResult } from '../analysis/sweep.js';
import type { Design } from '../design/model.js';
import { wrap } from './format.js';
import { figure, named, type Figure } from './figure.js';
import { safetyCautions, sweptLevels } from './safety.js';
import { REPORT_COLUMNS } from './showText.js';
import { append, highest } from '../lists.js';

/** The JSON form of a supply sweep, `tubemargin.sweep/1`. */
export interface SweepJson {
  schema: 'tubemargin.sweep/1';
  title: string;
  heater: number;
  axes: { rail: string; values: number[]; nominal: number }[];
  /** `grid[j][i]`: value i of the first rail, value j of the second. */
  grid: { pass: boolean; failures: number; weakest: string | null; weakestWhy?: string }[][];
  nominalPoint: number[];
  window: ({ rail: string } & Figure<'low'> & Figure<'high'> & Figure<'position'>)[];
  cautions: string[];
}

export function sweepToJson(design: Design, r: RailSweepResult): SweepJson {
  return {
    schema: 'tubemargin.sweep/1',
    title: design.title,
    heater: r.heater,
    axes: r.axes,
    grid: r.grid.map((row) => row.map((p) => ({ pass: p.pass, failures: p.failures, ...named('weakest', p.weakest, p.pass ? 'it passes: no net is short of its margin' : 'no single net to name: the design does not solve at this point, a loop did not settle, or only a rating is exceeded') }))),
    nominalPoint: r.nominalPoint,
    window: r.window.map((w) => {
      const none = 'the nominal point fails, so there is no window around it along this rail';
      return { rail: w.rail, ...figure('low', w.low, none), ...figure('high', w.high, none), ...figure('position', w.position, w.low === undefined ? none : 'the window has no width to place the nominal in') };
    }),
    cautions: safetyCautions(design, sweptLevels(r.axes)),
  };
}

/** Most columns of the character map; a wider sweep is in the JSON only. */
export const MAP_COLUMNS = 60;

const volts = (v: number) => `${Number(v.toPrecision(4))} V`;

/**
 * The text of `tubemargin sweep`: the map (`#` passes, `.` fails, `@` the nominal point
 * when it passes, `!` when it fails), the second rail up the side and the first along
 * the bottom; then the operating window along each rail through the nominal point.
 */
export function renderSweep(design: Design, r: RailSweepResult, source: string): string {
  const out: string[] = [`${design.title || '(untitled design)'} — ${source}`];
  const [a1, a2] = r.axes;
  append(out, wrap(`Worst-case check at every point, heaters at ${Math.round(r.heater * 100)} % of their voltage: # passes, . fails, @ the nominal point (! when it fails).`, REPORT_COLUMNS));
  out.push('');
  const cell = (i: number, j: number) => {
    const p = r.grid[j]![i]!;
    const nominal = i === r.nominalPoint[0] && j === (r.nominalPoint[1] ?? 0);
    return nominal ? (p.pass ? '@' : '!') : p.pass ? '#' : '.';
  };
  if (a1!.values.length > MAP_COLUMNS) out.push(`(${a1!.values.length} columns: too wide to draw; the map is in --json)`);
  else {
    // With two rails the second's values label the rows; with one there is a single row.
    const labels = (a2?.values ?? [NaN]).map((v) => (a2 ? `${volts(v)} ` : ''));
    const width = Math.max(0, highest(labels.map((l) => l.length)));
    for (let j = r.grid.length - 1; j >= 0; j--) out.push(`  ${labels[j]!.padStart(width)}${a1!.values.map((_, i) => cell(i, j)).join('')}`);
    out.push(`  ${' '.repeat(width)}${a1!.rail}: ${volts(a1!.values[0]!)} … ${volts(a1!.values[a1!.values.length - 1]!)}${a2 ? `; up: ${a2.rail}` : ''}`);
  }
  out.push('');
  out.push('Operating window through the nominal point');
  for (const w of r.window) {
    const axis = r.axes.find((a) => a.rail === w.rail)!;
    if (w.low === undefined || w.high === undefined) {
      out.push(`  ${w.rail}: the nominal ${volts(axis.nominal)} fails there`);
      continue;
    }
    const edge = (v: number, last: number) => (v === last ? ' (the end of the sweep)' : '');
    const outside = axis.nominal < axis.values[0]! || axis.nominal > axis.values[axis.values.length - 1]!;
    const where = outside ? `; the nominal ${volts(axis.nominal)} lies outside the sweep` : w.position === undefined ? '' : `; nominal ${volts(axis.nominal)} at ${Math.round(w.position * 100)} % of it`;
    append(out, wrap(`${w.rail}: ${volts(w.low)}${edge(w.low, axis.values[0]!)} to ${volts(w.high)}${edge(w.high, axis.values[axis.values.length - 1]!)}${where}`, REPORT_COLUMNS - 2, '  ').map((l) => '  ' + l));
  }
  const cautions = safetyCautions(design, sweptLevels(r.axes));
  if (cautions.length > 0) out.push('', ...cautions.flatMap((c) => wrap(c, REPORT_COLUMNS)));
  return out.join('\n') + '\n';
}
