import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  AGEING_SCENARIOS,
  buildStageGraph,
  cutoffGrid,
  emissionBand,
  findScenario,
  LevelChain,
  logicThreshold,
  LocalProblem,
  NOMINAL_VARIATION,
  regionParameters,
  searchVertex,
  solveOperatingPoint,
  type Design,
  type SectionVariation,
  type StateHint,
} from '../../lib/index.js';
import { P, packSection } from '../../lib/models/tubeEquations.js';
import { generateRegister } from '../../bench/generate.js';
import { checkOf, design, memoryLoader, netsFiles } from '../helpers.js';
import { loadDesign } from '../../lib/index.js';
import { buttonLatchText, exhaustive, latchText, SMALL_DESIGNS, twoRailButtonsText } from './oracle.js';

const NEW = findScenario('new')!;

function chainOf(d: Design, scenario = NEW): LevelChain {
  const chain = new LevelChain(d, buildStageGraph(d), scenario);
  chain.run();
  return chain;
}

function demo(file: string): Design {
  const files = netsFiles();
  return loadDesign(file, files[file]!, { loader: memoryLoader(files) }).design!;
}

describe('chained worst-case levels against exhaustive corners of the whole circuit (the oracle)', () => {
  for (const [what, text, hints, highNet, lowNet] of SMALL_DESIGNS) {
    it(`are never optimistic for ${what}, and at most 3 V pessimistic`, () => {
      const d = design(text);
      const chain = chainOf(d);
      const oracle = exhaustive(d, hints);
      const high = chain.levels.get(highNet)!;
      const low = chain.levels.get(lowNet)!;
      // Never optimistic: the chain's worst high is at or below every corner's, its worst low at or above.
      expect(high.highWorst).toBeLessThanOrEqual(oracle.get(highNet)!.min + 1e-3);
      expect(low.lowWorst).toBeGreaterThanOrEqual(oracle.get(lowNet)!.max - 1e-3);
      // How pessimistic: each local solve may put a shared part at a different corner; recorded in docs/PHYSICS.md.
      expect(oracle.get(highNet)!.min - high.highWorst).toBeLessThan(3);
      expect(low.lowWorst - oracle.get(lowNet)!.max).toBeLessThan(3);
    });
  }
});

