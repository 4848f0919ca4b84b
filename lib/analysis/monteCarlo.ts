import type { Design } from '../design/model.js';
import { buildStageGraph } from '../graph/stageGraph.js';
import { logicThreshold, solveOperatingPoint, type StateHint } from '../solve/operatingPoint.js';
import { findScenario, type AgeingScenario } from './ageing.js';
import type { CheckResult } from './check.js';
import { LocalProblem, regionParameters, type LocalParameter } from './localProblem.js';
import { buildRegion, indexDesign } from './region.js';
import { highest, lowest } from '../lists.js';

/**
 * How each toleranced value is drawn: uniform over its band; normal with the band's half
 * width as 3σ (unbounded: a few parts in a thousand fall outside); or, for resistors,
 * "graded": a lot from which the parts near nominal were sorted out into a tighter grade,
 * so what is left lies between `gradedInner` of the tolerance and the tolerance, either
 * side (rails, drives and tubes are then uniform).
 */
export type Distribution = 'uniform' | 'normal' | 'graded';
export const DISTRIBUTIONS: readonly Distribution[] = ['uniform', 'normal', 'graded'];

/** Share of a resistor's tolerance sorted out of a graded lot: a 5 % lot without its 1 % parts (common practice, no source). */
export const GRADED_INNER = 0.2;

/** Everything a sampler needs besides the design, as plain data (it crosses to worker threads). */
export interface SamplingSetup {
  seed: number;
  distribution: Distribution;
  /** The ageing scenario's name (its emission band and interface range). */
  scenario: string;
  requiredMargin: number;
  /** Per judged net: the lowest VIL and highest VIH of the inputs it feeds (from `check`). */
  thresholds: { net: string; vil: number; vih: number }[];
}

/** The thresholds a sampling run judges against, from a check of the same design. */
export function samplingThresholds(check: CheckResult): SamplingSetup['thresholds'] {
  return check.nets.flatMap((n) => {
    const vils = n.receivers.flatMap((r) => (r.vilMin === undefined ? [] : [r.vilMin]));
    const vihs = n.receivers.flatMap((r) => (r.vihMax === undefined ? [] : [r.vihMax]));
    return vils.length > 0 && vihs.length > 0 ? [{ net: n.name, vil: lowest(vils), vih: highest(vihs) }] : [];
  });
}

/** What one sample gave. */
export interface SampleOutcome {
  pass: boolean;
  /** True when a latch lost a state it held at nominal values, or a state had no solution. */
  lost: boolean;
  /** Per judged net (setup order), its smallest noise margin over the states solved; NaN when no state solved. */
  margins: Float64Array;
  /** Per parameter, where the sample put it in its band: −1 at the low end, +1 at the high end. */
  deviations: Float64Array;
}

/**
 * Draws the values of sample `index` for a list of bands, in band order. Sample k's values
 * come from a stream seeded with the run's seed and k alone (mulberry32, a small public
 * domain generator), so they do not depend on which worker draws them or in what order.
 * The bands are unpacked into typed arrays once, as a run draws thousands of samples.
 *
 * Why mulberry32 and not pure-rand (issue #17, item 14): what matters here is a stream per
 * (seed, sample) made in a few operations, and pure-rand has no keyed streams. Its
 * generators take one 32-bit seed, so the mix of seed and index below would stay ours; its
 * 128-bit ones (xorshift128plus, xoroshiro128plus) spread that seed into the sparse state
 * (-1, ~seed, seed, 0) and give ~seed as their first number, and mersenne would build a
 * 624-word state for every sample. A switch would also change every seeded figure users
 * have recorded. Mulberry32's one limit here: all streams are windows of one 2^32 cycle,
 * so two samples drawing L numbers each overlap with chance about 2L/2^32, and an overlap
 * hands the same numbers to other parameters, shifted. For 10,000 samples of 200 numbers
 * that is about 5 pairs in 50 million (counted: 1, 0 and 2 for seeds 7, 1 and 20261217),
 * raising the variance of the yield by at most 0.1 %.
 */
