import { gateDesigns } from './family.js';
import { runFamily } from './familyOracle.js';
// The gate family against its truth: `node dist/bench/gateRun.js N INTERIOR`.
const r = runFamily(gateDesigns(2026016, Number(process.argv[2] ?? 8)), Number(process.argv[3] ?? 30));
for (const c of r.comparisons) for (const l of c.levels) console.log(`${l.design.padEnd(10)} ${l.net.padEnd(3)} ${l.level.padEnd(4)} reported ${l.reported.toFixed(3).padStart(8)} truth ${l.truth.toFixed(3).padStart(8)} pess ${l.pessimism.toFixed(3)}`);
const { comparisons, ...summary } = r;
console.log(JSON.stringify({ ...summary, optimistic: summary.optimistic.length }, null, 1));
