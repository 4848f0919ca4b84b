import type { Design, Part } from '../design/model.js';
import type { StageGraph } from '../graph/stageGraph.js';
import { stronglyConnected } from '../graph/tarjan.js';
import { logicThreshold } from '../solve/operatingPoint.js';
import type { AgeingScenario } from './ageing.js';
import { LocalProblem, regionParameters, type LocalParameter } from './localProblem.js';
import { buildRegion, indexDesign, type DesignIndex, type Region } from './region.js';
import { searchVertex, type Band } from './vertex.js';

/** How a net's level is set: by inverting stages (plates: NOR), by followers (cathodes: OR), or from outside. */
export type NetPolarity = 'inverting' | 'follower' | 'mixed' | 'input';

/** What the chain knows of one logic net, fixed for the whole analysis. */
export interface ChainNet {
  name: string;
  polarity: NetPolarity;
  drivers: string[];
  /** The logic nets feeding each driver's grid. */
  feeders: string[][];
  region: Region;
  parameters: LocalParameter[];
  /** Position of each driver among the region's sections (the same in every region with the same key). */
  driverPositions: number[];
  /** For input nets: the switches and buttons that tie the net to a rail. */
  switches: string[];
}

/** The levels a net can take: nominal and worst case, per state; NaN where the state cannot occur. */
export interface NetLevels {
  canHigh: boolean;
  canLow: boolean;
  highNominal: number;
  highWorst: number;
  lowNominal: number;
  lowWorst: number;
}

/** One local solve of a net in one logic state: which driver conducts (for a low plate or a high cathode), or none. */
export interface LevelCase {
  net: string;
  /** Index into the net's drivers of the one that conducts; undefined for the case where none does. For input nets, the switch configuration: 0 open, 1 closed. */
  on: number | undefined;
}

export interface CaseResult {
  /** The level with every parameter nominal and the boundaries at their nominal levels. */
  nominal: number;
  /** The level at the worst vertex; undefined when the local circuit has no solution there. */
  worst: number | undefined;
  /** Is the level judged at its lowest ('min', a high level) or highest ('max', a low level)? */
  sense: 'min' | 'max';
  bands: Band[];
  vertex: Float64Array | undefined;
  effects: Float64Array | undefined;
}

/** Worst-case levels are rounded outwards to this step, so the monotone iteration around loops ends in finitely many rounds. */
const LEVEL_STEP = 1e-5;
/** Rounds of the loop iteration before a loop is declared unsettled. */
const MAX_ROUNDS = 200;

/**
 * The chained worst-case levels of every logic net (DESIGN §3.2). Each net is solved
 * locally: the net, the dividers and grids it feeds and its drivers' own input dividers,
 * with every other logic net held at a boundary level. For a high level all its inverting
 * drivers are cut off, their inputs anywhere in the low interval of the nets feeding them;
 * for a low level one driver conducts with its input anywhere in the high interval, the
 * others cut off; the worst vertex of the local parameters and boundary intervals is
 * found by linearised sensitivities and solved exactly. Nets are taken in the order of
 * the stage graph's components (sources first) and swept again until nothing moves, so
 * worst-case levels propagate along chains and, around loops, settle at the fixed point
 * reached from the ideal levels: the one a state that holds sits at.
 *
 * Local problems are compiled once per distinct region (equal structure and values, the
 * `Region.key`), and results are kept per region and boundary intervals, so a design of
 * many identical stages costs about as much as one of each kind.
 */
export class LevelChain {
  readonly index: DesignIndex;
  readonly nets = new Map<string, ChainNet>();
  readonly levels = new Map<string, NetLevels>();
  /** Nets in the order they are swept: components of the stage graph, sources first. */
  readonly order: string[];
  /** The lowest and highest voltage any rail can take (ground included), tolerance included. */
  readonly railMin: number;
  readonly railMax: number;
  /** Sweeps the iteration took, and whether it settled. */
  rounds = 0;
  settled = true;
  private readonly problems = new Map<string, LocalProblem>();
  private readonly results = new Map<string, CaseResult>();
  private readonly memos = new Map<string, unknown>();
  /** Local solves done (cache misses), for the bench. */
  solves = 0;

