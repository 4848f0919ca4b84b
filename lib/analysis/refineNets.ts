import { designNets, type Design } from '../design/model.js';
import type { StageGraph } from '../graph/stageGraph.js';
import { logicThreshold, type StateHint } from '../solve/operatingPoint.js';
import type { AgeingScenario } from './ageing.js';
import type { NetCheck, ReceiverMargin } from './check.js';
import { CORNER_WORK, CornerBudget, decideLatch, gainCurveAt, ITERATIONS_PER_CORNER, INTERFACE_SUFFIX, latchHeld, positionsAfter, reproduceWitness, searchCorners, WholeDesign, WITNESS_KEY, witnessName, withPositions, type LatchState, type Witness } from './cornerSearch.js';
import type { LatchResult } from './latchCheck.js';
import type { ChainNet, LevelChain } from './levelChain.js';
import { receiverThresholds, sweepCurve, sweepRange, SWEEP_POINTS } from './receiverThresholds.js';
import { unityGainPoints } from './unityGain.js';
import { cutoffGrid } from './gridMargins.js';
import { P } from '../models/tubeEquations.js';
import { firstOfEach } from '../lists.js';
import { designParameters } from './parameters.js';
import type { Progress } from '../progress.js';

/**
 * Bracketed verdicts for nets: a net whose bound misses the requirement is put to the
 * corners of the whole design, in every state of its contacts and latches in which it
 * takes the level in question. The worst corner found is a witness when the level fails
 * there, judged against the receiving stage's thresholds worked out at the same values
 * (its transfer curve swept with every part at the witness's value and the nets around
 * it at their voltages there). When the search was exhaustive and the level found clears
 * the worst-case thresholds by the required margin, the net passes: no corner is worse.
 * Otherwise it is undecided.
 */

/** Rounds of the margin witness search at most (each moves every part once). */
export const MARGIN_ROUNDS = 3;

/** Whole-design states tried at most per net (contact positions times latch states); past it the bound's verdict stands as undecided. */
export const MAX_WHOLE_STATES = 32;

/** One state of the whole design: the contacts moved from the design's own positions (a switch the design closes opened, any other closed, a button pressed), and the latch hints. */
export interface WholeState {
  moved: string[];
  hints: StateHint[];
}

/**
 * The states a net's level is looked for in: every contact as the design sets it and each
 * one moved alone, times every combination of latch states (each latch's first net high or low;
 * with more than three latches, all low and all high). Undefined past `MAX_WHOLE_STATES`.
 */
export function wholeStates(design: Design, graph: StageGraph): WholeState[] | undefined {
  const contacts = [[], ...design.parts.filter((p) => p.type === 'switch').map((p) => [p.name])];
  const latches = graph.loops.filter((l) => l.kind === 'latch').map((l) => l.nets[0]!);
  const patterns = latches.length <= 3 ? Array.from({ length: 2 ** latches.length }, (_, m) => latches.map((net, i) => ({ net, high: (m & (1 << i)) !== 0 }))) : [false, true].map((high) => latches.map((net) => ({ net, high })));
  if (contacts.length * patterns.length > MAX_WHOLE_STATES) return undefined;
  return contacts.flatMap((moved) => patterns.map((hints) => ({ moved, hints })));
}

/** States (contact combinations times latch states) that `everyState` lists at most. */
export const MAX_EVERY_STATES = 16;

/**
 * Every state of the design: each combination of its contacts' positions (closed or open,
 * pressed or not) times each combination of its latches' states. Undefined for a design
 * with a loop that is not a latch, or with more than `MAX_EVERY_STATES` states.
 */
export function everyState(design: Design, graph: StageGraph): WholeState[] | undefined {
  if (graph.loops.some((l) => l.kind !== 'latch')) return undefined;
  const contacts = design.parts.filter((p) => p.type === 'switch').map((p) => p.name);
  const latches = graph.loops.map((l) => l.nets[0]!);
  if (2 ** (contacts.length + latches.length) > MAX_EVERY_STATES) return undefined;
  const subsets = <T>(items: T[]): T[][] => Array.from({ length: 2 ** items.length }, (_, m) => items.filter((_, i) => (m & (1 << i)) !== 0));
  return subsets(contacts).flatMap((moved) => subsets(latches).map((up) => ({ moved, hints: latches.map((net) => ({ net, high: up.includes(net) })) })));
}

/**
 * Each net's logic value in a state, from its inputs' levels at nominal values and the
 * latches' hints: a plate net is high when none of its sections has a high input, a
 * cathode net when one has; a section whose grid no logic net feeds is on or off as the
 * chain found it. Undefined where the logic does not say (a net driven both ways).
 */
export function stateLogic(chain: LevelChain, state: WholeState, nominal: (net: string) => number | undefined): Map<string, boolean | undefined> {
  const logic = new Map<string, boolean | undefined>();
  for (const h of state.hints) logic.set(h.net, h.high);
  for (const [name, net] of chain.nets) {
    if (net.polarity !== 'input') continue;
    const v = nominal(name);
    logic.set(name, v === undefined ? undefined : v > logicThreshold(chain.design, name));
  }
  for (let changed = true; changed; ) {
    changed = false;
    for (const name of chain.order) {
      if (logic.get(name) !== undefined) continue;
      const net = chain.nets.get(name)!;
      if (net.polarity !== 'inverting' && net.polarity !== 'follower') continue;
      // A section conducts when one of its inputs is high; is off when all are low.
      const conducts = net.feeders.map((fs) => (fs.length === 0 ? chain.fixed.get(name) : fs.some((f) => logic.get(f) === true) ? true : fs.every((f) => logic.get(f) === false) ? false : undefined));
      const any = conducts.some((c) => c === true) ? true : conducts.every((c) => c === false) ? false : undefined;
      if (any === undefined) continue;
      logic.set(name, net.polarity === 'inverting' ? !any : any);
      changed = true;
    }
  }
  return logic;
}

/** What refining one net gives: a new status and basis, the worst levels found, and a witness for a failure. */
export interface NetRefinement {
  status: 'pass' | 'fail' | 'undecided';
  basis: 'corners' | 'witness' | 'undecided';
  found: { high: number | undefined; low: number | undefined };
  witness: Witness | undefined;
  reason: string;
  corners: number;
}

