import { benchVariedCheck, variedCheckTable, WEAK_NETS } from './checkBench.js';

// The varied register's rows of the check bench alone, without the rest of `npm run bench`:
// `node dist/bench/variedRun.js [SIZES] [WEAK]`, e.g. `500,2000 500`: the sizes to check,
// and the size at which to plant the weak nets (0 for none; the largest size when absent).
// Sizes up to 500 are also held to the straightforward threshold search, as in the bench.
const sizes = (process.argv[2] ?? '500,2000,8000').split(',').map(Number);
const weakAt = Number(process.argv[3] ?? sizes[sizes.length - 1]);
const rows = benchVariedCheck(sizes, 0, 500);
const weak = weakAt > 0 ? benchVariedCheck([weakAt], WEAK_NETS)[0] : undefined;
process.stdout.write(variedCheckTable(rows, weak, ['node dist/bench/variedRun.js', ...process.argv.slice(2)].join(' ')) + '\n');