  constructor(
    readonly design: Design,
    graph: StageGraph,
    readonly scenario: AgeingScenario,
  ) {
    this.index = indexDesign(design, graph);
    const ends = [0, ...design.rails.flatMap((r) => [r.volts * (1 - r.tol), r.volts * (1 + r.tol)])];
    this.railMin = Math.min(...ends);
    this.railMax = Math.max(...ends);
    for (const n of graph.nets) this.nets.set(n.name, this.describe(n.name, n.kind === 'input'));
    this.order = stronglyConnected(graph.graph).reverse().flat();
  }

  private describe(name: string, input: boolean): ChainNet {
    const { index } = this;
    const drivers = input ? [] : (index.driversOf.get(name) ?? []);
    const followers = drivers.filter((d) => index.follower.has(d)).length;
    const polarity: NetPolarity = input ? 'input' : followers === 0 ? 'inverting' : followers === drivers.length ? 'follower' : 'mixed';
    const region = buildRegion(index, [name]);
    const tubes = region.parts.filter((p) => p.type === 'tube').map((p) => p.name);
    const switches: string[] = [];
    for (const p of region.parts) {
      if (p.type !== 'switch') continue;
      if ((p.a === name && index.fixed.has(p.b)) || (p.b === name && index.fixed.has(p.a))) switches.push(p.name);
    }
    return {
      name,
      polarity,
      drivers,
      feeders: drivers.map((d) => index.feedersOf.get(d) ?? []),
      region,
      parameters: regionParameters(this.design, region, this.scenario),
      driverPositions: drivers.map((d) => tubes.indexOf(d)),
      switches,
    };
  }

  /** The compiled local problem of a region (with some switches closed), shared by every region with the same key. */
  problem(region: Region, close: ReadonlySet<string> = new Set()): { problem: LocalProblem; key: string } {
    const closed = region.parts.flatMap((p, i) => (p.type === 'switch' && close.has(p.name) ? [i] : []));
    const key = `${region.key}|${closed.join(',')}`;
    let problem = this.problems.get(key);
    if (!problem) {
      problem = new LocalProblem(this.design, region, this.scenario, close);
      this.problems.set(key, problem);
    }
    return { problem, key };
  }

  /** Runs the chain to its fixed point. */
  run(): void {
    this.possibleStates();
    for (const net of this.nets.values()) if (net.polarity === 'input') this.updateInput(net);
    for (this.rounds = 1; this.rounds <= MAX_ROUNDS; this.rounds++) {
      let moved = false;
      for (const name of this.order) {
        const net = this.nets.get(name)!;
        if (net.polarity === 'inverting' || net.polarity === 'follower') moved = this.updateStage(net) || moved;
      }
      if (!moved) return;
    }
    this.settled = false;
  }

  /**
   * Which states each net can take at all: an input by its switches or drive; an inverting
   * stage is high only when every driver's feeders can be low, low when some driver's
   * feeders can all be high (followers the other way round). The greatest fixed point, from
   * "every state possible".
   */
  private possibleStates(): void {
    // Every net starts at the ideal levels, the rails: above every fixed point of the iteration.
    const top = Math.max(0, ...this.design.rails.map((r) => r.volts));
    const bottom = Math.min(0, ...this.design.rails.map((r) => r.volts));
    for (const net of this.nets.values()) {
      this.levels.set(net.name, { canHigh: true, canLow: true, highNominal: top, highWorst: top, lowNominal: bottom, lowWorst: bottom });
    }
    for (const net of this.nets.values()) {
      if (net.polarity !== 'input') continue;
      const l = this.levels.get(net.name)!;
      const states = this.inputConfigurations(net).map((on) => this.isHigh(net.name, this.solveCase({ net: net.name, on }).nominal));
      l.canHigh = states.includes(true);
      l.canLow = states.includes(false);
    }
    for (let changed = true; changed; ) {
      changed = false;
      for (const net of this.nets.values()) {
        if (net.polarity === 'input' || net.polarity === 'mixed') continue;
        const l = this.levels.get(net.name)!;
        const all = (fs: string[], high: boolean) => fs.every((f) => (high ? this.levels.get(f)!.canHigh : this.levels.get(f)!.canLow));
        const anyOn = net.feeders.some((fs) => all(fs, true));
        const allOff = net.feeders.every((fs) => all(fs, false));
        const canHigh = net.polarity === 'inverting' ? allOff : anyOn;
        const canLow = net.polarity === 'inverting' ? anyOn : allOff;
        if (canHigh !== l.canHigh || canLow !== l.canLow) {
          l.canHigh = canHigh && l.canHigh;
          l.canLow = canLow && l.canLow;
          changed = true;
        }
      }
    }
  }

