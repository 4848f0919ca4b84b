import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { buildStageGraph, designToJson, loadDesign, solveOperatingPoint } from '../../lib/index.js';
import { ROOT, demoDesigns, memoryLoader, netsFiles } from '../helpers.js';

/**
 * Every demo design in nets/ is a golden test: `x.tube` beside `x.expected.json`, holding
 * the flat design, its stage graph and its default operating point. Refresh them only on purpose, with
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
      expect(expected).toEqual(fresh);
    });
  }
});
