import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { readDesignFile, type CliIo } from '../../cli/io.js';
import { runCli } from '../../cli/main.js';
import { ROOT } from '../helpers.js';

const DIR = mkdtempSync(join(tmpdir(), 'tubemargin-fit-'));

async function run(args: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const io: CliIo = {
    stdout: (t) => void (out += t),
    stderr: (t) => void (err += t),
    readFile: (p) => (p.startsWith('/') ? readFileSync(p, 'utf8') : readDesignFile(join(ROOT, p))),
    writeFile: (p, t) => writeFileSync(p, t, 'utf8'),
    stdoutIsTTY: false,
    stderrIsTTY: false,
    env: {},
  };
  return { code: await runCli(args, io), out, err };
}

describe('tubemargin fit', () => {
  it('goes from a CSV of bench readings to a design checked with those tubes', async () => {
    const model = join(DIR, 'bench.tube');
    const r = await run(['fit', 'docs/examples/bench-readings.csv', '--kind', 'koren-triode', '-o', model]);
    expect(r.code).toBe(0);
    expect(readFileSync(model, 'utf8')).toMatch(/^# Fitted by tubemargin fit \(koren-triode\)/);
    const design = join(DIR, 'latch.tube');
    writeFileSync(
      design,
      `include "bench.tube"
rail bp = 48 V tol 5 %
rail bias = -24 V tol 5 %
defaults { tube = BENCH, tolerance = 5 %, margin = 1 V }
stage q  { load 100 k to bp; input nq series 330 k pulldown 330 k to bias }
stage nq { load 100 k to bp; input q  series 330 k pulldown 330 k to bias }
`,
    );
    const checked = await run(['check', design, '--json']);
    expect([0, 1]).toContain(checked.code);
    const json = JSON.parse(checked.out);
    expect(json.latches).toHaveLength(1);
  });

  it('writes tubemargin.fit/1 JSON with the model, the factor of each tube and the spread', async () => {
    const json = JSON.parse((await run(['fit', 'docs/examples/bench-readings.csv', '--kind', 'koren-triode', '--json'])).out);
    expect(json.schema).toBe('tubemargin.fit/1');
    expect(json.model.kind).toBe('koren-triode');
    expect(Object.keys(json.perTube)).toEqual(['T1', 'T2', 'T3']);
    expect(json.spread).toBeGreaterThan(0);
    expect(json.trustedPlateVolts).toEqual([12, 60]);
  });

  it('refuses a wrong kind, a bad CSV at its line and column, degenerate readings, and overwriting a file fit did not write', async () => {
    expect((await run(['fit', 'docs/examples/bench-readings.csv', '--kind', 'koren-hexode'])).code).toBe(2);
    const bad = join(DIR, 'bad.csv');
    writeFileSync(bad, 'tube,plate_v,grid_v,plate_ma\nA,100,-2,four\n');
    const r = await run(['fit', bad, '--kind', 'koren-triode']);
    expect(r.code).toBe(2);
    expect(r.err).toContain(`${bad}:2:10: error: plate_ma must be a number, not 'four' [csv-value]`);
    const few = join(DIR, 'few.csv');
    writeFileSync(few, 'tube,plate_v,grid_v,plate_ma\nA,100,-2,4\nA,150,-2,8\n');
    expect((await run(['fit', few, '--kind', 'koren-triode'])).err).toMatch(/no fit: 2 readings for 5 unknowns/);
    const mine = join(DIR, 'notes.tube');
    writeFileSync(mine, '# my own types\n');
    expect((await run(['fit', 'docs/examples/bench-readings.csv', '--kind', 'koren-triode', '-o', mine])).code).toBe(2);
    expect(readFileSync(mine, 'utf8')).toBe('# my own types\n');
  });
});
