import { fixedVolts, type Design, type Part } from '../design/model.js';
import type { StageGraph } from '../graph/stageGraph.js';
import { stronglyConnected } from '../graph/tarjan.js';
import { logicThreshold } from '../solve/operatingPoint.js';
import type { AgeingScenario } from './ageing.js';
import { LocalProblem, regionParameters, type LocalParameter } from './localProblem.js';
import { buildRegion, indexDesign, type DesignIndex, type Region } from './region.js';
import { localBands, searchAllCorners, searchVertex, type Band } from './vertex.js';
import { highest, lowest } from '../lists.js';
import { coarsestPartition } from './partition.js';
import type { Progress } from '../progress.js';

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
  /** For input nets: the switches and buttons that tie the net to a rail, grouped by rail. */
  switches: SwitchGroup[];
  /** For each boundary net (in `region.boundaries` order): the drivers whose grids it feeds (none for the others). */
  feeds: number[][];
  /** The region's key interned to a number: nets of one kind share local problems and results. */
  kind: number;
}

/** The levels a net can take: nominal and worst case, per state; NaN where the state cannot occur. */
export interface NetLevels {
  canHigh: boolean;
  canLow: boolean;
  highNominal: number;
  highWorst: number;
  lowNominal: number;
  lowWorst: number;
  /** The levels as cache-key text, made once per change: `h…` for the high interval, `l…` the low, `a…` the nominal level. */
  keys?: { high: string; low: string; any: string };
}

function levelKeys(l: NetLevels): NonNullable<NetLevels['keys']> {
  return { high: `h${l.highNominal},${l.highWorst};`, low: `l${l.lowNominal},${l.lowWorst};`, any: `a${l.canLow ? l.lowNominal : l.highNominal};` };
}

/** The switches of an input net that tie it to one rail (or ground), and that rail's voltage. */
export interface SwitchGroup {
  rail: string;
  volts: number;
  switches: string[];
}

/** One local solve of a net in one logic state: which driver conducts (for a low plate or a high cathode), or none. */
export interface LevelCase {
  net: string;
  /** Index into the net's drivers of the one that conducts; undefined for the case where none does. For input nets, the switch configuration: 0 all open, k the switches to the k-th rail they reach closed. */
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
  /** Each section's grid at the vertex, by position in the region; filled on first use by the grid-side margins. */
  grids?: SectionGrid[];
}

/** A section's grid at a solved vertex (volts): against the cathode, its cutoff point, and where its resistors alone would put it. */
export interface SectionGrid {
  vgk: number;
  cutoff: number | undefined;
  /** The grid's open-circuit voltage against the cathode: with its own current removed, the nodes around it held. */
  openVgk: number;
}

/** The case keys the rounds of the loop iteration used: every one, and each net's in its last round. */
interface CaseKeys {
  all: Set<string>;
  last: Map<string, string[]>;
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
  /** Region keys interned to small numbers, so cache keys stay short. */
  private readonly kinds = new Map<string, number>();
  private nextKind = 0;
  private readonly memos = new Map<string, unknown>();
  /** What `scratch` work has added to the caches, to drop when it ends. */
  private added: { kinds: string[]; problems: string[]; results: string[] } | undefined;
  /** Local solves done (cache misses), for the bench. */
  solves = 0;

  constructor(
    readonly design: Design,
    graph: StageGraph,
    readonly scenario: AgeingScenario,
  ) {
    this.index = indexDesign(design, graph);
    const ends = [0, ...design.rails.flatMap((r) => [r.volts * (1 - r.tol), r.volts * (1 + r.tol)])];
    this.railMin = lowest(ends);
    this.railMax = highest(ends);
    for (const n of graph.nets) this.nets.set(n.name, this.describe(n.name, n.kind === 'input'));
    // Loops after what feeds them, and within a loop each net in the order a walk along
    // its signal flow first reaches it (Tarjan gives a loop's nets the other way round):
    // a net solved after its drivers in the same sweep sees their new levels, so fewer
    // rounds of the loop iteration re-solve it.
    this.order = stronglyConnected(graph.graph)
      .reverse()
      .flatMap((loop) => [...loop].reverse());
  }

