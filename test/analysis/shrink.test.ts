import { describe, expect, it } from 'vitest';
import { analyzeAt, loadDesign, shrinkFailure } from '../../lib/index.js';
import { checkOf, memoryLoader, netsFiles } from '../helpers.js';

const demo = (file: string) => {
  const files = netsFiles();
  return loadDesign(file, files[file]!, { loader: memoryLoader(files) }).design!;
};

describe('shrinking a failure to the smallest deviations', () => {
  it('finds a failing set for the NOR adder in which every deviation is needed: any one back at nominal, and it passes', () => {
    const adder = demo('nets/nor-adder.tube');
    const r = shrinkFailure(adder, checkOf(adder), { seed: 1, runs: 100 });
    expect(r.found).toBe(true);
    const set = Object.fromEntries(r.deviations.map((d) => [d.id, d.deviation]));
    expect(analyzeAt(adder, set).pass).toBe(false);
    expect(r.failing.length).toBeGreaterThan(0);
    for (const d of r.deviations) expect(analyzeAt(adder, { ...set, [d.id]: 0 }).pass).toBe(true);
  });

  it('leaves every part nominal in analyzeAt when no deviation is given, and the adder passes there', () => {
    expect(analyzeAt(demo('nets/nor-adder.tube'), {}).pass).toBe(true);
  });
});