/** Shared by the refinements of one check: the whole design per contact set, and the corners left to spend. */
export class Refiner {
  private readonly wholes = new Map<string, WholeDesign>();
  private readonly starts = new Map<string, Float64Array | null>();
  readonly states: WholeState[] | undefined;
  /** `states` are every state of the design (`everyState`), not a sample of them: only then can corners pass a net. */
  readonly complete: boolean;

  /**
   * The budget of the witnesses tried at one corner each (\`boundWitness\`, \`gainWitness\`),
   * apart from the search's, so that they still run where one search spent that: a few
   * solves of the whole design per net, which a design of thousands of stages cannot pay.
   */
  readonly spare = new CornerBudget(SPARE_WORK);
  /** Receiving curves (\`ReceiverThresholds.key\`) a gain witness was looked for at and not found. */
  private readonly flatShown = new Set<string>();
  /** Classes of alike nets (\`NetCheck.classId\`) whose bound's corner was tried and showed no failure. */
  private readonly boundShown = new Set<number>();

  constructor(
    readonly design: Design,
    readonly graph: StageGraph,
    readonly scenario: AgeingScenario,
    readonly chain: LevelChain,
    readonly budget: CornerBudget,
    /** Levels the whole design was already searched for in every state (`tightenLevels`): their worst point, taken as found. */
    readonly seeds: ReadonlyMap<string, { high?: Seed; low?: Seed }> = new Map(),
  ) {
    const every = everyState(design, graph);
    this.complete = every !== undefined;
    this.states = every ?? wholeStates(design, graph);
  }

  /** Each net's logic value in state `s` of the whole design `w`, its inputs read at nominal values from `start`. */
  logicOf(w: WholeDesign, s: WholeState, start: Float64Array): Map<string, boolean | undefined> {
    const c = w.problem.circuit;
    return stateLogic(this.chain, s, (net) => {
      const t = c.terminalOf.get(net);
      return t === undefined ? undefined : t >= 0 ? start[t]! : c.fixedVolts[-1 - t]!;
    });
  }

  /**
   * State \`s\` of the whole design and its solution at nominal values, where the spare
   * budget can pay for \`solves\` more solves of it, and for finding the state the first
   * time (\`STATE_SOLVES\`, charged then); \`'spent'\` when it cannot, undefined where the state
   * does not exist.
   */
  private spareState(s: WholeState, solves: number, iterations = ITERATIONS_PER_CORNER): { w: WholeDesign; start: Float64Array } | 'spent' | undefined {
    const fresh = !this.starts.has(this.stateKey(s));
    if (!this.spare.couldSolve(this.design, solves * iterations + (fresh ? STATE_SOLVES * ITERATIONS_PER_CORNER : 0), 1)) return 'spent';
    const w = this.whole(s.moved);
    if (fresh) this.spare.spend(STATE_SOLVES * ITERATIONS_PER_CORNER * w.problem.circuit.n);
    const start = this.start(s);
    return start && { w, start };
  }

  /** The whole design with the contacts `moved` from the design's own positions. */
  whole(moved: readonly string[]): WholeDesign {
    const key = moved.join('\u0000');
    let w = this.wholes.get(key);
    if (!w) this.wholes.set(key, (w = new WholeDesign(withPositions(this.design, positionsAfter(this.design, moved)), this.graph, this.scenario)));
    return w;
  }

  private stateKey(s: WholeState): string {
    return `${s.moved.join('\u0000')}|${s.hints.map((h) => `${h.net}=${h.high}`).join(',')}`;
  }

  /** The state's solution at nominal values (undefined where it does not exist). */
  start(s: WholeState): Float64Array | undefined {
    const key = this.stateKey(s);
    if (!this.starts.has(key)) this.starts.set(key, this.whole(s.moved).state(s.hints) ?? null);
    return this.starts.get(key) ?? undefined;
  }

  /** The latches of a state, as the corner search keeps them. */
  latchStates(w: WholeDesign, s: WholeState): LatchState[] {
    return this.graph.loops
      .filter((l) => l.kind === 'latch')
      .map((l) => {
        const [a, b] = l.nets as [string, string];
        const aHigh = s.hints.find((h) => h.net === a)?.high ?? false;
        return { high: w.terminal(aHigh ? a : b), low: w.terminal(aHigh ? b : a), threshold: logicThreshold(this.design, a) };
      });
  }

  /**
   * The worst corner over the states in which `net`'s logic makes it `high` (or low), for
   * an objective of terminals. A level of the net itself (`level`) already searched in
   * every state by `tightenLevels` is taken from there.
   */
  private worstOver(net: string, high: boolean, terms: (w: WholeDesign) => { terminal: number; weight: number }[], worst: 'min' | 'max', level = false): { found: Found | undefined; corners: number; exhaustive: boolean; states: number } | undefined {
    const seed = level ? this.seeds.get(net)?.[high ? 'high' : 'low'] : undefined;
    if (seed) return { found: seed.found, corners: seed.corners, exhaustive: seed.exact, states: 1 };
    let found: Found | undefined;
    let corners = 0;
    let exhaustive = true;
    let states = 0;
    for (const s of this.states!) {
      const w = this.whole(s.moved);
      // What a search would cost is known before any solve: past the budget, nothing more is
      // solved, and what the states searched so far found stands, short of every corner.
      if (!this.budget.affords(w, w.corners)) {
        if (corners === 0) return undefined;
        exhaustive = false;
        break;
      }
      const start = this.start(s);
      const t = w.problem.circuit.terminalOf.get(net);
      if (!start || t === undefined) continue;
      // The state's logic says whether the net takes this level in it (a failing net may read otherwise).
      if (this.logicOf(w, s, start).get(net) !== high) continue;
      states++;
      const a = searchCorners(w, { terms: terms(w), worst, start, latches: this.latchStates(w, s), cap: this.budget.left });
      corners += a.corners;
      this.budget.spend(a.work);
      exhaustive &&= a.exhaustive && !a.lost;
      if (a.worst !== undefined && (!found || (worst === 'min' ? a.worst < found.value : a.worst > found.value))) found = { value: a.worst, values: a.at!, ranked: a.ranked, state: s, w, start };
    }
    return { found, corners, exhaustive, states };
  }