export class SampleDrawer {
  private readonly low: Float64Array;
  private readonly mid: Float64Array;
  private readonly half: Float64Array;
  private readonly nominal: Float64Array;
  private readonly graded: Uint8Array;

  constructor(
    bands: readonly LocalParameter[],
    readonly distribution: Distribution,
    readonly seed: number,
  ) {
    this.low = Float64Array.from(bands, (b) => b.low);
    this.mid = Float64Array.from(bands, (b) => (b.low + b.high) / 2);
    this.half = Float64Array.from(bands, (b) => (b.high - b.low) / 2);
    this.nominal = Float64Array.from(bands, (b) => b.nominal);
    this.graded = Uint8Array.from(bands, (b) => (distribution === 'graded' && b.kind === 'resistor' ? 1 : 0));
  }

  draw(index: number, out: Float64Array = new Float64Array(this.low.length)): Float64Array {
    let a = (Math.imul(this.seed ^ 0x9e3779b9, 0x85ebca6b) ^ Math.imul(index + 1, 0xc2b2ae35)) >>> 0;
    const next = () => {
      a = (a + 0x6d2b79f5) >>> 0;
      let t = a;
      t = Math.imul(t ^ (t >>> 15), t | 1);
      t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
      return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
    };
    const normal = this.distribution === 'normal';
    for (let i = 0; i < out.length; i++) {
      const half = this.half[i]!;
      if (half === 0) out[i] = this.nominal[i]!;
      else if (normal) {
        // Box–Muller: two uniforms give one standard normal; the half width is 3σ.
        const u = 1 - next();
        out[i] = this.mid[i]! + (half / 3) * Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * next());
      } else if (this.graded[i] === 1) {
        const side = next() < 0.5 ? -1 : 1;
        out[i] = this.mid[i]! + side * half * (GRADED_INNER + (1 - GRADED_INNER) * next());
      } else out[i] = this.low[i]! + 2 * half * next();
    }
    return out;
  }
}

/** Draws one value per band for sample `index`, in band order (see `SampleDrawer`). */
export function drawSample(bands: readonly LocalParameter[], distribution: Distribution, seed: number, index: number): Float64Array {
  return new SampleDrawer(bands, distribution, seed).draw(index);
}

/**
 * Full-circuit DC solves at sampled parameter values. The whole design is one region
 * (every logic net a target, no boundaries), compiled once; every latch is solved in
 * two states (each latch's first net low, then high), each sample starting from that
 * state's nominal solution so the latches keep their state where it still exists. A
 * sample passes when every state is still there and every judged net keeps the required
 * margin against the thresholds `check` found.
 */
export class Sampler {
  readonly parameters: LocalParameter[];
  private readonly problem: LocalProblem;
  private readonly drawer: SampleDrawer;
  private readonly values: Float64Array;
  /** Each band's low end and 1/(high − low) (0 for a fixed value), for the deviations. */
  private readonly bandLow: Float64Array;
  private readonly bandInverse: Float64Array;
  private readonly states: { hints: StateHint[]; x: Float64Array }[] = [];
  private readonly judged: { terminal: number; threshold: number; vil: number; vih: number }[];
  private readonly latchNets: { terminal: number; threshold: number }[];

  /** The parameters a run of this design draws, in order, without preparing the solves. */
  static parametersOf(design: Design, setup: SamplingSetup): LocalParameter[] {
    return wholeDesign(design, setup).parameters;
  }