  private describe(name: string, input: boolean): ChainNet {
    const { index } = this;
    const drivers = input ? [] : (index.driversOf.get(name) ?? []);
    const followers = drivers.filter((d) => index.follower.has(d)).length;
    const polarity: NetPolarity = input ? 'input' : followers === 0 ? 'inverting' : followers === drivers.length ? 'follower' : 'mixed';
    const switches = input ? this.switchesAt(name) : [];
    const region = buildRegion(index, [name], [], input ? new Set(switches.flatMap((g) => g.switches)) : undefined);
    const tubes = region.parts.filter((p) => p.type === 'tube').map((p) => p.name);
    const feeders = drivers.map((d) => index.feedersOf.get(d) ?? []);
    return this.netWith({ name, polarity, drivers, feeders, driverPositions: drivers.map((d) => tubes.indexOf(d)), switches }, region);
  }

  /** A chain net over a region: its boundary roles, its kind, and its parameters (made when first asked for: most nets never need theirs). */
  private netWith(base: Pick<ChainNet, 'name' | 'polarity' | 'drivers' | 'feeders' | 'driverPositions' | 'switches'>, region: Region): ChainNet {
    const design = this.design;
    const scenario = this.scenario;
    let parameters: LocalParameter[] | undefined;
    return {
      ...base,
      region,
      feeds: region.boundaries.map((b) => base.feeders.flatMap((fs, i) => (fs.includes(b) ? [i] : []))),
      kind: this.kindOf(region),
      get parameters() {
        return (parameters ??= regionParameters(design, region, scenario));
      },
    };
  }

  /** The region's key as a small number, the same for every region with the same key. */
  kindOf(region: Region): number {
    let kind = this.kinds.get(region.key);
    if (kind === undefined) {
      this.kinds.set(region.key, (kind = this.nextKind++));
      this.added?.kinds.push(region.key);
    }
    return kind;
  }

  /**
   * Runs `work` and then drops what it added to the chain's caches (region kinds, local
   * problems, case results): for one-off probes that no later question asks again, such
   * as a fan-out headroom's regions with extra loads, which would otherwise hold most of a
   * large design's memory. Kinds are never numbered again, so no result kept can be
   * mistaken for a dropped one.
   */
  scratch<T>(work: () => T): T {
    if (this.added) return work();
    const added = (this.added = { kinds: [], problems: [], results: [] });
    try {
      return work();
    } finally {
      this.added = undefined;
      for (const k of added.kinds) this.kinds.delete(k);
      for (const k of added.problems) this.problems.delete(k);
      for (const k of added.results) this.results.delete(k);
    }
  }

  /** The switches and buttons that tie a net to a rail or ground, grouped by rail. */
  private switchesAt(net: string): SwitchGroup[] {
    const { index } = this;
    const groups: SwitchGroup[] = [];
    for (const i of index.partsAt.get(net) ?? []) {
      const p = index.design.parts[i]!;
      if (p.type !== 'switch') continue;
      const rail = p.a === net ? p.b : p.a;
      if (!index.fixed.has(rail)) continue;
      const group = groups.find((g) => g.rail === rail);
      if (group) group.switches.push(p.name);
      else groups.push({ rail, volts: fixedVolts(this.design, rail)!, switches: [p.name] });
    }
    return groups;
  }

  /** The compiled local problem of a region (with some switches closed), shared by every region with the same key. */
  problem(region: Region, close: ReadonlySet<string> = new Set(), kind = this.kindOf(region)): { problem: LocalProblem; key: string } {
    const closed = close.size === 0 ? '' : region.parts.flatMap((p, i) => (p.type === 'switch' && close.has(p.name) ? [i] : [])).join(',');
    const key = `${kind}|${closed}`;
    let problem = this.problems.get(key);
    if (!problem) {
      problem = new LocalProblem(this.design, region, this.scenario, close);
      this.problems.set(key, problem);
      this.added?.problems.push(key);
    }
    return { problem, key };
  }