  /**
   * A corner of the level's worst corner `f` with the receiving stage's own parameters
   * moved to the corner its worst-case threshold was found at (VIH's for a high level,
   * VIL's for a low one); undefined where that stage has no such corner or the state is lost.
   */
  private withReceiverCorner(f: Found, driving: string, rc: ReceiverMargin, high: boolean): Found | undefined {
    const receiver = this.graph.nets.find((x) => x.name === driving)?.receivers.find((r) => r.section === rc.section);
    const stage = this.chain.nets.get(rc.stage);
    const t = receiver && stage && receiverThresholds(this.chain, driving, receiver);
    if (!t || !stage) return undefined;
    const corner = high ? t.corners.late : t.corners.early;
    const values = Float64Array.from(f.values);
    f.w.putCorner(stage.parameters, corner, values);
    const w = f.w;
    if (!w.problem.solveFrom(values, f.start)) return undefined;
    const latches = this.latchStates(w, f.state);
    if (!latches.every((l) => latchHeld(w.problem.volts(l.high), w.problem.volts(l.low), l.threshold))) return undefined;
    return { ...f, values, value: w.problem.volts(w.terminal(driving)) };
  }

  private witnessAt(f: Found, shows: string, level?: Witness['level']): Witness {
    return {
      values: f.w.named(f.values),
      key: f.ranked.slice(0, WITNESS_KEY).map((i) => witnessName(f.w.parameters[i]!)),
      positions: positionsAfter(this.design, f.state.moved),
      states: Object.fromEntries(f.state.hints.map((h) => [h.net, h.high ? 'high' : 'low'])),
      shows,
      ...(level ? { level } : {}),
    };
  }

  /**
   * A witness of net `n`'s level failing at the point `f` (its level there past the logic
   * threshold, or short of the required margin against a receiving stage's VIH or VIL
   * worked out at the same values); undefined where it does not fail there. Judged first
   * at `f`, then with the receiving stage's own parts moved to the corner that makes its
   * threshold worst (a weak driver and a strong receiver are different sections).
   */
  levelWitness(n: NetCheck, high: boolean, f: Found, required: number, budget?: CornerBudget): Witness | undefined {
    const threshold = n.thresholdVolts;
    let failure: { at: Found; volts: number; against: NonNullable<Witness['level']>['against'] } | undefined;
    if (high ? f.value <= threshold : f.value >= threshold) failure = { at: f, volts: f.value, against: { what: 'logic threshold', volts: threshold } };
    // Whole-design solves, charged to \`budget\` where one is given (a net feeding thousands of inputs has as many receiving corners); none once it is spent.
    const charged = <T>(w: WholeDesign, work: () => T): T | undefined => {
      if (budget && budget.left <= 0) return undefined;
      const before = w.problem.system.iterationCount;
      const result = work();
      budget?.spend((w.problem.system.iterationCount - before) * w.problem.circuit.n);
      return result;
    };
    let namedAtF: Record<string, number> | undefined;
    // On a budget, alike receiving stages (one class, the same worst thresholds) are one question: the first of them is asked.
    const receivers = budget ? firstOfEach(n.receivers, (rc) => `${this.chain.classOf(rc.stage)}|${rc.vilMin}|${rc.vihMax}`) : n.receivers;
    for (const rc of failure ? [] : receivers) {
      const candidates = [f, charged(f.w, () => this.withReceiverCorner(f, n.name, rc, high))].filter((c): c is Found => c !== undefined);
      for (const c of candidates) {
        if (!charged(c.w, () => c.w.problem.solveFrom(c.values, c.start))) continue;
        const volts = c.w.problem.volts(c.w.terminal(n.name));
        const named = c === f ? (namedAtF ??= f.w.named(f.values)) : c.w.named(c.values);
        const t = thresholdsAt(this.chain, named, (net) => c.w.problem.volts(c.w.terminal(net)), n.name, rc);
        if (t && (high ? volts - t.vih : t.vil - volts) < required) {
          failure = { at: c, volts, against: { what: high ? 'VIH' : 'VIL', volts: high ? t.vih : t.vil, stage: rc.stage } };
          break;
        }
      }
      if (failure) break;
    }
    if (!failure) return undefined;
    const { at, volts, against } = failure;
    const q = high ? 'high' : 'low';
    const shows = `${n.name} ${q} at ${volts.toFixed(3)} V against ${against.what === 'logic threshold' ? 'its logic threshold' : `${against.stage}'s ${against.what}`} ${against.volts.toFixed(3)} V${against.what === 'logic threshold' ? '' : (high ? volts < against.volts : volts > against.volts) ? `: past it, no noise margin left (${required.toFixed(2)} V required)` : `: a noise margin of ${Math.abs(volts - against.volts).toFixed(3)} V, below the required ${required.toFixed(2)} V`}`;
    return this.witnessAt(at, shows, { net: n.name, state: q, volts, against, required: against.what === 'logic threshold' ? 0 : required });
  }

