import { fileURLToPath } from 'node:url';
import { buildStageGraph, loadDesign } from '../lib/index.js';
import { drawDesign } from '../lib/report/drawing.js';
import { generateRegister, generateVariedRegister, VARIED_SEED } from './generate.js';

/** One drawing timed: the stage graph, the layout and the SVG text (the check that colours it is timed by the check rows). */
export interface DrawRow {
  label: string;
  stages: number;
  folded: boolean;
  boxes: number;
  nets: number;
  /** The first drawing in the process, as `show --svg` makes it (elkjs loaded and compiled by the engine on the way). */
  firstMs: number;
  ms: number;
  kib: number;
}

/**
 * Times `show --svg`'s drawing of the 2,000-stage registers, folded and unfolded (issue #19:
 * unfolded within 10 s, folded within 2 s): the median of `runs` runs after one to warm up.
 */
export async function benchDrawing(stages = 2000, runs = 3): Promise<DrawRow[]> {
  const designs = [
    { label: `varied register, seed ${VARIED_SEED}`, text: generateVariedRegister(stages, VARIED_SEED) },
    { label: 'uniform register', text: generateRegister(stages) },
  ];
  const rows: DrawRow[] = [];
  // Unfolded first: its first run is the first layout in the process, with elkjs's loading and warming up in it.
  for (const { label, text } of designs) {
    const design = loadDesign('register.tube', text).design!;
    for (const fold of [false, true]) {
      const once = async () => {
        const t0 = performance.now();
        const drawing = await drawDesign(design, buildStageGraph(design), { fold });
        return { ms: performance.now() - t0, drawing };
      };
      const first = (await once()).ms;
      const timed = [];
      for (let k = 0; k < runs; k++) timed.push(await once());
      timed.sort((a, b) => a.ms - b.ms);
      const mid = timed[Math.floor(runs / 2)]!;
      const stageCount = buildStageGraph(design).nets.filter((n) => n.kind === 'stage').length;
      rows.push({ label, stages: stageCount, folded: fold, boxes: mid.drawing.boxes, nets: mid.drawing.nets, firstMs: first, ms: mid.ms, kib: mid.drawing.svg.length / 1024 });
    }
  }
  return rows;
}

export function drawingTable(rows: DrawRow[], command: string): string {
  return [
    `Measured ${new Date().toISOString().slice(0, 10)} on ${process.platform}/${process.arch}, Node ${process.version}, by \`${command}\`. Each time covers the stage graph, elkjs's layout and the SVG text, not the check that colours the nets. *First* is the first drawing of the design in the process; the very first row's includes loading elkjs (as \`show --svg\` pays it); *again* is the median of 3 more.`,
    '',
    '| design | stages | drawn | boxes | net groups | first | again | SVG |',
    '|---|---:|---|---:|---:|---:|---:|---:|',
    ...rows.map((r) => `| ${r.label} | ${r.stages.toLocaleString('en')} | ${r.folded ? 'folded' : 'unfolded'} | ${r.boxes.toLocaleString('en')} | ${r.nets.toLocaleString('en')} | **${(r.firstMs / 1000).toFixed(2)} s** | ${(r.ms / 1000).toFixed(2)} s | ${r.kib.toFixed(0)} KiB |`),
    '',
    '- Goals (issue #19): unfolded within 10 s, folded within 2 s, at 2,000 stages.',
  ].join('\n');
}

if (process.argv[1] === fileURLToPath(import.meta.url)) process.stdout.write(drawingTable(await benchDrawing(), 'node dist/bench/drawBench.js') + '\n');