  /** Runs the chain to its fixed point. */
  run(progress?: Progress): void {
    const representatives = this.shareLevels();
    this.possibleStates(representatives);
    for (const name of representatives) {
      const net = this.nets.get(name)!;
      if (net.polarity === 'input') this.updateInput(net);
    }
    // Which nets read each net's level: a net is solved again only when one of those it reads has moved.
    const classOf = new Map<string, string>();
    for (const name of representatives) for (const member of this.members.get(name)!) classOf.set(member, name);
    const readers = new Map<string, Set<string>>();
    for (const name of representatives) {
      for (const b of this.nets.get(name)!.region.boundaries) {
        const c = classOf.get(b)!;
        (readers.get(c) ?? readers.set(c, new Set()).get(c)!).add(name);
      }
    }
    // Each round's results are keyed by the levels around each net, which only move one
    // way: a result of a round before a net's last is never asked for again, and is dropped.
    const used: CaseKeys = { all: new Set(), last: new Map() };
    try {
      this.sweep(representatives, readers, used, progress);
    } finally {
      const current = new Set([...used.last.values()].flat());
      for (const key of used.all) if (!current.has(key)) this.results.delete(key);
    }
  }

  /** The rounds of the loop iteration (see `run`), recording in `used` the case keys each net used. */
  private sweep(representatives: string[], readers: Map<string, Set<string>>, used: CaseKeys, progress?: Progress): void {
    let stale = new Set(representatives);
    for (this.rounds = 1; this.rounds <= MAX_ROUNDS; this.rounds++) {
      const next = new Set<string>();
      const phase = `levels, round ${this.rounds}`;
      for (const [i, name] of representatives.entries()) {
        progress?.(phase, i, representatives.length);
        if (!stale.has(name)) continue;
        const net = this.nets.get(name)!;
        if ((net.polarity === 'inverting' || net.polarity === 'follower') && this.updateStage(net, used)) {
          // Readers later in this sweep see the new level now; earlier ones next sweep.
          for (const r of readers.get(name) ?? []) {
            stale.add(r);
            next.add(r);
          }
        }
      }
      if (next.size === 0) return;
      stale = next;
    }
    this.settled = false;
  }

  /** The nets of each class, by the class's representative (its first net in sweep order). */
  private readonly members = new Map<string, string[]>();
  private classes = new Map<string, number>();

  /** For a net with a section whose grid no logic net feeds: whether those sections conduct (found at nominal values when the chain runs). */
  readonly fixed = new Map<string, boolean>();

  /** The class of a net after `run`: nets of one class have equal levels and equal local results. */
  classOf(net: string): number {
    return this.classes.get(net)!;
  }

  /** Narrows one net's worst level to a tighter bound found on the whole design (`tightenLevels`); the net gets a record of its own. Returns 1. */
  narrow(name: string, level: 'high' | 'low', worst: number): number {
    const l = this.levels.get(name)!;
    this.levels.set(name, { ...l, keys: undefined, ...(level === 'high' ? { highWorst: worst } : { lowWorst: worst }) });
    return 1;
  }

  /**
   * The classes again after `narrow`: nets of one class whose levels, or those of the nets
   * around them, now differ go to classes of their own (the same partition refinement,
   * started from the levels as well as the kinds). Results kept by class are made after this.
   */
  regroup(): void {
    this.classes = this.partition((net) => {
      const l = this.levels.get(net.name)!;
      return `${this.classes.get(net.name)}|${l.canHigh}|${l.canLow}|${l.highWorst}|${l.lowWorst}`;
    });
  }

  /** The coarsest partition of the nets, by name, that keeps nets of different `label` apart and, boundary by boundary, their boundaries in one class. */
  private partition(label: (net: ChainNet) => string): Map<string, number> {
    const index = new Map(this.order.map((name, i) => [name, i]));
    const nets = this.order.map((name) => this.nets.get(name)!);
    const found = coarsestPartition(
      nets.map(label),
      nets.map((net) => net.region.boundaries.map((b) => index.get(b) ?? -1)),
    );
    return new Map(this.order.map((name, i) => [name, found[i]!]));
  }