  /**
   * A witness of net `n`'s noise margin against one receiving stage falling short of
   * `required` where no single worst point does (its worst level and its receiver's worst
   * threshold sit at different corners, and a part that moves one moves the other: a
   * receiving grid that clamps the net also sets where its stage switches). From the
   * level's worst point, and from it with the receiving stage at its threshold's worst
   * corner, each part in turn is moved to its band's other end and kept there where the
   * margin (the level less VIH, or VIL less the level, both worked out at the same values)
   * shrinks, up to `MARGIN_ROUNDS` rounds, its whole-design solves taken from the check's
   * corner budget; the first point short of the requirement is judged by `levelWitness`.
   * Undefined where none is found or the budget runs out.
   */
  marginWitness(n: NetCheck, high: boolean, f: Found, required: number): Witness | undefined {
    const w = f.w;
    const bands = w.parameters;
    const latches = this.latchStates(w, f.state);
    const varied = bands.map((_, i) => i).filter((i) => bands[i]!.high > bands[i]!.low);
    for (const rc of n.receivers) {
      const margin = (values: Float64Array): number | undefined => {
        if (this.budget.left <= 0) return undefined;
        const before = w.problem.system.iterationCount;
        const solved = w.problem.solveFrom(values, f.start);
        this.budget.spend((w.problem.system.iterationCount - before) * w.problem.circuit.n);
        if (!solved) return undefined;
        if (!latches.every((l) => latchHeld(w.problem.volts(l.high), w.problem.volts(l.low), l.threshold))) return undefined;
        const volts = w.problem.volts(w.terminal(n.name));
        const t = thresholdsAt(this.chain, w.named(values), (net) => w.problem.volts(w.terminal(net)), n.name, rc);
        return t && (high ? volts - t.vih : t.vil - volts);
      };
      for (const from of [f, this.withReceiverCorner(f, n.name, rc, high)]) {
        if (!from) continue;
        let values = Float64Array.from(from.values);
        let best = margin(values);
        if (best === undefined) continue;
        for (let round = 0; round < MARGIN_ROUNDS && best >= required; round++) {
          let moved = false;
          for (const i of varied) {
            const b = bands[i]!;
            const trial = Float64Array.from(values);
            trial[i] = trial[i]! - b.low > b.high - trial[i]! ? b.low : b.high;
            const m = margin(trial);
            if (m !== undefined && m < best) {
              [values, best, moved] = [trial, m, true];
              if (best < required) break;
            }
          }
          if (!moved) break;
        }
        if (best >= required || !w.problem.solveFrom(values, f.start)) continue;
        const witness = this.levelWitness(n, high, { ...f, values, value: w.problem.volts(w.terminal(n.name)) }, required);
        if (witness) return witness;
      }
    }
    return undefined;
  }

  /**
   * A witness for net `n` by analogy with the level witness of `model`, a net of the same
   * class (an alike net the budget reached first): the model's witness with the values of
   * the parts around the two nets exchanged, part for part (their regions, and those of the
   * nets feeding them, correspond position by position), solved whole and judged afresh.
   * Undefined where that point does not show `n` failing.
   */
  byAnalogy(n: NetCheck, model: NetCheck, required: number): Witness | undefined {
    const mw = model.witness;
    // Charged to the spare budget: a design of thousands of alike nets cannot pay a whole solve for each.
    if (!mw?.level || this.spare.left <= 0) return undefined;
    const high = mw.level.state === 'high';
    const swap = partExchange(this.chain, [[model.name, n.name]]);
    const state: WholeState = {
      moved: this.design.parts.flatMap((p) => (p.type === 'switch' && mw.positions[p.name] !== undefined && (mw.positions[p.name] === 'closed') !== p.closed ? [p.name] : [])),
      hints: Object.entries(mw.states).map(([net, v]) => ({ net, high: v === 'high' })),
    };
    const w = this.whole(state.moved);
    const start = this.start(state);
    if (!start || this.logicOf(w, state, start).get(n.name) !== high) return undefined;
    const named = (name: string) => {
      const [part, suffix] = name.endsWith(INTERFACE_SUFFIX) ? [name.slice(0, -INTERFACE_SUFFIX.length), INTERFACE_SUFFIX] : [name, ''];
      return mw.values[`${swap.get(part) ?? part}${suffix}`];
    };
    const values = Float64Array.from(w.parameters, (p, i) => named(witnessName(p)) ?? w.nominal[i]!);
    const before = w.problem.system.iterationCount;
    const solved = w.problem.solveFrom(values, start);
    this.spare.spend((w.problem.system.iterationCount - before) * w.problem.circuit.n);
    if (!solved) return undefined;
    const latches = this.latchStates(w, state);
    if (!latches.every((l) => latchHeld(w.problem.volts(l.high), w.problem.volts(l.low), l.threshold))) return undefined;
    const ranked = mw.key.map((k) => w.parameters.findIndex((p) => witnessName(p) === (swap.get(k) ?? k))).filter((i) => i >= 0);
    return this.levelWitness(n, high, { value: w.problem.volts(w.terminal(n.name)), values, ranked, state, w, start }, required, this.spare);
  }

  /**
   * A witness looked for where the search of net `n`'s corners is out of reach or did not
   * decide: the corner its own bound comes from (the vertex of the local case that gives
   * its worst level: its region's parts, rails and sections at their ends there), every
   * other part nominal, solved whole in up to \`BOUND_STATES\` states where the net takes
   * that level, and judged as \`levelWitness\` judges a found level (against each receiving
   * stage's thresholds at the same values, and with that stage at its threshold's worst
   * corner). A bound that is pessimistic only by a little fails at that corner too, for a
   * solve and a few sweeps, where a search would cost thousands of solves. Undefined where
   * it does not fail there.
   */
  boundWitness(n: NetCheck, required: number, questions: readonly RefineQuestion[]): Witness | undefined {
    const net = this.chain.nets.get(n.name);
    // Alike nets are one question (their bounds come from the same corner): where one showed no witness, the others are not tried.
    if (!net || this.boundShown.has(n.classId)) return undefined;
    const witness = this.atBound(n, net, required, questions);
    if (!witness) this.boundShown.add(n.classId);
    return witness;
  }

  private atBound(n: NetCheck, net: ChainNet, required: number, questions: readonly RefineQuestion[]): Witness | undefined {
    for (const q of questions) {
      if (q === 'cutoff') continue;
      const high = q === 'high';
      const worst = this.chain.worstCaseOf(net, q);
      const vertex = worst?.r.vertex;
      if (!vertex) continue;
      const effects = worst.r.effects;
      let tried = 0;
      for (const s of this.states ?? []) {
        // A solve of the level and two of the receiving stage's corner, at most, per state.
        const at = this.spareState(s, 3);
        if (at === 'spent') return undefined;
        if (!at) continue;
        const { w, start } = at;
        if (this.logicOf(w, s, start).get(n.name) !== high) continue;
        if (tried++ >= BOUND_STATES) break;
        const before = w.problem.system.iterationCount;
        const values = Float64Array.from(w.nominal);
        const moved = w.putCorner(net.parameters, vertex, values);
        const solved = w.problem.solveFrom(values, start) && this.latchStates(w, s).every((l) => latchHeld(w.problem.volts(l.high), w.problem.volts(l.low), l.threshold));
        this.spare.spend((w.problem.system.iterationCount - before) * w.problem.circuit.n);
        // Most effect first: the vertex's parts ranked by their linearised effect on the level.
        const effect = (m: { local: number }) => Math.abs(effects?.[m.local] ?? 0);
        const ranked = moved.sort((a, b) => effect(b) - effect(a)).map((m) => m.whole);
        const witness = solved ? this.levelWitness(n, high, { value: w.problem.volts(w.terminal(n.name)), values, ranked, state: s, w, start }, required, this.spare) : undefined;
        if (witness) return witness;
      }
    }
    return undefined;
  }

