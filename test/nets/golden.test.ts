import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { buildStageGraph, designToJson, loadDesign } from '../../lib/index.js';
import { ROOT, demoDesigns, memoryLoader, netsFiles } from '../helpers.js';

/**
 * Every demo design in nets/ is a golden test: `x.tube` beside `x.expected.json`, holding
 * the flat design and its stage graph. Refresh them only on purpose, with
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
      const actual = {
        schema: 'tubemargin.golden/1',
        design: designToJson(r.design!),
        graph: {
          loops: g.loops,
          nets: g.nets.map((n) => ({ name: n.name, kind: n.kind, drivers: n.drivers, fanout: n.fanout, feeds: [...new Set(n.receivers.map((x) => x.output ?? x.section))] })),
        },
      };
      const path = join(ROOT, file.replace(/\.tube$/, '.expected.json'));
      const text = JSON.stringify(actual, null, 1) + '\n';
      if (UPDATE || !existsSync(path)) {
        if (!UPDATE) throw new Error(`${path} is missing: run UPDATE_GOLDEN=1 npx vitest run test/nets`);
        writeFileSync(path, text);
      }
      expect(JSON.parse(readFileSync(path, 'utf8'))).toEqual(JSON.parse(text));
    });
  }
});