  /**
   * Nets that are the same problem all the way out share one level record: the coarsest
   * partition in which nets of a class have regions of the same kind and, boundary by
   * boundary, boundaries in the same classes (partition refinement, as in the
   * minimisation of automata, by Hopcroft's algorithm: `coarsestPartition`). Their levels are equal at every step of the iteration, so
   * the chain solves one net per class: a register of a thousand identical cells costs
   * what one cell does. Returns the representatives in sweep order.
   */
  private shareLevels(): string[] {
    const classOf = this.partition((net) => `${net.kind}|${net.polarity}`);
    this.classes = classOf;
    const representatives: string[] = [];
    const byClass = new Map<number, string>();
    for (const name of this.order) {
      const c = classOf.get(name)!;
      const rep = byClass.get(c);
      if (rep === undefined) {
        byClass.set(c, name);
        representatives.push(name);
        this.members.set(name, [name]);
      } else this.members.get(rep)!.push(name);
    }
    return representatives;
  }

  private possibleStates(representatives: string[]): void {
    // Every net starts at the ideal levels, the rails: above every fixed point of the iteration.
    const top = Math.max(0, highest(this.design.rails.map((r) => r.volts)));
    const bottom = Math.min(0, lowest(this.design.rails.map((r) => r.volts)));
    for (const name of representatives) {
      const shared: NetLevels = { canHigh: true, canLow: true, highNominal: top, highWorst: top, lowNominal: bottom, lowWorst: bottom };
      for (const member of this.members.get(name)!) this.levels.set(member, shared);
    }
    for (const name of representatives) {
      const net = this.nets.get(name)!;
      if (net.polarity !== 'input') continue;
      const l = this.levels.get(net.name)!;
      const states = this.inputConfigurations(net).map((on) => this.inputHigh(net, on) ?? this.isHigh(net.name, this.solveCase({ net: net.name, on }).nominal));
      l.canHigh = states.includes(true);
      l.canLow = states.includes(false);
    }
    // A section whose grid no logic net feeds (tied to a rail through its divider) is on
    // or off for good: its net's level with every other section off says which.
    for (const name of representatives) {
      const net = this.nets.get(name)!;
      if ((net.polarity !== 'inverting' && net.polarity !== 'follower') || !net.feeders.some((fs) => fs.length === 0)) continue;
      const high = this.isHigh(name, this.solveCase({ net: name, on: undefined }).nominal);
      for (const member of this.members.get(name)!) this.fixed.set(member, net.polarity === 'inverting' ? !high : high);
    }
    for (let changed = true; changed; ) {
      changed = false;
      for (const name of representatives) {
        const net = this.nets.get(name)!;
        if (net.polarity === 'input' || net.polarity === 'mixed') continue;
        const l = this.levels.get(net.name)!;
        const all = (fs: string[], high: boolean) => (fs.length === 0 ? this.fixed.get(name) === high : fs.every((f) => (high ? this.levels.get(f)!.canHigh : this.levels.get(f)!.canLow)));
        const anyOn = net.feeders.some((fs) => all(fs, true));
        const allOff = net.feeders.every((fs) => all(fs, false));
        const canHigh = net.polarity === 'inverting' ? allOff : anyOn;
        const canLow = net.polarity === 'inverting' ? anyOn : allOff;
        if (canHigh !== l.canHigh || canLow !== l.canLow) {
          l.canHigh = canHigh && l.canHigh;
          l.canLow = canLow && l.canLow;
          l.keys = undefined;
          changed = true;
        }
      }
    }
  }

  /**
   * The switch configurations of an input net: as the design has it, or all open (0) and,
   * for each rail its switches reach, those switches closed (1, 2, …). Switches to two
   * different rails are never closed together: that would short the rails.
   */
  inputConfigurations(net: ChainNet): (number | undefined)[] {
    return net.switches.length === 0 ? [undefined] : [0, ...net.switches.map((_, k) => k + 1)];
  }

  isHigh(net: string, volts: number): boolean {
    return volts > logicThreshold(this.design, net);
  }

