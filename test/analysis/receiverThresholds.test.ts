import { describe, expect, it } from 'vitest';
import { familyDesigns } from '../../bench/family.js';
import { familyDesign } from '../../bench/familyOracle.js';
import { AGEING_SCENARIOS, buildStageGraph, checkMargins, LevelChain, WholeDesign } from '../../lib/index.js';
import { positionsAfter, withPositions } from '../../lib/analysis/cornerSearch.js';
import { thresholdsAt } from '../../lib/analysis/refineNets.js';

describe('worst-case receiver thresholds', () => {
  it('bound the unity-gain points of every corner of the whole design (lowest VIL, highest VIH), over a family of small designs', () => {
    // Oracle: every corner of the whole design solved, and at each the receiving stage's
    // transfer curve swept with its parts at that corner and the nets around it at their
    // voltages there; VIL and VIH are the unity-gain points of that curve (Hodges and
    // Jackson's definition). The reported worst VIL must be at or below every one of them,
    // the worst VIH at or above. Before the corner search, the corner picked by the
    // linearised slopes alone missed by up to 8 V in this family (latch 4: VIL −4.0 V at a
    // corner, 1.35 V reported).
    const small = familyDesigns(2026015, 12).filter((fd) => {
      const d = familyDesign(fd);
      return new WholeDesign(d, buildStageGraph(d), AGEING_SCENARIOS[0]!).parameters.filter((p) => p.high > p.low).length <= 11;
    });
    expect(small.length).toBeGreaterThanOrEqual(5);
    let receivers = 0;
    for (const fd of small) {
      const design = familyDesign(fd);
      const graph = buildStageGraph(design);
      const scenario = AGEING_SCENARIOS[0]!;
      const check = checkMargins(design);
      if (!('verdict' in check)) throw new Error(fd.name);
      const chain = new LevelChain(design, graph, scenario);
      chain.run();
      for (const state of fd.states) {
        const moved = design.parts.filter((p) => p.type === 'switch' && state.close.includes(p.name) !== p.closed).map((p) => p.name);
        const w = new WholeDesign(withPositions(design, positionsAfter(design, moved)), graph, scenario);
        const start = w.state(state.hints)!;
        const varied = w.parameters.map((_, i) => i).filter((i) => w.parameters[i]!.high > w.parameters[i]!.low);
        const values = Float64Array.from(w.nominal);
        for (let m = 0; m < 2 ** varied.length; m++) {
          varied.forEach((i, k) => (values[i] = (m >> k) & 1 ? w.parameters[i]!.high : w.parameters[i]!.low));
          if (!w.problem.solveFrom(values, start)) continue;
          const volts = (net: string) => w.problem.volts(w.terminal(net));
          for (const n of check.nets) {
            for (const rc of n.receivers) {
              if (rc.vilMin === undefined || rc.vihMax === undefined) continue;
              const t = thresholdsAt(chain, w.named(values), volts, n.name, rc);
              if (!t) continue;
              if (m === 0) receivers++;
              expect(t.vil, `${fd.name}: ${n.name} → ${rc.stage} VIL`).toBeGreaterThanOrEqual(rc.vilMin - 1e-3);
              expect(t.vih, `${fd.name}: ${n.name} → ${rc.stage} VIH`).toBeLessThanOrEqual(rc.vihMax + 1e-3);
            }
          }
        }
      }
    }
    expect(receivers).toBeGreaterThanOrEqual(10);
  }, 240_000);
});