  /**
   * A witness of receiving stage `n`'s gain never reaching 1 from one of the nets in
   * `drivers` (those whose worst-case thresholds found a corner with no unity-gain point):
   * the stage's own parts at that corner, every other part nominal, in a state where the
   * stage's other inputs are low, the driving net held and swept across the whole design
   * (`gainCurveAt`, as \`solve --at\` re-solves it). Undefined where the whole design's curve
   * reaches a gain of 1 in every such state (the flat curve came from the nets around the
   * stage at the ends of their bounds, which no corner need give together).
   */
  gainWitness(n: NetCheck, drivers: readonly string[]): Witness | undefined {
    const stage = this.chain.nets.get(n.name);
    if (!stage) return undefined;
    for (const driving of drivers) {
      for (const receiver of this.graph.nets.find((x) => x.name === driving)?.receivers.filter((r) => r.output === n.name) ?? []) {
        const t = receiverThresholds(this.chain, driving, receiver);
        // Receivers with equal curves (alike stages, alike levels around them) are one question: where one showed no witness, the others are not tried.
        if (!t || (t.vilMin !== undefined && t.vihMax !== undefined) || this.flatShown.has(t.key)) continue;
        const corner = t.vilMin === undefined ? t.corners.early : t.corners.late;
        const others = stage.feeders.flat().filter((f) => f !== driving);
        let tried = 0;
        for (const s of this.states ?? [{ moved: [], hints: [] }]) {
          // One solve per point of the sweep.
          const at = this.spareState(s, SWEEP_POINTS, GAIN_POINT_ITERATIONS);
          if (at === 'spent') return undefined;
          if (!at) continue;
          const { w, start } = at;
          const logic = this.logicOf(w, s, start);
          if (others.some((f) => logic.get(f) !== false)) continue;
          if (tried++ >= GAIN_STATES) break;
          const values = Float64Array.from(w.nominal);
          const key = w.putCorner(stage.parameters, corner, values).map((m) => witnessName(w.parameters[m.whole]!));
          const { from, to } = sweepRange(this.chain, driving);
          const witness = {
            values: w.named(values),
            key: key.slice(0, WITNESS_KEY),
            positions: positionsAfter(this.design, s.moved),
            states: Object.fromEntries(s.hints.map((h) => [h.net, h.high ? 'high' : 'low'] as const)),
            gain: { net: driving, stage: n.name, from, to, points: SWEEP_POINTS, steepest: 0 },
          };
          this.spare.spend(SWEEP_POINTS * GAIN_POINT_ITERATIONS * w.problem.circuit.n);
          const g = gainCurveAt(this.design, witness);
          if (!g || g.unity) continue;
          witness.gain.steepest = g.steepest;
          return { ...witness, shows: `its gain from ${driving} never reaches 1: with ${driving} held from ${from.toFixed(3)} to ${to.toFixed(3)} V, ${n.name} falls at most ${g.steepest.toFixed(3)} V per volt, so it cannot restore the levels it is given` };
        }
        this.flatShown.add(t.key);
      }
    }
    return undefined;
  }

  /**
   * Why `refine` searched nothing: the states cannot be listed, the design is too large for
   * one search of its corners even within the whole budget, or the budget went on other nets.
   */
  notSearched(): string {
    if (!this.states) return 'the design has too many contact and latch states to search its corners';
    if (!this.budget.couldAfford(this.design, 1, this.budget.total)) {
      return `the design is too large to search its corners within this check's budget (${designParameters(this.design).length.toLocaleString('en')} toleranced parameters, ${designNets(this.design).length.toLocaleString('en')} nets; no corner was solved)`;
    }
    return "this check's budget for corners of the whole design is spent";
  }

