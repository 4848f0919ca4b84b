import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { buildStageGraph, designToJson, loadDesign, solveOperatingPoint } from '../../lib/index.js';
import { ROOT, checkOf, demoDesigns, memoryLoader, netsFiles } from '../helpers.js';

/**
 * Every demo design in nets/ is a golden test: `x.tube` beside `x.expected.json`, holding
 * the flat design, its stage graph, its default operating point and what `check` finds
 * (verdict, each net's status, worst levels and margins, each latch's holding, SNM and
 * switching, to the millivolt). Refresh them only on purpose, with
 * `UPDATE_GOLDEN=1 npx vitest run test/nets`, and read the diff before committing.
 */
const UPDATE = process.env.UPDATE_GOLDEN === '1';

describe('golden results of the demo designs', () => {
  for (const file of demoDesigns()) {
    it(`${file} expands to what ${file.replace(/\.tube$/, '.expected.json')} records`, () => {
      const files = netsFiles();
      const r = loadDesign(file, files[file]!, { loader: memoryLoader(files), checkModel: true });
      expect(r.diagnostics).toEqual([]);
      const g = buildStageGraph(r.design!);
      const op = solveOperatingPoint(r.design!, { graph: g });
      if (!('nodes' in op)) throw new Error('no operating point');
      // Voltages to the microvolt: the solver converges far tighter, and this keeps the file stable.
      const nodes = Object.fromEntries([...op.nodes].sort(([a], [b]) => (a < b ? -1 : 1)).map(([n, v]) => [n, Math.round(v * 1e6) / 1e6]));
      const actual = {
        schema: 'tubemargin.golden/1',
        design: designToJson(r.design!),
        graph: {
          loops: g.loops,
          nets: g.nets.map((n) => ({ name: n.name, kind: n.kind, drivers: n.drivers, fanout: n.fanout, feeds: [...new Set(n.receivers.map((x) => x.output ?? x.section))] })),
        },
        operatingPoint: { hints: op.hints.map((h) => `${h.net}=${h.high ? 1 : 0}`), nodes },
        check: checkSummary(r.design!),
      };
      const path = join(ROOT, file.replace(/\.tube$/, '.expected.json'));
      const text = JSON.stringify(actual, null, 1) + '\n';
      if (UPDATE || !existsSync(path)) {
        if (!UPDATE) throw new Error(`${path} is missing: run UPDATE_GOLDEN=1 npx vitest run test/nets`);
        writeFileSync(path, text);
      }
      const expected = JSON.parse(readFileSync(path, 'utf8'));
      const fresh = JSON.parse(text);
      // Voltages within 10 µV (rounding at the last recorded digit may differ); the rest exactly.
      const expectedNodes: Record<string, number> = expected.operatingPoint?.nodes ?? {};
      expect(Object.keys(fresh.operatingPoint.nodes)).toEqual(Object.keys(expectedNodes));
      for (const [net, volts] of Object.entries(fresh.operatingPoint.nodes as Record<string, number>)) expect(Math.abs(volts - expectedNodes[net]!)).toBeLessThanOrEqual(1e-5);
      delete expected.operatingPoint?.nodes;
      delete fresh.operatingPoint.nodes;
      // Check figures within 2 mV (recorded to the millivolt); verdicts and statuses exactly.
      expect(numbersOf(fresh.check).length).toBe(numbersOf(expected.check ?? {}).length);
      numbersOf(fresh.check).forEach((x, i) => expect(Math.abs(x - numbersOf(expected.check)[i]!)).toBeLessThanOrEqual(2e-3));
      expect(JSON.stringify(fresh.check, (_, v) => (typeof v === 'number' ? 0 : v))).toBe(JSON.stringify(expected.check, (_, v) => (typeof v === 'number' ? 0 : v)));
      delete expected.check;
      delete fresh.check;
      expect(expected).toEqual(fresh);
    });
  }
});

const mv = (x: number | undefined) => (x === undefined || !Number.isFinite(x) ? null : Math.round(x * 1000) / 1000);

/** What `check` finds, compactly: the verdict, per net its status, worst levels and margins, per latch its findings. */
function checkSummary(design: Parameters<typeof checkOf>[0]) {
  const r = checkOf(design);
  return {
    verdict: r.verdict,
    nets: Object.fromEntries(r.nets.map((n) => [n.name, [n.status, mv(n.high?.worst), mv(n.low?.worst), mv(n.margin.high), mv(n.margin.low), mv(n.cutoffMargin?.volts)]])),
    latches: r.latches.map((l) => ({ nets: l.nets, holds: l.holds, snm: mv(l.snm.worst), inputs: l.inputs.map((i) => [i.input, i.switches, mv(i.triggerMargin)]) })),
  };
}

/** Every number in a value, in order. */
function numbersOf(value: unknown): number[] {
  if (typeof value === 'number') return [value];
  if (Array.isArray(value)) return value.flatMap(numbersOf);
  if (value && typeof value === 'object') return Object.values(value).flatMap(numbersOf);
  return [];
}