  /** The switch configurations of an input net: as the design has it, or open (0) and closed (1) when switches tie it to a rail. */
  inputConfigurations(net: ChainNet): (number | undefined)[] {
    return net.switches.length === 0 ? [undefined] : [0, 1];
  }

  isHigh(net: string, volts: number): boolean {
    return volts > logicThreshold(this.design, net);
  }

  private updateInput(net: ChainNet): void {
    const l = this.levels.get(net.name)!;
    Object.assign(l, { highNominal: NaN, highWorst: NaN, lowNominal: NaN, lowWorst: NaN });
    for (const on of this.inputConfigurations(net)) {
      const r = this.solveCase({ net: net.name, on });
      if (this.isHigh(net.name, r.nominal)) {
        l.highNominal = Math.min(Number.isNaN(l.highNominal) ? Infinity : l.highNominal, r.nominal);
        l.highWorst = Math.min(Number.isNaN(l.highWorst) ? Infinity : l.highWorst, r.worst ?? -Infinity);
      } else {
        l.lowNominal = Math.max(Number.isNaN(l.lowNominal) ? -Infinity : l.lowNominal, r.nominal);
        l.lowWorst = Math.max(Number.isNaN(l.lowWorst) ? -Infinity : l.lowWorst, r.worst ?? Infinity);
      }
    }
  }

  /** The cases of a stage net that give its high level and its low level. */
  casesOf(net: ChainNet): { high: LevelCase[]; low: LevelCase[] } {
    const l = this.levels.get(net.name)!;
    const none: LevelCase[] = [{ net: net.name, on: undefined }];
    const each = net.drivers.map((_, i): LevelCase => ({ net: net.name, on: i })).filter((c) => net.feeders[c.on!]!.every((f) => this.levels.get(f)!.canHigh));
    const inverting = net.polarity === 'inverting';
    return { high: l.canHigh ? (inverting ? none : each) : [], low: l.canLow ? (inverting ? each : none) : [] };
  }

  /** Recomputes a stage net's levels from its inputs' present levels; true if anything moved. */
  private updateStage(net: ChainNet): boolean {
    const l = this.levels.get(net.name)!;
    const cases = this.casesOf(net);
    let moved = false;
    if (cases.high.length > 0) {
      const rs = cases.high.map((c) => this.solveCase(c));
      const nominal = roundTo(Math.min(...rs.map((r) => r.nominal)), 1e-6);
      const worst = Math.floor(Math.min(...rs.map((r) => r.worst ?? -Infinity)) / LEVEL_STEP) * LEVEL_STEP;
      const next = Math.min(l.highWorst, Number.isFinite(worst) ? worst : this.railMin);
      moved = moved || nominal !== l.highNominal || next !== l.highWorst;
      l.highNominal = nominal;
      l.highWorst = next;
    }
    if (cases.low.length > 0) {
      const rs = cases.low.map((c) => this.solveCase(c));
      const nominal = roundTo(Math.max(...rs.map((r) => r.nominal)), 1e-6);
      const worst = Math.ceil(Math.max(...rs.map((r) => r.worst ?? Infinity)) / LEVEL_STEP) * LEVEL_STEP;
      const next = Math.max(l.lowWorst, Number.isFinite(worst) ? worst : this.railMax);
      moved = moved || nominal !== l.lowNominal || next !== l.lowWorst;
      l.lowNominal = nominal;
      l.lowWorst = next;
    }
    return moved;
  }