  /**
   * Refines a failing net whose failure is in its levels or its drivers' cutoff: each
   * question the bound fails is searched for over the states it arises in, those the
   * whole-design levels already answered first. Undefined when no question could be
   * answered (the states cannot be listed, or the budget is spent): its bound's verdict
   * then stands, undecided.
   */
  refine(n: NetCheck, required: number, questions: RefineQuestion[]): NetRefinement | undefined {
    // Questions the whole-design levels answered (`tightenLevels`) cost nothing: asked first,
    // and still asked where the budget leaves no search for the others.
    const seeded = (q: RefineQuestion) => q !== 'cutoff' && this.seeds.get(n.name)?.[q] !== undefined;
    let asked = [...questions].sort((a, b) => Number(seeded(b)) - Number(seeded(a)));
    let exhaustive = true;
    if (asked.some((q) => !seeded(q)) && (!this.states || (this.wholes.size === 0 && !this.budget.couldAfford(this.design)))) {
      asked = asked.filter(seeded);
      exhaustive = false;
    }
    let answered = 0;
    const threshold = n.thresholdVolts;
    const found: NetRefinement['found'] = { high: undefined, low: undefined };
    let corners = 0;
    let inStates = 0;
    let witness: Witness | undefined;
    let cleared = true;
    const vihBound = n.receivers.reduce<number | undefined>((m, r) => (r.vihMax === undefined ? m : Math.max(m ?? -Infinity, r.vihMax)), undefined);
    const vilBound = n.receivers.reduce<number | undefined>((m, r) => (r.vilMin === undefined ? m : Math.min(m ?? Infinity, r.vilMin)), undefined);
    for (const q of asked) {
      if (q === 'cutoff') {
        // Each driver's grid against its cathode, pushed up while the net is high; cut off or not at that corner.
        for (const section of this.chain.nets.get(n.name)?.drivers ?? []) {
          const tube = (w: WholeDesign) => w.problem.circuit.design.parts.findIndex((p) => p.name === section);
          const terms = (w: WholeDesign) => {
            const c = w.problem.circuit;
            const t = c.tubePart.indexOf(tube(w));
            return [
              { terminal: c.tG[t]!, weight: 1 },
              { terminal: c.tK[t]!, weight: -1 },
            ];
          };
          const r = this.worstOver(n.name, true, terms, 'max');
          if (!r) {
            exhaustive = false;
            continue;
          }
          answered++;
          corners += r.corners;
          inStates += r.states;
          exhaustive &&= r.exhaustive;
          if (!r.found) continue;
          const f = r.found;
          f.w.problem.solveFrom(f.values, f.start);
          const c = f.w.problem.circuit;
          const t = c.tubePart.indexOf(tube(f.w));
          const v = (k: number) => f.w.problem.volts(k);
          const vk = v(c.tK[t]!);
          const cutoff = cutoffGrid(c.tubeParams, t * P.size, v(c.tA[t]!) - vk, c.hasScreen[t] ? v(c.tS[t]!) - vk : 0);
          if (cutoff === undefined) continue;
          if (f.value > cutoff) {
            witness ??= { ...this.witnessAt(f, `${section} is not cut off while ${n.name} is high: its grid sits at ${f.value.toFixed(3)} V, above its cutoff at ${cutoff.toFixed(3)} V`), grid: { section, vgk: f.value, cutoff } };
          }
        }
        continue;
      }
      const high = q === 'high';
      const r = this.worstOver(n.name, high, (w) => [{ terminal: w.terminal(n.name), weight: 1 }], high ? 'min' : 'max', true);
      if (!r) {
        exhaustive = false;
        continue;
      }
      answered++;
      corners += r.corners;
      inStates += r.states;
      exhaustive &&= r.exhaustive;
      const f = r.found;
      if (!f) {
        cleared = false;
        continue;
      }
      found[q] = f.value;
      // Cleared for good only against the worst-case thresholds, which bound those of every corner: then no margin search can fail it.
      const clears = high ? f.value > threshold && (vihBound === undefined || f.value - vihBound >= required) : f.value < threshold && (vilBound === undefined || vilBound - f.value >= required);
      witness ??= this.levelWitness(n, high, f, required) ?? (clears ? undefined : this.marginWitness(n, high, f, required));
      cleared &&= clears;
    }
    if (witness) return { status: 'fail', basis: 'witness', found, witness, corners, reason: `at the corner of its witness, ${witness.shows}` };
    // Nothing asked could be afforded: the bound's verdict stands, undecided.
    if (answered === 0) return undefined;
    if (exhaustive && cleared && this.complete) {
      return { status: 'pass', basis: 'corners', found, witness: undefined, corners, reason: `every corner of the whole design keeps it within its limits (${corners.toLocaleString('en')} corners solved); the chained bounds alone could not show it` };
    }
    if (corners === 0) {
      // No corner solved: either no state's logic gives the net the level in question (a loop that is not a latch, such as an odd ring of inverters, has no static logic), or the budget ran out first.
      const why = inStates === 0 ? 'no state of its contacts and latches gives it the level in question by its logic (a loop that is not a latch has no static logic state), so no corner was searched' : "this check's budget for corners of the whole design ran out before any of its own was solved";
      return { status: 'undecided', basis: 'undecided', found, witness: undefined, corners, reason: `its bound fails, and ${why}` };
    }
    const why = !exhaustive ? 'not every corner was solved' : !cleared ? 'the level found does not clear the worst-case thresholds' : 'not every state of its contacts and latches was searched';
    const against = (['high', 'low'] as const).flatMap((q) => {
      const bound = q === 'high' ? n.high?.worst : n.low?.worst;
      return found[q] === undefined || bound === undefined ? [] : [`worst ${q} found ${found[q]!.toFixed(2)} V, bound ${bound.toFixed(2)} V`];
    });
    return { status: 'undecided', basis: 'undecided', found, witness: undefined, corners, reason: `no corner searched fails it (${corners.toLocaleString('en')} solved${against.length ? `; ${against.join(', ')}` : ''}), but its bound does, and ${why}` };
  }
}

/** The spare budget (\`Refiner.spare\`), in Newton iterations times unknowns, as \`CORNER_WORK\`. */
export const SPARE_WORK = CORNER_WORK;

/** What finding a state of the whole design is charged, in solves from a neighbour (it is solved afresh, with its latches pinned). */
export const STATE_SOLVES = 10;

/** States a bound's own corner is tried in at most, per level (each one whole solve and a few threshold sweeps). */
export const BOUND_STATES = 2;

/**
 * What a point of a gain witness's sweep is charged, in Newton iterations: each is a solve
 * of the whole design as \`solve\` makes it, with its report, not a step from a neighbour.
 */
export const GAIN_POINT_ITERATIONS = 10;

/** States a gain witness is looked for in, at most, per receiving section (each one sweep of the whole design). */
export const GAIN_STATES = 1;

/** What a net's bound can fail on that the corners of the whole design can decide. */
export type RefineQuestion = 'high' | 'low' | 'cutoff';

/** A level's worst point found by searching the whole design in every state, and whether every parameter was enumerated there (no allowance). */
export interface Seed {
  found: Found;
  exact: boolean;
  corners: number;
}

export interface Found {
  value: number;
  values: Float64Array;
  /** The parameters the search enumerated, most effect first. */
  ranked: number[];
  state: WholeState;
  w: WholeDesign;
  start: Float64Array;
}

/**
 * The unity-gain thresholds of receiving stage `r` seen from `driving`, at a witness: every
 * parameter of the stage's region at the witness's value, the nets around it at their
 * voltages there, the driving net swept.
 */
