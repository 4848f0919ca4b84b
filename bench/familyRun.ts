import { familyDesigns } from './family.js';
import { runFamily } from './familyOracle.js';
const n = Number(process.argv[2] ?? 12);
const interior = Number(process.argv[3] ?? 50);
const r = runFamily(familyDesigns(2026015, n), interior);
for (const c of r.comparisons) {
  for (const l of c.levels) console.log(`${l.design.padEnd(22)} ${l.net.padEnd(4)} ${l.level.padEnd(4)} reported ${l.reported.toFixed(2).padStart(7)} truth ${l.truth.toFixed(2).padStart(7)} pess ${l.pessimism.toFixed(2)}`);
  if (c.latch) console.log(`  latch ${c.latch.design}: reported holds ${c.latch.reported}, truth ${c.latch.truth}`);
}
const { comparisons, ...summary } = r;
console.log(JSON.stringify(summary, null, 1));