  /**
   * The band of each boundary net in a case: the low interval for the inputs of drivers
   * that must be cut off, the high interval for the inputs of the one that conducts, and
   * anything the rails allow for the rest (the plates of the sections the net feeds, whose
   * level does not change the grid current). `swept` is given a degenerate band at 0 and
   * set by the caller.
   */
  boundaryBands(net: ChainNet, on: number | undefined, swept?: string): Map<string, Band> {
    const bands = new Map<string, Band>();
    const driving = new Set(on === undefined ? [] : net.feeders[on]!);
    const others = new Set(net.feeders.flatMap((fs, i) => (i === on ? [] : fs)));
    for (const b of net.region.boundaries) {
      const l = this.levels.get(b);
      if (b === swept || !l) bands.set(b, { nominal: 0, low: 0, high: 0 });
      else if (driving.has(b) || (others.has(b) && !l.canLow)) bands.set(b, this.highBand(l));
      else if (others.has(b)) bands.set(b, this.lowBand(l));
      else bands.set(b, { nominal: l.canLow ? l.lowNominal : l.highNominal, low: this.railMin, high: this.railMax });
    }
    return bands;
  }

  private highBand(l: NetLevels): Band {
    return { nominal: Math.max(l.highNominal, l.highWorst), low: l.highWorst, high: Math.max(this.railMax, l.highNominal) };
  }

  private lowBand(l: NetLevels): Band {
    return { nominal: Math.min(l.lowNominal, l.lowWorst), low: Math.min(this.railMin, l.lowNominal), high: l.lowWorst };
  }

  /** The bands of every parameter of a net's region in a case, boundaries included. */
  bandsOf(net: ChainNet, boundary: ReadonlyMap<string, Band>): Band[] {
    return net.parameters.map((p) => (p.kind === 'level' ? boundary.get(p.target)! : p));
  }

  /** Solves one case of one net: nominal, and the worst vertex for its sense. */
  solveCase(c: LevelCase, net: ChainNet = this.nets.get(c.net)!): CaseResult {
    const input = net.polarity === 'input';
    const close = new Set(input && c.on === 1 ? net.switches : []);
    const { problem, key } = this.problem(net.region, close);
    const bands = this.bandsOf(net, input ? this.boundaryBands(net, undefined) : this.boundaryBands(net, c.on));
    const sense: 'min' | 'max' = input ? 'min' : (c.on === undefined) === (net.polarity === 'inverting') ? 'min' : 'max';
    const position = input ? c.on : c.on === undefined ? undefined : net.driverPositions[c.on];
    const cacheKey = `${key}#${position}#${bandKey(net.parameters, bands)}`;
    const hit = this.results.get(cacheKey);
    if (hit) return hit;
    this.solves++;
    let judged = sense;
    if (input) {
      // An input's state is high or low by its nominal level; a high one is judged at its lowest.
      const at = problem.probe(bands.map((b) => b.nominal));
      judged = at && !this.isHigh(net.name, at.value) ? 'max' : 'min';
    }
    const found = searchVertex(bands, judged, (v) => problem.probe(v));
    const result: CaseResult = { nominal: found?.nominal ?? NaN, worst: found?.worst, sense: judged, bands, vertex: found?.vertex, effects: found?.effects };
    this.results.set(cacheKey, result);
    return result;
  }

  /** A result kept under `key` (transfer curves, latch checks, fan-out probes), computed once. */
  memo<T>(key: string, compute: () => T): T {
    if (this.memos.has(key)) return this.memos.get(key) as T;
    const value = compute();
    this.memos.set(key, value);
    return value;
  }

  /** A region for `targets` with extra parts (fan-out probes), and its parameters. */
  regionWith(targets: string[], extra: readonly Part[] = []): { region: Region; parameters: LocalParameter[] } {
    const region = buildRegion(this.index, targets, extra);
    return { region, parameters: regionParameters(this.design, region, this.scenario) };
  }
}

function roundTo(v: number, step: number): number {
  return Math.round(v / step) * step;
}

/** A cache key for the boundary bands of a case (exact values); the other bands are fixed by the region's key. */
export function bandKey(parameters: readonly LocalParameter[], bands: readonly Band[]): string {
  let s = '';
  for (let i = 0; i < bands.length; i++) {
    if (parameters[i]!.kind !== 'level') continue;
    const b = bands[i]!;
    s += `${b.nominal},${b.low},${b.high};`;
  }
  return s;
}
