import { describe, expect, it } from 'vitest';
import { generateVariedRegister, VARIED_SEED } from '../../bench/generate.js';
import { straightforwardDifference } from '../../bench/checkBench.js';
import { AGEING_SCENARIOS, buildStageGraph, checkMargins, loadDesign, WholeDesign } from '../../lib/index.js';
import { drawSample } from '../../lib/analysis/monteCarlo.js';

/** The varied register of the bench (issue #16), loaded, with its stage graph and its check. */
function checked(stages: number) {
  const design = loadDesign('varied.tube', generateVariedRegister(stages, VARIED_SEED)).design!;
  const graph = buildStageGraph(design);
  const check = checkMargins(design, { graph });
  if (!('verdict' in check)) throw new Error('the varied register does not compile');
  return { design, graph, check };
}

describe('check of the varied register against the straightforward path and the whole circuit', () => {
  it('gives every receiving input the thresholds of the straightforward search (every part tried, every corner tried swept whole, nothing shared) within 1 mV, at 200 stages', () => {
    // Oracle: the same unity-gain thresholds (Hodges and Jackson) searched with none of
    // check's shortcuts: the partial sweeps of a trial corner, the flat stretch passed on
    // few points, the parts never tried because they cannot move the curve, and the
    // sharing between alike receivers.
    const { design, graph, check } = checked(200);
    const d = straightforwardDifference(design, graph, check);
    expect(d.missing).toBe(0);
    expect(d.compared).toBeGreaterThan(200);
    expect(d.largest).toBeLessThan(1e-3);
  }, 300_000);

  it('bounds every net: whole-circuit solves at random corners and random values inside the bands never land beyond a worst level, at 60 stages', () => {
    // Oracle: the whole design solved (Newton on the full circuit, from its start state)
    // at 40 random corners of every toleranced part, rail and section, and 40 draws
    // uniform inside the bands: a level check calls worst must be the worst of all of them.
    const { design, graph, check } = checked(60);
    expect(check.verdict).toBe('pass');
    const w = new WholeDesign(design, graph, AGEING_SCENARIOS[0]!);
    const start = w.state([])!;
    expect(start).toBeDefined();
    expect(w.problem.solveFrom(w.nominal, start)).toBe(true);
    const startVolts = new Map(check.nets.map((n) => [n.name, w.problem.volts(w.terminal(n.name))]));
    let solved = 0;
    let optimistic = 0;
    for (let k = 0; k < 80; k++) {
      const values = drawSample(w.parameters, 'uniform', 16, k);
      if (k < 40) w.parameters.forEach((p, i) => (values[i] = values[i]! < (p.low + p.high) / 2 ? p.low : p.high));
      expect(w.problem.solveFrom(values, start), `sample ${k}`).toBe(true);
      solved++;
      for (const n of check.nets) {
        const v = w.problem.volts(w.terminal(n.name));
        const high = startVolts.get(n.name)! > n.thresholdVolts;
        if (high && n.high && v < n.high.worst - 1e-6) optimistic++;
        if (!high && n.low && v > n.low.worst + 1e-6) optimistic++;
      }
    }
    expect(solved).toBe(80);
    expect(optimistic).toBe(0);
  }, 300_000);
});
