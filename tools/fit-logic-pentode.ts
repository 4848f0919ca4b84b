/**
 * Generator script for the 6AU6 library entry's kg1 and kvb (run: `npm run build && node
 * dist/tools/fit-logic-pentode.js`). The entry is fitted to the bench figure that a small
 * pentode driven hard at 24 V B+ behaves like about 3 kΩ from plate to cathode: with
 * 10 kΩ plate loads (and 22 kΩ / 33 kΩ dividers to −12 V) the ON plate sat at about 5.5 V,
 * with 33 kΩ loads (220 kΩ / 220 kΩ dividers) at 1.7 V measured (common practice, no
 * source). Those figures were taken in cross-coupled latches, so the fit solves those
 * latches: the ON grid is driven as it was on the bench, through the other plate's
 * divider, and clamps a few tenths of a volt above the cathode.
 *
 * mu 36, ex 1.35 and kp 120 are held fixed and the knee kvb kept within 30 V. kg2 is then
 * set so that, at 24 V screen and 0 V grid, the screen takes 0.41 of the plate's full
 * current, the handbook's screen-to-plate ratio (RCA Receiving Tube Manual, from memory). The search is a coarse
 * grid, then finer grids around the best point; it prints the best pair and what it gives.
 * The latches' high levels, set by the grid clamps, are not fitted: they are the check.
 */
import { loadDesign, solveOperatingPoint } from '../lib/index.js';

function onPlate(kg1: number, kvb: number, load: string, series: string, pulldown: string): number {
  const text = `rail bp = 24 V
rail bias = -12 V
type P koren-pentode { mu = 36, ex = 1.35, kg1 = ${kg1}, kg2 = 266, kp = 120, kvb = ${kvb} }
defaults { tube = P }
stage q  { load ${load} to bp; screen bp; input nq series ${series} pulldown ${pulldown} to bias }
stage nq { load ${load} to bp; screen bp; input q  series ${series} pulldown ${pulldown} to bias }`;
  const op = solveOperatingPoint(loadDesign('fit.tube', text).design!, { hints: [{ net: 'q', high: true }] });
  if (!('nodes' in op) || !op.hints[0]?.held) return NaN;
  return op.nodes.get('nq')!;
}

/** The knee is kept where a pentode's is, within a few tens of volts of the cathode. */
const MAX_KVB = 30;

const a = (kg1: number, kvb: number) => onPlate(kg1, kvb, '10 k', '22 k', '33 k');
const b = (kg1: number, kvb: number) => onPlate(kg1, kvb, '33 k', '220 k', '220 k');
const cost = (kg1: number, kvb: number) => {
  const c = (a(kg1, kvb) - 5.5) ** 2 + (b(kg1, kvb) - 1.7) ** 2;
  return Number.isNaN(c) ? Infinity : c;
};
let best = { kg1: 0, kvb: 0, c: Infinity };
for (let kg1 = 50; kg1 <= 4000; kg1 *= 1.15) for (let kvb = 1; kvb <= MAX_KVB; kvb *= 1.15) {
  const c = cost(kg1, kvb);
  if (c < best.c) best = { kg1, kvb, c };
}
for (let i = 0; i < 3; i++) {
  const { kg1: g, kvb: k } = best;
  for (let kg1 = g * 0.9; kg1 <= g * 1.1; kg1 *= 1.01) for (let kvb = k * 0.9; kvb <= Math.min(MAX_KVB, k * 1.1); kvb *= 1.01) {
    const c = cost(kg1, kvb);
    if (c < best.c) best = { kg1, kvb, c };
  }
}
const kg1 = Math.round(best.kg1);
const kvb = Number(best.kvb.toPrecision(3));
// Screen: (0 + 24/mu)^ex / kg2 = 0.41 · (π/2) · 2·E1^ex/kg1, with E1 = (24/kp)·ln(1 + e^(kp/mu)).
const e1 = (24 / 120) * Math.log1p(Math.exp(120 / 36));
const kg2 = Math.round((24 / 36) ** 1.35 / (0.41 * (Math.PI / 2) * ((2 * e1 ** 1.35) / kg1)));
console.log(`kg1 = ${kg1}, kvb = ${kvb}, kg2 = ${kg2}: 10 kΩ latch ON plate ${a(kg1, kvb).toFixed(2)} V, 33 kΩ latch ${b(kg1, kvb).toFixed(2)} V`);