export function thresholdsAt(chain: LevelChain, values: Readonly<Record<string, number>>, voltsAt: (net: string) => number, driving: string, r: ReceiverMargin): { vil: number; vih: number } | undefined {
  const stage = chain.nets.get(r.stage);
  if (!stage || stage.polarity !== 'inverting') return undefined;
  const boundary = stage.region.boundaries.indexOf(driving);
  if (boundary < 0) return undefined;
  const { problem } = chain.problem(stage.region, undefined, stage.kind);
  const local = Float64Array.from(stage.parameters, (p) => (p.kind === 'level' ? voltsAt(p.target) : (values[witnessName(p)] ?? p.nominal)));
  const swept = stage.parameters.length - stage.region.boundaries.length + boundary;
  const { from, to } = sweepRange(chain, driving);
  const curve = sweepCurve(problem, local, swept, from, to);
  const points = curve && unityGainPoints(curve.vin, curve.vout);
  return points && { vil: points.vil, vih: points.vih };
}

/** What `check` knows when it refines its verdicts. */
export interface RefineContext {
  design: Design;
  graph: StageGraph;
  scenario: AgeingScenario;
  chain: LevelChain;
  required: number;
  /** Receiving stages whose gain never reaches 1, by stage, with the nets that drive them. */
  flatInputs: ReadonlyMap<string, string[]>;
  /** The budget (`CORNER_WORK` when absent). */
  cornerWork?: number | undefined;
  /** Levels already searched on the whole design (`tightenLevels`). */
  seeds?: ReadonlyMap<string, { high?: Seed; low?: Seed }> | undefined;
  /** Told as the budget is spent. */
  progress?: Progress | undefined;
}

/**
 * The parts of alike nets' regions exchanged position by position, both ways (`a`'s k-th
 * part ↔ `b`'s k-th), for each pair of nets and, one level out, the nets feeding them:
 * where a witness of one names a part, the image for the other names its counterpart.
 */
function partExchange(chain: LevelChain, pairs: readonly (readonly [string, string])[]): Map<string, string> {
  const swap = new Map<string, string>();
  const pair = (a: string, b: string, depth: number): void => {
    const ca = chain.nets.get(a);
    const cb = chain.nets.get(b);
    if (!ca || !cb || ca.kind !== cb.kind || depth < 0) return;
    ca.region.parts.forEach((p, i) => {
      const q = cb.region.parts[i]!;
      if (p.name === q.name || swap.has(p.name) || swap.has(q.name)) return;
      swap.set(p.name, q.name).set(q.name, p.name);
    });
    ca.feeders.forEach((fs, i) => fs.forEach((f, j) => cb.feeders[i]?.[j] !== undefined && pair(f, cb.feeders[i]![j]!, depth - 1)));
  };
  for (const [a, b] of pairs) pair(a, b, 1);
  return swap;
}

/**
 * A latch that lost a state (`model`, with its witness) seen in an alike latch `l` (its
 * nets of the same classes): the witness's values with the parts around the two latches
 * exchanged, its states and contacts moved over. Undefined where the classes do not match.
 */
function latchImage(chain: LevelChain, classOf: ReadonlyMap<string, number>, model: LatchResult, l: LatchResult): Witness | undefined {
  const mw = model.witness!;
  const [ma, mb] = model.nets;
  const [a, b] = classOf.get(ma) === classOf.get(l.nets[0]) && classOf.get(mb) === classOf.get(l.nets[1]) ? l.nets : classOf.get(ma) === classOf.get(l.nets[1]) && classOf.get(mb) === classOf.get(l.nets[0]) ? [l.nets[1], l.nets[0]] : [];
  if (!a || !b) return undefined;
  const swap = partExchange(chain, [[ma, a], [mb, b]]);
  const image = (name: string) => {
    const [part, suffix] = name.endsWith(INTERFACE_SUFFIX) ? [name.slice(0, -INTERFACE_SUFFIX.length), INTERFACE_SUFFIX] : [name, ''];
    return `${swap.get(part) ?? part}${suffix}`;
  };
  const onto = new Map([[ma, a], [mb, b]]);
  const states = Object.fromEntries(Object.entries(mw.states).map(([net, v]) => [onto.get(net) ?? net, v]));
  const [high, low] = Object.entries(states).sort(([, x]) => (x === 'high' ? -1 : 1)).map(([net]) => net);
  return {
    values: Object.fromEntries(Object.entries(mw.values).map(([k, v]) => [image(k), v])),
    key: mw.key.map(image),
    positions: Object.fromEntries(Object.entries(mw.positions).map(([k, v]) => [image(k), v])),
    states,
    shows: `the state with ${high} high and ${low} low does not exist: the whole design, started in it, settles elsewhere (the witness of ${model.nets.join(' ↔ ')}, the parts around the two exchanged)`,
  };
}

/** Latch images tried at most, each a whole solve: a design of thousands of alike latches cannot pay one for each. */
const LATCH_IMAGES = 32;

/**
 * The last pass of `check`: every latch its bounds cannot show to hold, and every net its
 * bound fails on something corners can decide, put to the corners of the whole design
 * within one `CornerBudget`. Latches first (a net of a latch that cannot hold takes the
 * latch's witness), then nets; each gets its basis, its witness or its pass by corners, or
 * is left undecided, in place.
 */