  constructor(
    readonly design: Design,
    readonly setup: SamplingSetup,
  ) {
    const { graph, region, scenario, parameters } = wholeDesign(design, setup);
    this.parameters = parameters;
    this.problem = new LocalProblem(design, region, scenario);
    this.drawer = new SampleDrawer(this.parameters, setup.distribution, setup.seed);
    this.values = new Float64Array(this.parameters.length);
    this.bandLow = Float64Array.from(this.parameters, (p) => p.low);
    this.bandInverse = Float64Array.from(this.parameters, (p) => (p.high > p.low ? 1 / (p.high - p.low) : 0));
    const c = this.problem.circuit;
    const terminal = (net: string) => c.terminalOf.get(net)!;
    this.judged = setup.thresholds.map((t) => ({ terminal: terminal(t.net), threshold: logicThreshold(design, t.net), vil: t.vil, vih: t.vih }));
    const latches = graph.loops.filter((l) => l.kind === 'latch').map((l) => l.nets[0]!);
    this.latchNets = latches.map((net) => ({ terminal: terminal(net), threshold: logicThreshold(design, net) }));
    const nominal = this.parameters.map((p) => p.nominal);
    for (const high of latches.length > 0 ? [false, true] : [false]) {
      const hints = latches.map((net) => ({ net, high }));
      const op = solveOperatingPoint(design, { graph, hints });
      if (!('nodes' in op) || !op.converged) continue;
      // The same state in the region's own unknowns: solve the region from the full solution.
      const x = new Float64Array(c.n);
      c.nodeNames.forEach((name, i) => (x[i] = op.nodes.get(name) ?? 0));
      if (this.problem.solveFrom(nominal, x)) this.states.push({ hints, x: Float64Array.from(this.problem.solution) });
    }
  }

  /** Solves sample `index` of the run. */
  run(index: number): SampleOutcome {
    return this.at(this.drawer.draw(index, this.values));
  }

  /** Solves at given parameter values (in `parameters` order). */
  at(values: Float64Array): SampleOutcome {
    const deviations = new Float64Array(values.length);
    const low = this.bandLow;
    const inverse = this.bandInverse;
    for (let i = 0; i < values.length; i++) deviations[i] = inverse[i]! === 0 ? 0 : 2 * (values[i]! - low[i]!) * inverse[i]! - 1;
    const margins = new Float64Array(this.judged.length).fill(NaN);
    let lost = this.states.length === 0;
    let pass = !lost;
    const problem = this.problem;
    for (const state of this.states) {
      if (!problem.solveFrom(values, state.x)) {
        pass = false;
        lost = true;
        continue;
      }
      for (let k = 0; k < state.hints.length; k++) {
        const l = this.latchNets[k]!;
        if (problem.volts(l.terminal) > l.threshold !== state.hints[k]!.high) {
          pass = false;
          lost = true;
        }
      }
      for (let k = 0; k < this.judged.length; k++) {
        const j = this.judged[k]!;
        const v = problem.volts(j.terminal);
        const m = v > j.threshold ? v - j.vih : j.vil - v;
        // The smallest over the states (NaN until a state gives one).
        if (!(m >= margins[k]!)) margins[k] = m;
        if (m < this.setup.requiredMargin) pass = false;
      }
    }
    return { pass, lost, margins, deviations };
  }
}

/** The whole design as one region (every logic net a target, no boundaries), and its parameters. */
function wholeDesign(design: Design, setup: SamplingSetup) {
  const graph = buildStageGraph(design);
  const scenario: AgeingScenario = findScenario(setup.scenario) ?? findScenario('new')!;
  const region = buildRegion(indexDesign(design, graph), graph.nets.map((n) => n.name), [], undefined, Infinity);
  return { graph, region, scenario, parameters: regionParameters(design, region, scenario) };
}

export interface MonteCarloResult {
  samples: number;
  seed: number;
  distribution: Distribution;
  /** Share of samples in which every net and latch passes, with its 95 % Wilson score interval. */
  yield: number;
  interval: [number, number];
  /** Per judged net: the smallest, 1st-percentile and median noise margin over the samples (volts), and the samples it failed in. */
  nets: { net: string; min: number; p1: number; median: number; failures: number }[];
  /** The parameters whose deviation goes most with failing (point-biserial correlation), strongest first; empty when none failed or all did. */
  correlated: { kind: LocalParameter['kind']; target: string; correlation: number }[];
  /** The first failing samples' indices, to repeat them. */
  failing: number[];
  /** Histograms of the weakest nets' margins (smallest 1st percentile first): 30 bins from `from` to `to` volts. */
  histograms: { net: string; from: number; to: number; counts: number[] }[];
}