  /**
   * The levels of a net set from outside. With switches to a rail, closed is the state the
   * rail gives (high for a rail above the net's logic threshold) and open is the other one,
   * whatever level it reaches: an open level on the wrong side of the threshold is then a
   * failure of that state, not a second state of the same kind. A drive alone has the one
   * state its level reads as.
   */
  private updateInput(net: ChainNet): void {
    const l = this.levels.get(net.name)!;
    Object.assign(l, { highNominal: NaN, highWorst: NaN, lowNominal: NaN, lowWorst: NaN, keys: undefined });
    for (const on of this.inputConfigurations(net)) {
      const r = this.solveCase({ net: net.name, on });
      const high = this.inputHigh(net, on) ?? this.isHigh(net.name, r.nominal);
      if (high) {
        l.highNominal = Math.min(Number.isNaN(l.highNominal) ? Infinity : l.highNominal, r.nominal);
        l.highWorst = Math.min(Number.isNaN(l.highWorst) ? Infinity : l.highWorst, r.worst ?? -Infinity);
      } else {
        l.lowNominal = Math.max(Number.isNaN(l.lowNominal) ? -Infinity : l.lowNominal, r.nominal);
        l.lowWorst = Math.max(Number.isNaN(l.lowWorst) ? -Infinity : l.lowWorst, r.worst ?? Infinity);
      }
    }
    l.keys = undefined;
  }

  /**
   * Whether an input configuration is the high state: closed switches give their rail's
   * state, all open the other one; undefined where the level itself decides (no switches,
   * or all open with switches pulling both ways).
   */
  private inputHigh(net: ChainNet, on: number | undefined): boolean | undefined {
    if (on === undefined) return undefined;
    const railHigh = net.switches.map((g) => this.isHigh(net.name, g.volts));
    if (on > 0) return railHigh[on - 1];
    // All open: the other state of switches that all pull one way; by its level when they pull both ways.
    return railHigh.every((h) => h === railHigh[0]) ? !railHigh[0] : undefined;
  }

  /** The cases of a stage net that give its high level and its low level. */
  casesOf(net: ChainNet): { high: LevelCase[]; low: LevelCase[] } {
    const l = this.levels.get(net.name)!;
    const none: LevelCase[] = [{ net: net.name, on: undefined }];
    const each = net.drivers
      .map((_, i): LevelCase => ({ net: net.name, on: i }))
      .filter((c) => (net.feeders[c.on!]!.length === 0 ? this.fixed.get(net.name) === true : net.feeders[c.on!]!.every((f) => this.levels.get(f)!.canHigh)));
    const inverting = net.polarity === 'inverting';
    return { high: l.canHigh ? (inverting ? none : each) : [], low: l.canLow ? (inverting ? each : none) : [] };
  }

  /** Recomputes a stage net's levels from its inputs' present levels; true if anything moved. */
  private updateStage(net: ChainNet, used: CaseKeys): boolean {
    const l = this.levels.get(net.name)!;
    const cases = this.casesOf(net);
    const keys = [...cases.high, ...cases.low].map((c) => this.caseKey(c, net));
    used.last.set(net.name, keys);
    for (const k of keys) used.all.add(k);
    let moved = false;
    if (cases.high.length > 0) {
      const rs = cases.high.map((c) => this.solveCase(c));
      const nominal = roundTo(lowest(rs.map((r) => r.nominal)), 1e-6);
      const worst = Math.floor(lowest(rs.map((r) => r.worst ?? -Infinity)) / LEVEL_STEP) * LEVEL_STEP;
      const next = Math.min(l.highWorst, Number.isFinite(worst) ? worst : this.railMin);
      moved = moved || nominal !== l.highNominal || next !== l.highWorst;
      l.highNominal = nominal;
      l.highWorst = next;
      l.keys = undefined;
    }
    if (cases.low.length > 0) {
      const rs = cases.low.map((c) => this.solveCase(c));
      const nominal = roundTo(highest(rs.map((r) => r.nominal)), 1e-6);
      const worst = Math.ceil(highest(rs.map((r) => r.worst ?? Infinity)) / LEVEL_STEP) * LEVEL_STEP;
      const next = Math.max(l.lowWorst, Number.isFinite(worst) ? worst : this.railMax);
      moved = moved || nominal !== l.lowNominal || next !== l.lowWorst;
      l.lowNominal = nominal;
      l.lowWorst = next;
      l.keys = undefined;
    }
    return moved;
  }

