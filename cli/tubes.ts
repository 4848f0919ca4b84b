import { TUBE_LIBRARY } from '../lib/index.js';
import { table, wrap } from '../lib/report/format.js';
import type { CliIo } from './io.js';
import { EXIT } from './load.js';

export const TUBES_SUMMARY = 'list the tube library: type designations, kinds, ratings, sources';

export function runTubes(options: { json?: boolean }, io: CliIo): number {
  if (options.json) {
    io.stdout(JSON.stringify({ schema: 'tubemargin.tubes/1', tubes: TUBE_LIBRARY }, null, 2) + '\n');
    return EXIT.ok;
  }
  const rows = TUBE_LIBRARY.map((e) => [e.designation, e.model.kind, e.description, `${e.ratings.plateWatts} W`, `${e.trustedPlateVolts[0]}–${e.trustedPlateVolts[1]} V`]);
  io.stdout(table(['type', 'kind', 'what', 'plate max', 'trusted'], rows).join('\n') + '\n');
  io.stdout('\nSources:\n');
  for (const e of TUBE_LIBRARY) {
    const lines = wrap(`${e.designation}: ${e.provenance}${e.caveats ? `. Caveat: ${e.caveats}` : ''}.`, 78, '    ');
    io.stdout(lines.map((l) => `  ${l}\n`).join(''));
  }
  return EXIT.ok;
}