describe('the full-circuit solution lies inside the worst-case intervals (DESIGN §3.2 invariant)', () => {
  /** Solves the whole design at sampled parameters and checks every logic net against the chain's worst levels. */
  const inside = (d: Design, chain: LevelChain, variation: Map<string, SectionVariation>, values: { ohms: number[]; rails: number[] }, hints: StateHint[], close: Set<string>) => {
    let k = 0;
    const parts = d.parts.map((p) => (p.type === 'resistor' ? { ...p, ohms: values.ohms[k++]! } : p));
    const rails = d.rails.map((r, i) => ({ ...r, volts: values.rails[i]! }));
    const sampled: Design = { ...d, parts, rails };
    const op = solveOperatingPoint(sampled, { variation, hints, close });
    if (!('nodes' in op) || !op.converged) return true; // a state that does not exist at this sample is not a level
    for (const [net, l] of chain.levels) {
      if (chain.nets.get(net)!.polarity === 'input') continue;
      const v = op.nodes.get(net)!;
      if (v > logicThreshold(d, net)) {
        if (!l.canHigh || v < l.highWorst - 1e-6) return false;
      } else if (!l.canLow || v > l.lowWorst + 1e-6) return false;
    }
    return true;
  };
  const sampler = (d: Design, scenario: (typeof AGEING_SCENARIOS)[number]) => {
    const resistors = d.parts.filter((p) => p.type === 'resistor');
    const tubes = d.parts.filter((p) => p.type === 'tube');
    const spread = new Map(d.models.map((m) => [m.name, m.spread]));
    const u = fc.double({ min: 0, max: 1, noNaN: true });
    return fc.record({
      r: fc.array(u, { minLength: resistors.length, maxLength: resistors.length }),
      v: fc.array(u, { minLength: d.rails.length, maxLength: d.rails.length }),
      t: fc.array(fc.tuple(u, u), { minLength: tubes.length, maxLength: tubes.length }),
      state: fc.boolean(),
      switches: fc.array(fc.boolean(), { minLength: 8, maxLength: 8 }),
    }).map((s) => {
      const ohms = resistors.map((p, i) => (p.type === 'resistor' ? p.ohms * (1 + p.tol * (2 * s.r[i]! - 1)) : 0));
      const rails = d.rails.map((r, i) => r.volts * (1 + r.tol * (2 * s.v[i]! - 1)));
      const variation = new Map<string, SectionVariation>();
      tubes.forEach((p, i) => {
        if (p.type !== 'tube') return;
        const band = emissionBand(spread.get(p.model) ?? 0, scenario);
        variation.set(p.name, { ...NOMINAL_VARIATION, perveance: band.low + (band.high - band.low) * s.t[i]![0], cathodeOhms: scenario.interfaceOhms * s.t[i]![1] });
      });
      return { ohms, rails, variation, state: s.state, switches: s.switches };
    });
  };

  it('for random samples of a pentode latch with set and clear inputs, new and at end of life', () => {
    const d = design(buttonLatchText('6AU6', 'screen bp;', '33 k', '220 k'));
    for (const scenario of [NEW, findScenario('end-of-life')!]) {
      const chain = chainOf(d, scenario);
      fc.assert(
        fc.property(sampler(d, scenario), (s) => inside(d, chain, s.variation, { ohms: s.ohms, rails: s.rails }, [{ net: 'q', high: s.state }], new Set())),
        { seed: 20261202, numRuns: 40 },
      );
    }
  });

  it('for random samples of the NOR adder with its switches in random positions', () => {
    const d = demo('nets/nor-adder.tube');
    const chain = chainOf(d);
    const switches = d.parts.filter((p) => p.type === 'switch').map((p) => p.name);
    fc.assert(
      fc.property(sampler(d, NEW), (s) => {
        // A switch's position is a state: close the ones drawn, open the rest.
        const open: Design = { ...d, parts: d.parts.map((p) => (p.type === 'switch' ? { ...p, closed: false } : p)) };
        const close = new Set(switches.filter((_, i) => s.switches[i]));
        return inside(open, chain, s.variation, { ohms: s.ohms, rails: s.rails }, [], close);
      }),
      { seed: 20261202, numRuns: 30 },
    );
  });
});

describe('local solves against the full solve (fast path against full solve)', () => {
  it('give every net of the NOR adder its full-solve voltage when the boundary nets are held at theirs', () => {
    const d = demo('nets/nor-adder.tube');
    const op = solveOperatingPoint(d);
    if (!('nodes' in op)) throw new Error('no solve');
    const chain = chainOf(d);
    for (const net of chain.nets.values()) {
      if (net.polarity !== 'inverting') continue;
      const problem = new LocalProblem(d, net.region, NEW);
      const values = regionParameters(d, net.region, NEW).map((p) => (p.kind === 'level' ? op.nodes.get(p.target)! : p.nominal));
      expect(problem.solve(values)).toBe(true);
      expect(Math.abs(problem.volts(problem.target) - op.nodes.get(net.name)!)).toBeLessThan(1e-6);
    }
  });

  it('give a latch the nominal levels the full solver finds in each of its states', () => {
    const d = design(latchText('6AU6', '5 %', '33 k', '220 k', 'screen bp;'));
    const chain = chainOf(d);
    const op = solveOperatingPoint(d, { hints: [{ net: 'q', high: true }] });
    if (!('nodes' in op)) throw new Error('no solve');
    expect(chain.levels.get('q')!.highNominal).toBeCloseTo(op.nodes.get('q')!, 3);
    expect(chain.levels.get('nq')!.lowNominal).toBeCloseTo(op.nodes.get('nq')!, 3);
  });
});