  /**
   * The band of every parameter of a net's region in a case. Boundary nets get: the high
   * interval for the inputs of the driver that conducts (`on`), the low interval for the
   * inputs of drivers that must be cut off (the high one for an input that is never low),
   * and anything the rails allow for the rest (the plates of the sections the net feeds,
   * whose level does not change the grid current). `swept` gets a degenerate band at 0,
   * for the caller to set.
   */
  bandsOf(net: ChainNet, on: number | undefined, swept?: string): Band[] {
    const ps = net.parameters;
    const firstLevel = ps.length - net.region.boundaries.length;
    return ps.map((p, i) => {
      if (i < firstLevel) return p;
      const feeds = net.feeds[i - firstLevel]!;
      const l = this.levels.get(p.target);
      if (p.target === swept || !l) return { nominal: 0, low: 0, high: 0 };
      if (feeds.length === 0) return { nominal: l.canLow ? l.lowNominal : l.highNominal, low: this.railMin, high: this.railMax };
      if ((on !== undefined && feeds.includes(on)) || !l.canLow) return this.highBand(l);
      return this.lowBand(l);
    });
  }

  /**
   * A cache key for the boundary bands `bandsOf` would give (the other bands are fixed by
   * the region's kind), built without making them: the levels each band is made of.
   */
  levelKey(net: ChainNet, on: number | undefined, swept?: string): string {
    let key = '';
    const boundaries = net.region.boundaries;
    for (let j = 0; j < boundaries.length; j++) {
      const target = boundaries[j]!;
      const feeds = net.feeds[j]!;
      const l = this.levels.get(target);
      if (target === swept || !l) key += 's;';
      else {
        const keys = (l.keys ??= levelKeys(l));
        if (feeds.length === 0) key += keys.any;
        else if ((on !== undefined && feeds.includes(on)) || !l.canLow) key += keys.high;
        else key += keys.low;
      }
    }
    return key;
  }

  private highBand(l: NetLevels): Band {
    return { nominal: Math.max(l.highNominal, l.highWorst), low: l.highWorst, high: Math.max(this.railMax, l.highNominal) };
  }

  private lowBand(l: NetLevels): Band {
    return { nominal: Math.min(l.lowNominal, l.lowWorst), low: Math.min(this.railMin, l.lowNominal), high: l.lowWorst };
  }

  /** The case that gives a net's worst high (or low) level, with its result: where its bound comes from. */
  worstCaseOf(net: ChainNet, what: 'high' | 'low'): { c: LevelCase; r: CaseResult } | undefined {
    const cases = this.casesOf(net);
    let worst: { c: LevelCase; r: CaseResult } | undefined;
    const worse = (x: CaseResult) => (x.worst ?? (x.sense === 'min' ? -Infinity : Infinity)) * (x.sense === 'min' ? -1 : 1);
    for (const c of what === 'low' ? cases.low : cases.high) {
      const r = this.solveCase(c);
      if (!worst || worse(r) > worse(worst.r)) worst = { c, r };
    }
    return worst;
  }

  /** The key of a case's result: the net's region kind, the conducting driver's position, and the levels around it. */
  private caseKey(c: LevelCase, net: ChainNet): string {
    const input = net.polarity === 'input';
    const position = input ? c.on : c.on === undefined ? undefined : net.driverPositions[c.on];
    return `${net.kind}#${position}#${this.levelKey(net, input ? undefined : c.on)}`;
  }

  /** Solves one case of one net: nominal, and the worst vertex for its sense. */
  solveCase(c: LevelCase, net: ChainNet = this.nets.get(c.net)!): CaseResult {
    const input = net.polarity === 'input';
    const on = input ? undefined : c.on;
    const cacheKey = this.caseKey(c, net);
    const hit = this.results.get(cacheKey);
    if (hit) return hit;
    this.solves++;
    const problem = this.caseProblem(c, net);
    const bands = this.bandsOf(net, on);
    const sense: 'min' | 'max' = input ? 'min' : (c.on === undefined) === (net.polarity === 'inverting') ? 'min' : 'max';
    let judged = sense;
    if (input) {
      // An input's state is high or low by its nominal level; a high one is judged at its lowest.
      const at = problem.probe(bands.map((b) => b.nominal));
      judged = at && !this.isHigh(net.name, at.value) ? 'max' : 'min';
    }
    const vertex = searchVertex(bands, judged, (v) => problem.probe(v));
    const found = vertex && searchAllCorners(bands, judged, vertex, (v) => (problem.solve(v) ? problem.volts(problem.target) : undefined), localBands(problem.circuit.n));
    const result: CaseResult = { nominal: found?.nominal ?? NaN, worst: found?.worst, sense: judged, bands, vertex: found?.vertex, effects: found?.effects };
    this.results.set(cacheKey, result);
    this.added?.results.push(cacheKey);
    return result;
  }

