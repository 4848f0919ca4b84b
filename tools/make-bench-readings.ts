/**
 * Writes docs/examples/bench-readings.csv: invented bench readings for the README's tour of
 * `tubemargin fit` (a demo of our own, not measurements): three twin-triode sections with
 * perveance factors 0.93, 1.04 and 1.11 about the library's 12AU7 entry, at logic plate
 * voltages, with 1 % reading noise from a fixed seed. Run `npm run build && node
 * dist/tools/make-bench-readings.js > docs/examples/bench-readings.csv`.
 */
import { findLibraryEntry, NOMINAL_VARIATION, tubeCurrents, type TubeModel } from '../lib/index.js';

const entry = findLibraryEntry('12AU7')!;
const model = { ...entry.model, name: 'demo' } as TubeModel;
let seed = 2026;
const uniform = () => (seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648;
const gauss = () => Math.sqrt(-2 * Math.log(1 - uniform())) * Math.cos(2 * Math.PI * uniform());
const lines = [
  '# Invented bench readings for the tour (a demo of our own): three surplus twin-triode',
  '# sections measured at logic voltages; volts against the cathode, plate current in mA.',
  'tube,plate_v,grid_v,plate_ma',
];
for (const [tube, factor] of [
  ['T1', 0.93],
  ['T2', 1.04],
  ['T3', 1.11],
] as const) {
  for (const vak of [12, 18, 24, 36, 48, 60]) {
    for (const vgk of [0, -0.5, -1, -1.5, -2]) {
      const ma = tubeCurrents(model, { vgk, vak }, { ...NOMINAL_VARIATION, perveance: factor }).plate * 1000;
      if (ma < 0.02) continue;
      lines.push(`${tube},${vak},${vgk},${(ma * (1 + 0.01 * gauss())).toFixed(3)}`);
    }
  }
}
process.stdout.write(lines.join('\n') + '\n');
