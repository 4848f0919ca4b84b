import { TUBE_LIBRARY } from '../lib/index.js';
import { STANDARD_LATCH, standardLatch, type LatchLevels } from '../lib/analysis/standardLatch.js';
import { table, wrap } from '../lib/report/format.js';
import type { CliIo } from './io.js';
import { EXIT } from './load.js';

export const TUBES_SUMMARY = 'list the tube library: types, kinds, ratings, sources, levels in a standard latch';

export function runTubes(options: { json?: boolean }, io: CliIo): number {
  const latches = TUBE_LIBRARY.map(standardLatch);
  if (options.json) {
    io.stdout(JSON.stringify({ schema: 'tubemargin.tubes/1', tubes: TUBE_LIBRARY.map((e, i) => ({ ...e, standardLatch: latches[i] ?? null })) }, null, 2) + '\n');
    return EXIT.ok;
  }
  const rows = TUBE_LIBRARY.map((e) => [e.designation, e.model.kind, e.description, `${e.ratings.plateWatts} W`, `${e.trustedPlateVolts[0]}–${e.trustedPlateVolts[1]} V`]);
  io.stdout(table(['type', 'kind', 'what', 'plate max', 'trusted'], rows).join('\n') + '\n');
  const { bplus, bias, triode, pentode } = STANDARD_LATCH;
  const k = (ohms: number) => `${ohms / 1000} k`;
  io.stdout(
    '\n' +
      wrap(
        `At logic voltages: a standard latch at ${bplus} V B+ and ${bias} V bias (triodes: ${k(triode.load)} loads, ${k(triode.series)} / ${k(triode.pulldown)} dividers; pentodes: ${k(pentode.load)}, ${k(pentode.series)} / ${k(pentode.pulldown)}, screen at B+), its plates high / low with both tubes at the weak end of the spread, nominal, and the strong end. * marks a level outside the plate voltages the type is trusted over; "no latch": its two sides settle together.`,
        80,
        '',
      ).join('\n') +
      '\n',
  );
  const cell = (l: LatchLevels | undefined, trusted: [number, number]) => {
    if (!l) return 'no latch';
    const mark = (v: number) => `${v.toFixed(1)}${v < trusted[0] || v > trusted[1] ? '*' : ''}`;
    return `${mark(l.high)} / ${mark(l.low)}`;
  };
  const latchRows = TUBE_LIBRARY.map((e, i) => {
    const f = latches[i];
    return [e.designation, `${e.trustedPlateVolts[0]}–${e.trustedPlateVolts[1]} V`, cell(f?.weak, e.trustedPlateVolts), cell(f?.nominal, e.trustedPlateVolts), cell(f?.strong, e.trustedPlateVolts)];
  });
  io.stdout('\n' + table(['type', 'trusted', 'weak (V)', 'nominal (V)', 'strong (V)'], latchRows).join('\n') + '\n');
  io.stdout('\nSources:\n');
  for (const e of TUBE_LIBRARY) {
    const lines = wrap(`${e.designation}: ${e.provenance}${e.caveats ? `. Caveat: ${e.caveats}` : ''}.`, 78, '    ');
    io.stdout(lines.map((l) => `  ${l}\n`).join(''));
  }
  return EXIT.ok;
}