describe('input nets switched to more than one rail', () => {
  it('take each rail\'s worst level with its own button closed, and never close both (a closed contact ties the net to its rail: Kirchhoff\'s voltage law)', () => {
    const d = design(twoRailButtonsText(' tol 5 %'));
    const chain = chainOf(d);
    const n = chain.levels.get('n')!;
    expect(n.canHigh && n.canLow).toBe(true);
    expect(n.highWorst).toBeCloseTo(95, 6);
    expect(n.lowWorst).toBeCloseTo(0, 6);
    expect(chain.levels.get('a')!.canHigh && chain.levels.get('a')!.canLow).toBe(true);
  });
});

describe('the cost of the chain', () => {
  it('hardly grows with the number of identical cells: within 1.5× from 100 to 400 cells of a register (linear would be 4×)', () => {
    const solves = (stages: number) => chainOf(loadDesign('g.tube', generateRegister(stages)).design!).solves;
    // Not exactly equal: the clock line feeds every cell, so its level (and what follows from it) changes with the size.
    expect(solves(1600)).toBeLessThanOrEqual(1.5 * solves(400));
  });
});

describe('grid-side margins', () => {
  it('put cutoff where the 3/2-power law gives 1 % of the current at Vgk = 0: Vco = (Vak/mu)·(0.01^(2/3) − 1) (Child–Langmuir)', () => {
    const params = new Float64Array(P.size);
    const model = { name: 'CL', kind: 'child-langmuir' as const, mu: 20, k: 1e-3, rgi: 2000, vgamma: 0, spread: 0 };
    packSection(model, NOMINAL_VARIATION, params, 0);
    for (const vak of [20, 60, 150]) expect(cutoffGrid(params, 0, vak, 0)!).toBeCloseTo((vak / 20) * (0.01 ** (2 / 3) - 1), 5);
  });

  it('measure the drive margin against the divider\'s open-circuit grid voltage (Thevenin, exact resistors)', () => {
    const d = design(`rail bp = 24 V
rail bias = -12 V
drive IN (x) 20 V
defaults { tube = "6AU6", tolerance = 0 % }
type EXACT like "6AU6" { spread = 0 % }
stage a { tube EXACT; load 33 k to bp; screen bp; input x series 100 k pulldown 300 k to bias }`);
    const r = checkOf(d, { requiredMargin: 0 });
    const a = r.nets.find((n) => n.name === 'a')!;
    // (20/100k − 12/300k) / (1/100k + 1/300k) = 12 V above the cathode at ground.
    expect(a.driveMargin!.volts).toBeCloseTo(12, 6);
  });
});

describe('the vertex search', () => {
  it('finds the exact extremes of a divider, monotone in each resistor and the source (closed form)', () => {
    const bands = [
      { nominal: 24, low: 22.8, high: 25.2 },
      { nominal: 100e3, low: 95e3, high: 105e3 },
      { nominal: 47e3, low: 44.65e3, high: 49.35e3 },
    ];
    const f = (v: ArrayLike<number>) => (v[0]! * v[2]!) / (v[1]! + v[2]!);
    const probe = (v: Float64Array) => {
      const s = v[1]! + v[2]!;
      return { value: f(v), slopes: [v[2]! / s, (-v[0]! * v[2]!) / (s * s), (v[0]! * v[1]!) / (s * s)] };
    };
    expect(searchVertex(bands, 'min', probe)!.worst).toBeCloseTo(f([22.8, 105e3, 44.65e3]), 12);
    expect(searchVertex(bands, 'max', probe)!.worst).toBeCloseTo(f([25.2, 95e3, 49.35e3]), 12);
  });
});

describe('ageing scenarios', () => {
  it('widen every emission band downward only: a new, strong tube stays the top end', () => {
    for (const s of AGEING_SCENARIOS) {
      expect(emissionBand(0.25, s).high).toBe(1.25);
      expect(emissionBand(0.25, s).low).toBeCloseTo(0.75 * s.endOfLife * s.heater, 12);
    }
  });

  it('never make a worst low level better than with new tubes', () => {
    const d = design(latchText('6AU6', '5 %', '33 k', '220 k', 'screen bp;'));
    const fresh = chainOf(d).levels.get('q')!.lowWorst;
    for (const s of AGEING_SCENARIOS) expect(chainOf(d, s).levels.get('q')!.lowWorst).toBeGreaterThanOrEqual(fresh - 1e-9);
  });
});