export function refineVerdicts(ctx: RefineContext, nets: NetCheck[], latches: LatchResult[]): void {
  const { design, graph, scenario, chain, required, flatInputs } = ctx;
  const budget = new CornerBudget(ctx.cornerWork, ctx.progress);
  let whole: WholeDesign | undefined;
  for (const l of latches) {
    if (l.basis !== 'undecided') continue;
    if (!whole && !budget.couldAfford(design, 2)) {
      l.reasons = [`undecided: the worst-case bounds cannot show that it holds (the bounds: ${l.reasons.join('; ')}), and the design is too large to search the corners of the whole of it within this check's budget`];
      continue;
    }
    decideLatch((whole ??= new WholeDesign(design, graph, scenario)), l, budget);
  }
  // A latch alike to one that lost a state is tried at its witness's image, one solve each.
  const classOf = new Map(nets.map((n) => [n.name, n.classId]));
  const lost = latches.filter((l) => l.basis === 'witness' && l.witness);
  let images = 0;
  for (const l of latches) {
    if (l.basis !== 'undecided' || images >= LATCH_IMAGES) continue;
    for (const model of lost) {
      const witness = latchImage(chain, classOf, model, l);
      if (!witness) continue;
      images++;
      if (!reproduceWitness(design, witness, graph).reproduced) break;
      l.holds = false;
      l.basis = 'witness';
      l.witness = witness;
      l.reasons = [`it cannot hold a state: at the corner of its witness, ${witness.shows}`];
      break;
    }
  }
  // A net whose bound fails on its levels is put to the corners of the whole design.
  let refiner: Refiner | undefined;
  // Alike nets (one class) are tried at the image of the first one's level witness, their
  // parts exchanged (`byAnalogy`): one solve each, where their own search is thousands.
  const models = new Map<number, NetCheck>();
  const byModel = (refiner: Refiner, n: NetCheck): boolean => {
    const model = models.get(n.classId);
    const witness = model && model !== n ? refiner.byAnalogy(n, model, required) : undefined;
    if (!model || !witness) return false;
    n.status = 'fail';
    n.basis = 'witness';
    n.witness = witness;
    // What a refinement said before (undecided, not searched, no corner failing) gives way to the witness.
    const bound = n.reasons.filter((x) => !['undecided: ', 'its gain fails by the bound', 'no corner of the whole design'].some((s) => x.startsWith(s)));
    n.reasons = [`at the corner of its witness (that of ${model.name}, the parts around the two exchanged), ${witness.shows}`, ...bound.map((x) => (x.startsWith('the bound: ') ? x : `the bound: ${x}`))];
    return true;
  };
  const lostLatch = new Map(latches.filter((l) => l.basis === 'witness').flatMap((l) => l.nets.map((net) => [net, l] as const)));
  // Nets whose questions the whole-design levels already answer go first: they cost no
  // search, and a search of the weakest net must not spend the budget they need nothing of.
  const searches = (n: NetCheck) => (n.refinable ?? []).some((q) => q === 'cutoff' || !ctx.seeds?.get(n.name)?.[q]);
  for (const n of [...nets].sort((a, b) => Number(searches(a)) - Number(searches(b)))) {
    if (n.status !== 'fail') continue;
    const latch = lostLatch.get(n.name);
    if (latch) {
      // Its levels mean nothing where its latch loses a state: the latch's witness is the net's.
      n.basis = 'witness';
      n.witness = latch.witness;
      n.reasons = [`its latch ${latch.nets.join(' ↔ ')} cannot hold a state (its witness is with the latch, below)`, ...n.reasons.map((x) => `the bound: ${x}`)];
      continue;
    }
    if (!n.refinable) continue;
    refiner ??= new Refiner(design, graph, scenario, chain, budget, ctx.seeds);
    // An alike net already failed: its witness's image costs one solve, a search thousands.
    if (byModel(refiner, n)) continue;
    const r = refiner.refine(n, required, n.refinable);
    // A gain that never reaches 1 is the stage's own failure, which no corner of its levels clears: it fails with a witness of its own, or is undecided.
    if (flatInputs.has(n.name) && r?.status !== 'fail') {
      n.found = r?.found;
      const gain = refiner.gainWitness(n, flatInputs.get(n.name)!);
      const levels = r ? `no corner of the whole design fails its levels (${r.corners.toLocaleString('en')} solved)` : `its levels were not searched (${refiner.notSearched()})`;
      if (gain) {
        n.basis = 'witness';
        n.witness = gain;
        n.reasons = [`at the corner of its witness, ${gain.shows}`, ...n.reasons.map((x) => `the bound: ${x}`)];
      } else {
        n.status = 'undecided';
        n.basis = 'undecided';
        n.reasons.unshift(`undecided: its gain fails by the bound (a corner of its own parts with the nets around it at the ends of their bounds), but the whole design at that corner, the driving net held and swept, was not shown to lose its gain; ${levels}`);
      }
      continue;
    }
    // Where the search is out of reach or did not decide, the bound's own corner may still show the failure.
    const atBound = (!r || r.status === 'undecided') && n.refinable.length > 0 ? refiner.boundWitness(n, required, n.refinable) : undefined;
    if (atBound) {
      n.status = 'fail';
      n.basis = 'witness';
      n.found = r?.found;
      n.witness = atBound;
      n.reasons = [`at the corner its bound comes from, solved whole (with a receiving stage's own parts at its threshold's worst corner, where that is what fails it), ${atBound.shows}`, ...n.reasons.filter((x) => !x.startsWith('undecided: ')).map((x) => (x.startsWith('the bound: ') ? x : `the bound: ${x}`))];
      if (atBound.level && !models.has(n.classId)) models.set(n.classId, n);
      continue;
    }
    if (!r) {
      n.status = 'undecided';
      n.basis = 'undecided';
      n.reasons = [`undecided: the bound fails, and ${refiner.notSearched()}`, ...n.reasons.map((x) => (x.startsWith('the bound: ') ? x : `the bound: ${x}`))];
      continue;
    }
    n.status = r.status;
    n.basis = r.basis;
    n.found = r.found;
    n.witness = r.witness;
    n.reasons = r.status === 'pass' ? [] : [r.status === 'undecided' ? `undecided: ${r.reason}` : r.reason, ...n.reasons.map((x) => `the bound: ${x}`)];
    if (r.status === 'pass') n.note = r.reason;
    if (n.witness?.level && !models.has(n.classId)) models.set(n.classId, n);
  }
  // Alike nets searched before one of their class failed are tried at its witness too.
  for (const n of nets) if (!n.witness && (n.status === 'fail' || n.status === 'undecided') && n.refinable && refiner) byModel(refiner, n);
  // A FAIL is a failure shown: what fails by its bound alone (a level no local solve found, a loop whose bounds did not settle) may fail, no more.
  for (const n of nets) {
    if (n.status !== 'fail' || n.witness) continue;
    n.status = 'undecided';
    n.basis = 'undecided';
    n.reasons = ['undecided: it fails by its bound alone, which corners of the whole design cannot decide here', ...n.reasons.map((x) => (x.startsWith('the bound: ') ? x : `the bound: ${x}`))];
  }
}
