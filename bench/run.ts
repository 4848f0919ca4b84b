import { readFileSync, writeFileSync } from 'node:fs';
import { buildStageGraph, loadDesign } from '../lib/index.js';
import { generateRegister } from './generate.js';

/**
 * `npm run bench`: measures, in one run, what the goals in docs/PERFORMANCE.md are about,
 * and prints a Markdown table. `npm run bench -- --write` also replaces the measured
 * section of docs/PERFORMANCE.md (between its bench markers) with the new table.
 */

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)] as number;
}

/** Median wall time of `fn` in milliseconds over `runs` runs after one warm-up. */
function time(fn: () => void, runs: number): number {
  fn();
  const samples: number[] = [];
  for (let i = 0; i < runs; i++) {
    const t0 = performance.now();
    fn();
    samples.push(performance.now() - t0);
  }
  return median(samples);
}

const rows: string[] = [];
const sizes = [500, 2000, 8000];
const front: number[] = [];
for (const stages of sizes) {
  const text = generateRegister(stages);
  let parts = 0;
  const load = time(() => {
    const r = loadDesign('generated.tube', text);
    if (!r.ok) throw new Error('generated design has errors');
    parts = r.design!.parts.length;
  }, 7);
  const design = loadDesign('generated.tube', text).design!;
  const graph = time(() => void buildStageGraph(design), 7);
  front.push(load);
  rows.push(`| ${stages.toLocaleString('en')} | ${parts.toLocaleString('en')} | ${(text.length / 1024).toFixed(1)} KiB | ${load.toFixed(1)} ms | ${graph.toFixed(1)} ms |`);
}
const exponent = Math.log((front[2] as number) / (front[0] as number)) / Math.log((sizes[2] as number) / (sizes[0] as number));

const table = [
  `Measured ${new Date().toISOString().slice(0, 10)} on ${process.platform}/${process.arch}, Node ${process.version}, by \`npm run bench\`.`,
  '',
  '| stages | parts | text | parse + expand + validate | stage graph |',
  '|---:|---:|---:|---:|---:|',
  ...rows,
  '',
  `Scaling exponent of parse + expand from ${sizes[0]} to ${sizes[2]} stages: ${exponent.toFixed(2)} (1.00 is linear).`,
].join('\n');

process.stdout.write(table + '\n');

if (process.argv.includes('--write')) {
  const path = new URL('../../docs/PERFORMANCE.md', import.meta.url);
  const doc = readFileSync(path, 'utf8');
  const start = '<!-- bench:front-end:start -->';
  const end = '<!-- bench:front-end:end -->';
  const a = doc.indexOf(start);
  const b = doc.indexOf(end);
  if (a < 0 || b < a) throw new Error('docs/PERFORMANCE.md lacks the bench markers');
  writeFileSync(path, doc.slice(0, a + start.length) + '\n' + table + '\n' + doc.slice(b));
  process.stdout.write('docs/PERFORMANCE.md updated\n');
}