/** Bins of each histogram. */
const BINS = 30;

/**
 * The Wilson score interval for a proportion (E. B. Wilson, "Probable inference, the law
 * of succession, and statistical inference", J. Am. Stat. Assoc., 1927), z = 1.96.
 */
export function wilsonInterval(successes: number, n: number, z = 1.96): [number, number] {
  if (n === 0) return [0, 1];
  const p = successes / n;
  const z2 = z * z;
  const centre = (p + z2 / (2 * n)) / (1 + z2 / n);
  const half = (z * Math.sqrt((p * (1 - p)) / n + z2 / (4 * n * n))) / (1 + z2 / n);
  return [Math.max(0, centre - half), Math.min(1, centre + half)];
}

/** Sums up the outcomes of samples 0…N−1 (in that order). */
export function summarizeSamples(setup: SamplingSetup, parameters: readonly LocalParameter[], outcomes: readonly SampleOutcome[]): MonteCarloResult {
  const n = outcomes.length;
  const passed = outcomes.filter((o) => o.pass).length;
  const quantile = (sorted: number[], q: number) => (sorted.length === 0 ? NaN : sorted[Math.min(sorted.length - 1, Math.floor(q * (sorted.length - 1)))]!);
  const nets = setup.thresholds.map((t, k) => {
    const ms = outcomes.map((o) => o.margins[k]!).filter((m) => !Number.isNaN(m)).sort((a, b) => a - b);
    return { net: t.net, min: ms[0] ?? NaN, p1: quantile(ms, 0.01), median: quantile(ms, 0.5), failures: ms.filter((m) => m < setup.requiredMargin).length };
  });
  const correlated: MonteCarloResult['correlated'] = [];
  if (passed > 0 && passed < n) {
    const fail = outcomes.map((o) => (o.pass ? 0 : 1));
    const fm = (n - passed) / n;
    const fs = Math.sqrt(fm * (1 - fm));
    parameters.forEach((p, i) => {
      const d = outcomes.map((o) => o.deviations[i]!);
      const dm = d.reduce((a, b) => a + b, 0) / n;
      const ds = Math.sqrt(d.reduce((a, b) => a + (b - dm) ** 2, 0) / n);
      if (ds === 0) return;
      const cov = d.reduce((a, b, k) => a + (b - dm) * (fail[k]! - fm), 0) / n;
      correlated.push({ kind: p.kind, target: p.target, correlation: cov / (ds * fs) });
    });
    correlated.sort((a, b) => Math.abs(b.correlation) - Math.abs(a.correlation));
  }
  return {
    samples: n,
    seed: setup.seed,
    distribution: setup.distribution,
    yield: n === 0 ? NaN : passed / n,
    interval: wilsonInterval(passed, n),
    nets,
    correlated: correlated.slice(0, 5),
    failing: outcomes.flatMap((o, k) => (o.pass ? [] : [k])).slice(0, 10),
    histograms: [...nets.keys()]
      .filter((k) => !Number.isNaN(nets[k]!.p1))
      .sort((a, b) => nets[a]!.p1 - nets[b]!.p1)
      .slice(0, 4)
      .map((k) => {
        const ms = outcomes.map((o) => o.margins[k]!).filter((m) => !Number.isNaN(m));
        // reduce, not spread: a run may hold more samples than a call takes arguments.
        const from = ms.reduce((a, b) => Math.min(a, b), Infinity);
        const to = ms.reduce((a, b) => Math.max(a, b), -Infinity);
        const counts = new Array<number>(BINS).fill(0);
        const width = (to - from) / BINS || 1;
        for (const m of ms) counts[Math.min(BINS - 1, Math.floor((m - from) / width))]!++;
        return { net: nets[k]!.net, from, to, counts };
      }),
  };
}