  /** The compiled local problem a case is solved on: the net's region, with an input's switches closed as the case has them. */
  private caseProblem(c: LevelCase, net: ChainNet): LocalProblem {
    const close = new Set(net.polarity === 'input' && c.on !== undefined && c.on > 0 ? net.switches[c.on - 1]!.switches : []);
    return this.problem(net.region, close, net.kind).problem;
  }

  /**
   * What each parameter's place at a case's worst vertex does to the level there: the
   * level at the vertex minus the level with that one parameter back at nominal (one local
   * solve each, for the `SHARES` parameters of largest linearised effect; 0 for the rest
   * and where a solve fails). Unlike the slopes, the sign is the move's own, also where a
   * corner, not the slope, put the parameter at its end.
   */
  sharesAt(c: LevelCase, r: CaseResult): Float64Array | undefined {
    const { vertex, worst } = r;
    if (!vertex || worst === undefined) return undefined;
    // A result is shared by every case alike (same region kind, same levels around): so are its shares.
    if (!this.shares.has(r)) this.shares.set(r, this.sharesOf(c, r.bands, vertex, worst, r.effects));
    return this.shares.get(r);
  }

  private readonly shares = new WeakMap<CaseResult, Float64Array | undefined>();

  /** Shares worked out at most, for the parameters whose linearised effect is largest (a wide fan-out's region has thousands). */
  private static readonly SHARES = 8;

  private sharesOf(c: LevelCase, bands: readonly Band[], vertex: Float64Array, worst: number, effects: Float64Array | undefined): Float64Array | undefined {
    const ranked = bands.map((_, i) => i).sort((a, b) => Math.abs(effects?.[b] ?? 0) - Math.abs(effects?.[a] ?? 0));
    const wanted = new Set(ranked.slice(0, LevelChain.SHARES));
    const problem = this.caseProblem(c, this.nets.get(c.net)!);
    const values = Float64Array.from(vertex);
    // Each solve starts from the vertex's own solution: one parameter moves at a time.
    if (!problem.solve(values)) return undefined;
    const at = Float64Array.from(problem.solution);
    return Float64Array.from(bands, (b, i) => {
      const was = values[i]!;
      if (was === b.nominal || !wanted.has(i)) return 0;
      values[i] = b.nominal;
      const v = problem.solveFrom(values, at) ? problem.volts(problem.target) : undefined;
      values[i] = was;
      return v === undefined ? 0 : worst - v;
    });
  }

  /** A result kept under `key` (transfer curves, latch checks, fan-out probes), computed once. */
  memo<T>(key: string, compute: () => T): T {
    if (this.memos.has(key)) return this.memos.get(key) as T;
    const value = compute();
    this.memos.set(key, value);
    return value;
  }

  /**
   * A result kept under two keys: a cheap one by class (`byClass`, equal for nets of one
   * class), tried first, and one by value (`byValue()`, equal for every problem alike,
   * also across classes), built only when the first misses.
   */
  memoTwice<T>(byClass: string, byValue: () => string, compute: () => T): T {
    if (this.memos.has(byClass)) return this.memos.get(byClass) as T;
    const value = this.memo(byValue(), compute);
    this.memos.set(byClass, value);
    return value;
  }

  /** A region for `targets` with extra parts (fan-out probes), and its parameters. */
  regionWith(targets: string[], extra: readonly Part[] = []): { region: Region; parameters: LocalParameter[] } {
    const region = buildRegion(this.index, targets, extra);
    return { region, parameters: regionParameters(this.design, region, this.scenario) };
  }

  /** A net of the chain with extra parts in its region (fan-out probes): the same drivers and roles, a larger region. */
  withParts(net: ChainNet, extra: readonly Part[]): ChainNet {
    return this.netWith(net, buildRegion(this.index, [net.name], extra));
  }
}

function roundTo(v: number, step: number): number {
  return Math.round(v / step) * step;
}
