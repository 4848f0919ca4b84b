import { describe, expect, it } from 'vitest';
import { E_SERIES, loadDesign, tuneStage } from '../../lib/index.js';
import { runCommand as run } from '../cliRun.js';
import { memoryLoader, netsFiles } from '../helpers.js';

const adder = () => {
  const files = netsFiles();
  return loadDesign('nets/nor-adder.tube', files['nets/nor-adder.tube']!, { loader: memoryLoader(files) }).design!;
};

/** Whether a value is in an IEC 60063 series (some decade of it). */
const inSeries = (v: number, s: readonly number[]) => s.some((m) => Math.abs(v / 10 ** Math.floor(Math.log10(v)) - m) < 1e-9);

describe('choosing a stage\'s resistors', () => {
  it('finds E12 values that give the adder\'s weakest stage more slack than it has, within the limits', () => {
    const r = tuneStage(adder(), { stage: 'y2', series: 'E12' });
    if (!('best' in r)) throw new Error('no tune');
    const best = r.best[0]!;
    expect(best.withinLimits).toBe(true);
    expect(best.slack).toBeGreaterThan(r.present.slack + 0.5);
    for (const c of r.best) for (const v of [c.load, c.series, c.pulldown]) expect(inSeries(v, E_SERIES.E12), String(v)).toBe(true);
  });

  it('refuses a net that is not a stage written with `stage`', () => {
    const r = tuneStage(adder(), { stage: 'a', series: 'E12' });
    expect('diagnostics' in r && r.diagnostics.map((d) => d.code)).toEqual(['tune-stage']);
  });

  it('prints the present choice and the best ones within 80 columns', async () => {
    const r = await run(['tune', 'nets/nor-adder.tube', '--stage', 'y2']);
    expect(r.out).toMatch(/\n {2}now +33 kΩ +220 kΩ +220 kΩ/);
    expect(r.out).toMatch(/\n {2}1\. +\d/);
    for (const line of r.out.split('\n')) expect(line.length, line).toBeLessThanOrEqual(80);
    expect((await run(['tune', 'nets/nor-adder.tube', '--stage', 'y2', '--series', 'E7'])).code).toBe(2);
  });

  it('gives the same choices as tubemargin.tune/1 JSON, and heads every column of the table (issue #17)', async () => {
    const text = await run(['tune', 'nets/nor-adder.tube', '--stage', 'y2', '--series', 'E6']);
    const json = await run(['tune', 'nets/nor-adder.tube', '--stage', 'y2', '--series', 'E6', '--json']);
    expect(json.code).toBe(text.code);
    const doc = JSON.parse(json.out);
    expect(doc.schema).toBe('tubemargin.tune/1');
    expect(doc.stage).toBe('y2');
    expect(doc.present).toMatchObject({ load: 33e3, series: 220e3, pulldown: 220e3 });
    // Each row of the table is a choice of the JSON, in the same order, with the same outcome word.
    const rows = text.out.split('\n').filter((l) => /^ {2}(now|\d\.) /.test(l));
    const choices = [doc.present, ...doc.best];
    expect(rows.length).toBe(choices.length);
    rows.forEach((row, i) => {
      expect(row.trimEnd().endsWith(choices[i].outcome), row).toBe(true);
      expect(row).toContain(choices[i].slack.toFixed(2));
    });
    expect(text.out).toMatch(/load P +outcome\n/);
  });
});
