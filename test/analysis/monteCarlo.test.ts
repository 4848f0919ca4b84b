import { describe, expect, it } from 'vitest';
import { buildRegion, buildStageGraph, findScenario, indexDesign, loadDesign, LocalProblem, regionParameters, SampleDrawer, Sampler, samplingThresholds, summarizeSamples, wilsonInterval, type Distribution, type SamplingSetup } from '../../lib/index.js';
import { checkOf, design, memoryLoader, netsFiles } from '../helpers.js';
import { buttonLatchText } from './oracle.js';

describe('sampled values against closed forms', () => {
  /**
   * A divider of two equal resistors from a 24 V rail: Vout = V·R2/(R1 + R2). With R1, R2
   * independent and alike, E[Vout] = V/2 exactly (by symmetry), and to second order
   * Var[Vout] = V²·σr²/8, σr the resistors' relative standard deviation: tol²/3 for a
   * uniform band, (tol/3)² for a normal one with the tolerance as 3σ. The sample mean and
   * variance must lie within 5 standard errors (n = 20,000) of those.
   */
  for (const [distribution, relVariance] of [
    ['uniform', 0.05 ** 2 / 3],
    ['normal', (0.05 / 3) ** 2],
  ] as [Distribution, number][]) {
    it(`give a divider the mean and variance of the closed form, ${distribution}`, () => {
      const d = design(`rail bp = 24 V
resistor R1 (bp, out) 100 k tol 5 %
resistor R2 (out, gnd) 100 k tol 5 %`);
      // The divider's output as the one target of a region: the solve the Monte Carlo run does, on a small scale.
      const index = indexDesign(d, buildStageGraph(d));
      const region = buildRegion(index, ['out'], [], undefined, Infinity);
      const scenario = findScenario('new')!;
      const parameters = regionParameters(d, region, scenario);
      const problem = new LocalProblem(d, region, scenario);
      const drawer = new SampleDrawer(parameters, distribution, 42);
      const n = 20_000;
      const outs: number[] = [];
      for (let k = 0; k < n; k++) {
        expect(problem.solve(drawer.draw(k))).toBe(true);
        outs.push(problem.volts(problem.target));
      }
      const mean = outs.reduce((a, b) => a + b, 0) / n;
      const variance = outs.reduce((a, b) => a + (b - mean) ** 2, 0) / (n - 1);
      const expected = (24 * 24 * relVariance) / 8;
      expect(Math.abs(mean - 12)).toBeLessThan(5 * Math.sqrt(expected / n));
      expect(Math.abs(variance - expected)).toBeLessThan(5 * expected * Math.sqrt(2 / (n - 1)) + 0.01 * expected);
    });
  }

  it('keep a graded lot out of the sorted-out middle: every resistor at least a fifth of its tolerance from nominal', () => {
    const d = design(`rail bp = 24 V
resistor R1 (bp, out) 100 k tol 5 %
resistor R2 (out, gnd) 47 k tol 10 %`);
    const index = indexDesign(d, buildStageGraph(d));
    const parameters = regionParameters(d, buildRegion(index, ['out'], [], undefined, Infinity), findScenario('new')!);
    const drawer = new SampleDrawer(parameters, 'graded', 9);
    for (let k = 0; k < 2000; k++) {
      const v = drawer.draw(k);
      parameters.forEach((p, i) => {
        if (p.kind !== 'resistor') return;
        const dev = Math.abs(v[i]! - p.nominal) / (p.high - p.nominal);
        expect(dev).toBeGreaterThanOrEqual(0.2 - 1e-12);
        expect(dev).toBeLessThanOrEqual(1 + 1e-12);
      });
    }
  });

  it('draw the same values for a sample whatever was drawn before it', () => {
    const d = design(`rail bp = 24 V tol 5 %
resistor R1 (bp, out) 100 k
resistor R2 (out, gnd) 47 k`);
    const index = indexDesign(d, buildStageGraph(d));
    const parameters = regionParameters(d, buildRegion(index, ['out'], [], undefined, Infinity), findScenario('new')!);
    const a = new SampleDrawer(parameters, 'normal', 5);
    const b = new SampleDrawer(parameters, 'normal', 5);
    for (let k = 0; k < 50; k++) a.draw(k);
    expect([...a.draw(77)]).toEqual([...b.draw(77)]);
  });
});

describe('the Wilson score interval (Wilson 1927)', () => {
  it('matches hand-computed values: 95 of 100 gives 0.8882 to 0.9785', () => {
    const [lo, hi] = wilsonInterval(95, 100);
    expect(lo).toBeCloseTo(0.8882, 4);
    expect(hi).toBeCloseTo(0.9785, 4);
  });
});

describe('Monte Carlo against worst case', () => {
  const demo = (file: string) => {
    const files = netsFiles();
    return loadDesign(file, files[file]!, { loader: memoryLoader(files) }).design!;
  };
  const latch = design(buttonLatchText('6AU6', 'screen bp;', '33 k', '220 k'));

  for (const distribution of ['uniform', 'graded'] as Distribution[]) {
    it(`never puts a net's smallest sampled margin below its worst-case margin, ${distribution} (bounded by the tolerances)`, () => {
      for (const d of [latch, demo('nets/nor-adder.tube')]) {
        const check = checkOf(d);
        const setup: SamplingSetup = { seed: 11, distribution, scenario: 'new', requiredMargin: check.requiredMargin, thresholds: samplingThresholds(check) };
        const sampler = new Sampler(d, setup);
        const result = summarizeSamples(setup, sampler.parameters, Array.from({ length: 300 }, (_, k) => sampler.run(k)));
        for (const n of result.nets) {
          const worst = check.nets.find((x) => x.name === n.net)!;
          const bound = Math.min(worst.margin.high ?? Infinity, worst.margin.low ?? Infinity);
          expect(n.min).toBeGreaterThanOrEqual(bound - 1e-6);
        }
      }
    });
  }
});
