import type { Design } from '../design/model.js';
import { buildStageGraph, compareNames, type StageGraph } from '../graph/stageGraph.js';
import { joinNets } from '../solve/circuit.js';
import { logicThreshold, solveOperatingPoint } from '../solve/operatingPoint.js';
import { ratingsOf, type Ratings } from './ratings.js';
import { error, type Diagnostic } from '../source/diagnostic.js';
import { AGEING_SCENARIOS, type AgeingScenario } from './ageing.js';
import { fanoutHeadroom, MAX_EXTRA_LOADS, standardLoad, type StandardLoad } from './fanoutHeadroom.js';
import { cutoffMargin, driveMargin, type GridMargin } from './gridMargins.js';
import { LevelChain, type ChainNet } from './levelChain.js';
import { latchCheck, type LatchResult } from './latchCheck.js';
import type { Witness } from './cornerSearch.js';
import { refineVerdicts, type RefineQuestion } from './refineNets.js';
import type { LocalParameter } from './localProblem.js';
import { receiverThresholds } from './receiverThresholds.js';
import type { TransferCurve } from './staticNoiseMargin.js';
import { highest, lowest } from '../lists.js';
import { tightenLevels, type TightenSummary } from './wholeLevels.js';
import { railBoxes } from './railBoxes.js';
import type { Progress } from '../progress.js';

export interface CheckOptions {
  /** The noise margin every net must keep (volts); the design's own setting when absent. */
  requiredMargin?: number;
  /** The ageing scenario; new tubes when absent. */
  scenario?: AgeingScenario;
  /** The stage graph, when the caller has it. */
  graph?: StageGraph;
  /** Work out fan-out headroom (true when absent); a supply sweep, which needs only the verdict, leaves it out. */
  headroom?: boolean;
  /** Work out ratings and budgets (false when absent): a nominal full solve and the corners of largest dissipation. */
  ratings?: boolean;
  /**
   * Put what the bounds cannot decide to the corners of the whole design (true when
   * absent). A supply sweep or a search for part values, which checks many variants of a
   * design, leaves it out: its verdicts then rest on the bounds alone, which never pass
   * what can fail but may fail what would pass.
   */
  refine?: boolean;
  /**
   * Narrow the chained levels with those of the whole design solved in every state, where
   * the design is small enough (`tightenLevels`; as `refine` when absent). Off, the chain's
   * bounds stand alone, and what they cannot decide goes to the corners.
   */
  narrow?: boolean;
  /** The work refinement may spend (`CORNER_WORK` when absent): a harness that runs thousands of checks sets less. */
  cornerWork?: number;
  /** Told as each phase goes on: the rounds of levels, the receivers, the nets' margins and fan-out headroom, the latches, the rail boxes and the corners. */
  onProgress?: Progress;
}

/** One parameter's part in making a level weak. */
export interface Cause {
  kind: LocalParameter['kind'];
  /** The part, section, rail or net. */
  target: string;
  /** Which end of its band the worst vertex puts it at. */
  end: 'low' | 'high';
  /** Its value there (ohms, volts, or a factor). */
  value: number;
  /** How far its corner moves the level from nominal, linearised (volts; negative pulls it down). */
  volts: number;
}

export interface ReceiverMargin {
  section: string;
  /** The receiving stage's output net. */
  stage: string;
  vilMin: number | undefined;
  vihMax: number | undefined;
  /**
   * Where the net passed on boxes of the rails' ranges (`passOnRailBoxes`): this input's
   * margins, each the worst over the boxes. The worst level and the worst threshold above
   * may come from different boxes, so their difference understates what was shown.
   */
  boxMargins?: { high: number | undefined; low: number | undefined };
}

export interface NetCheck {
  name: string;
  kind: 'stage' | 'input';
  /** What drives it: "2 sections", "input". */
  driver: string;
  fanout: number;
  /** Levels in each state the net can take; absent for a state it never takes. */
  high: { nominal: number; worst: number } | undefined;
  low: { nominal: number; worst: number } | undefined;
  /** Logic threshold: above it the net reads high. */
  thresholdVolts: number;
  /** NM_H = worst high − highest VIH of its receivers; NM_L = lowest VIL − worst low. */
  margin: { high: number | undefined; low: number | undefined };
  receivers: ReceiverMargin[];
  cutoffMargin: GridMargin | undefined;
  driveMargin: GridMargin | undefined;
  /** More standard loads it can take before a margin drops below the required one. */
  headroom: number | undefined;
  /** `undecided`: the bound fails, and the corners of the whole design searched neither fail it nor cover every corner. */
  status: 'pass' | 'fail' | 'undecided' | 'unchecked';
  reasons: string[];
  /**
   * What decided the status: `bounds`, the chained worst-case bounds; `corners`, the
   * bound failed but every corner of the whole design passes; `witness`, a corner where
   * the whole design fails (`witness`); `undecided`, neither.
   */
  basis: 'bounds' | 'corners' | 'witness' | 'undecided';
  /** The worst levels found at corners of the whole design, beside the bounds, for a net whose bound failed. */
  found: { high: number | undefined; low: number | undefined } | undefined;
  witness: Witness | undefined;
  /** What the bound fails on that corners of the whole design can decide (undefined: a failure of another kind, which the bound decides). */
  refinable: RefineQuestion[] | undefined;
  /** How a net whose bound failed was shown to pass. */
  note: string | undefined;
  /** The level that limits the net, and the parameters whose corners make it so, largest first (given for failing nets and the three weakest). */
  weakest: { what: 'high' | 'low' | 'cutoff'; causes: Cause[] } | undefined;
  /** Nets of one class are the same problem all the way out and have the same figures. */
  classId: number;
  /** Worst slack against the requirement (volts): the smaller margin minus the required one, or the cutoff margin; sorts nets weakest first. */
  slack: number;
}

export interface CheckResult {
  title: string;
  scenario: AgeingScenario;
  requiredMargin: number;
  /** `undecided`: nothing was shown to fail, but a net or latch could be shown neither to pass nor to fail (it may fail). */
  verdict: 'pass' | 'fail' | 'undecided';
  /** Weakest first. */
  nets: NetCheck[];
  latches: LatchResult[];
  standardLoad: StandardLoad | undefined;
  /** The loop iteration settled (a loop that never settles is a failure of its nets). */
  settled: boolean;
  rounds: number;
  localSolves: number;
  /** Where the design was small enough to solve whole in every state: the levels narrowed that way (undefined: the chained bounds alone). */
  wholeLevels: TightenSummary | undefined;
  /** One transfer curve per distinct kind of receiving stage, for drawing. */
  stageKinds: StageKind[];
  /** Ratings and budgets, when asked for. */
  ratings: Ratings | undefined;
  /**
   * Library types run outside the plate voltages their fit is trusted over, at the
   * nominal operating point (every latch's first net low), as `solve` warns of them:
   * the verdict rests on a model used there. Worked out with the ratings; empty without.
   */
  modelRange: string[];
}

/** A kind of receiving stage as seen from the net that drives it: its transfer curves and the levels around them. */
export interface StageKind {
  /** The first stage and driving net of this kind, and how many inputs are alike. */
  stage: string;
  driving: string;
  count: number;
  curves: { nominal: TransferCurve; early: TransferCurve; late: TransferCurve };
  /** Unity-gain thresholds: nominal, and the worst (earliest VIL, latest VIH). */
  vil: { nominal: number | undefined; worst: number | undefined };
  vih: { nominal: number | undefined; worst: number | undefined };
  /** The driving net's levels (the curve's input) and the stage's own (its output), worst case. */
  input: { high: number | undefined; low: number | undefined };
  output: { high: number | undefined; low: number | undefined };
}

/**
 * `check`: chained worst-case levels, noise margins, grid-side margins, fan-out headroom
 * and latch holding and switching for a whole design, weakest net first. The passes:
 * 1. the chain (`LevelChain`): which states each net can take, its nominal and worst
 *    levels, iterated around loops;
 * 2. per net and receiver, the receiving stage's unity-gain thresholds in worst case, and
 *    from them NM_H and NM_L; the drivers' cutoff and drive margins;
 * 3. fan-out headroom in standard loads;
 * 4. per latch, holding (butterfly SNM and levels) and switching (trigger margin);
 * 5. the verdict, each failing net with its reasons and the parameters that make it weak.
 *
 * Example: the pentode latch with 33 kΩ loads and 220 kΩ / 220 kΩ dividers at 24 V /
 * −12 V passes with several volts of margin; the same latch with its pull-downs to 0 V
 * fails: its high and low levels collapse and neither OFF section is cut off.
 */
export function checkMargins(design: Design, options: CheckOptions = {}): CheckResult | { diagnostics: Diagnostic[] } {
  // A design the solver cannot take (a short circuit) is bad input, reported at its place.
  const shorts = joinNets(design).diagnostics;
  if (shorts.length > 0) return { diagnostics: shorts };
  const scenario = options.scenario ?? AGEING_SCENARIOS[0]!;
  const required = options.requiredMargin ?? design.settings.requiredMargin;
  const graph = options.graph ?? buildStageGraph(design);
  // No logic net and no ratings asked for, no verdict: a PASS over nothing would read as a
  // design that works. With ratings, the parts' ratings are still something to judge.
  if (graph.nets.length === 0 && !options.ratings) {
    return { diagnostics: [error('nothing-to-check', 'the design has no logic nets: no tube section drives a net, and no grid reads one, so there is nothing to check', undefined, ["'solve' still gives its operating point"])] };
  }
  const chain = new LevelChain(design, graph, scenario);
  chain.run(options.onProgress);
  // A design small enough to solve whole has its levels narrowed to the whole design's, rails and parts correlated.
  const refine = options.refine ?? true;
  options.onProgress?.('levels of the whole design', 0, 1);
  const whole = options.narrow ?? refine ? tightenLevels(design, graph, scenario, chain) : undefined;

  // Thresholds of every receiving input, and the design-wide extremes for nets with none.
  const thresholds = new Map<string, ReceiverMargin[]>();
  const kinds = new Map<string, StageKind>();
  for (const [i, n] of graph.nets.entries()) {
    options.onProgress?.('receivers', i, graph.nets.length);
    thresholds.set(
      n.name,
      n.receivers.flatMap((r) => {
        const t = receiverThresholds(chain, n.name, r);
        if (!t) return [];
        const kind = kinds.get(t.key);
        if (kind) kind.count++;
        else {
          const li = chain.levels.get(n.name)!;
          const lo = chain.levels.get(t.stage)!;
          kinds.set(t.key, {
            stage: t.stage,
            driving: n.name,
            count: 1,
            curves: t.curves,
            vil: { nominal: t.nominal?.vil, worst: t.vilMin },
            vih: { nominal: t.nominal?.vih, worst: t.vihMax },
            input: { high: li.canHigh ? li.highWorst : undefined, low: li.canLow ? li.lowWorst : undefined },
            output: { high: lo.canHigh ? lo.highWorst : undefined, low: lo.canLow ? lo.lowWorst : undefined },
          });
        }
        return [{ section: r.section, stage: t.stage, vilMin: t.vilMin, vihMax: t.vihMax }];
      }),
    );
  }
  const all = [...thresholds.values()].flat();
  const vils = all.flatMap((t) => (t.vilMin === undefined ? [] : [t.vilMin]));
  const vihs = all.flatMap((t) => (t.vihMax === undefined ? [] : [t.vihMax]));
  // reduce, not spread: a large design has more receivers than a call takes arguments.
  const designWide = vils.length > 0 && vihs.length > 0 ? { vil: vils.reduce((a, b) => Math.min(a, b)), vih: vihs.reduce((a, b) => Math.max(a, b)) } : undefined;
  const load = standardLoad(chain);
  // A receiving stage whose gain never reaches 1 is its own failure, not the driving net's.
  const flatInputs = new Map<string, string[]>();
  for (const [driving, list] of thresholds) {
    for (const r of list) if (r.vilMin === undefined || r.vihMax === undefined) (flatInputs.get(r.stage) ?? flatInputs.set(r.stage, []).get(r.stage)!).push(driving);
  }

  const inLoop = new Set(graph.loops.flatMap((l) => l.nets));
  const nets = graph.nets.map((n, i) => {
    options.onProgress?.('margins and fan-out headroom', i, graph.nets.length);
    return judgeNet(chain, n.name, n.fanout, thresholds.get(n.name)!, flatInputs, inLoop, options.headroom ?? true, required, load, designWide);
  });
  nets.sort(weakestFirst);
  // The parameters behind the weakness, for every failing net and the three weakest classes.
  const weakestClasses = new Set([...new Set(nets.map((n) => n.classId))].slice(0, 3));
  for (const n of nets) {
    if (n.weakest && (n.status === 'fail' || weakestClasses.has(n.classId))) n.weakest.causes = causesOf(chain, chain.nets.get(n.name)!, n.weakest.what);
  }
  const loops = graph.loops.filter((l) => l.kind === 'latch');
  const latches = loops.map((l, i) => {
    options.onProgress?.('latches', i, loops.length);
    return latchCheck(chain, l.nets as [string, string]);
  });
  // A bound that fails on its levels is bounded again over halves of the rails' ranges, before any whole-design solve.
  if (refine) {
    const byName = new Map(graph.nets.map((n) => [n.name, n]));
    passOnRailBoxes(design, graph, scenario, nets, required, (box, name) => {
      const receivers = byName.get(name)!.receivers.flatMap((r) => {
        const t = receiverThresholds(box, name, r);
        return t ? [{ section: r.section, stage: t.stage, vilMin: t.vilMin, vihMax: t.vihMax }] : [];
      });
      return judgeNet(box, name, byName.get(name)!.fanout, receivers, flatInputs, inLoop, false, required, load, designWide, logicThreshold(design, name));
    }, options.onProgress);
    nets.sort(weakestFirst);
  }
  // What the bounds cannot decide goes to the corners of the whole design.
  if (refine) refineVerdicts({ design, graph, scenario, chain, required, flatInputs, cornerWork: options.cornerWork, seeds: whole?.seeds, progress: options.onProgress }, nets, latches);
  let ratings: Ratings | undefined;
  let modelRange: string[] = [];
  if (options.ratings) {
    const op = solveOperatingPoint(design, { graph });
    ratings = ratingsOf(design, chain, 'nodes' in op && op.converged ? op : undefined);
    // The same warning `solve` gives, from the same nominal solution.
    if ('nodes' in op) modelRange = op.diagnostics.filter((d) => d.code === 'outside-trusted-range').map((d) => d.message);
  }
  // Without refinement a latch its bounds cannot show to hold fails, as its bounds say.
  const failed = nets.some((n) => n.status === 'fail') || latches.some((l) => (refine ? l.basis === 'witness' : !l.holds) || latchSwitchingFails(l)) || !chain.settled || ratings?.ok === false;
  const undecided = refine && (latches.some((l) => l.basis === 'undecided') || nets.some((n) => n.status === 'undecided'));
  return {
    title: design.title,
    scenario,
    requiredMargin: required,
    verdict: failed ? 'fail' : undecided ? 'undecided' : 'pass',
    nets,
    latches,
    standardLoad: load,
    settled: chain.settled,
    rounds: chain.rounds,
    localSolves: chain.solves,
    wholeLevels: whole && { states: whole.states, corners: whole.corners, narrowed: whole.narrowed },
    stageKinds: [...kinds.values()],
    ratings,
    modelRange,
  };
}

/** A latch that holds but whose set or reset input does not switch it (a latch that cannot hold has no switching to judge). */
export function latchSwitchingFails(l: LatchResult): boolean {
  return l.holds && l.inputs.some((i) => !i.switches && i.note === undefined);
}

function judgeNet(
  chain: LevelChain,
  name: string,
  fanout: number,
  receivers: ReceiverMargin[],
  flatInputs: ReadonlyMap<string, string[]>,
  inLoop: ReadonlySet<string>,
  withHeadroom: boolean,
  required: number,
  load: StandardLoad | undefined,
  designWide: { vil: number; vih: number } | undefined,
  thresholdVolts = logicThreshold(chain.design, name),
): NetCheck {
  const net = chain.nets.get(name)!;
  const l = chain.levels.get(name)!;
  const reasons: string[] = [];
  const base = {
    name,
    basis: 'bounds' as const,
    found: undefined,
    witness: undefined,
    note: undefined,
    refinable: undefined,
    classId: chain.classOf(name),
    kind: net.polarity === 'input' ? ('input' as const) : ('stage' as const),
    driver: net.polarity === 'input' ? 'input' : `${net.drivers.length} section${net.drivers.length === 1 ? '' : 's'}`,
    fanout,
    thresholdVolts,
    receivers,
  };
  if (net.polarity === 'mixed') {
    return {
      ...base,
      high: undefined,
      low: undefined,
      margin: { high: undefined, low: undefined },
      cutoffMargin: undefined,
      driveMargin: undefined,
      headroom: undefined,
      status: 'unchecked',
      reasons: ['driven both by plates and by cathodes: the chain does not judge mixed drivers'],
      weakest: undefined,
      slack: Infinity,
    };
  }
  const high = l.canHigh ? { nominal: l.highNominal, worst: l.highWorst } : undefined;
  const low = l.canLow ? { nominal: l.lowNominal, worst: l.lowWorst } : undefined;
  const vihs = receivers.flatMap((r) => (r.vihMax === undefined ? [] : [r.vihMax]));
  const vils = receivers.flatMap((r) => (r.vilMin === undefined ? [] : [r.vilMin]));
  const vihMax = vihs.length ? highest(vihs) : undefined;
  const vilMin = vils.length ? lowest(vils) : undefined;
  const margin = {
    high: high && vihMax !== undefined ? high.worst - vihMax : undefined,
    low: low && vilMin !== undefined ? vilMin - low.worst : undefined,
  };
  const cutoff = net.polarity === 'input' ? undefined : cutoffMargin(chain, name);
  const drive = net.polarity === 'input' ? undefined : driveMargin(chain, name);
  const v = (x: number) => `${x.toFixed(2)} V`;
  // A state whose level the solver could not find is a failure to vouch for the net, said
  // as such; it is not a level, so none of the comparisons below may read it as one.
  for (const [state, l] of [['high', high], ['low', low]] as const) {
    if (l && !(Number.isFinite(l.nominal) && Number.isFinite(l.worst))) {
      reasons.push(`no solution was found for its ${state} state ${Number.isFinite(l.nominal) ? 'at its worst corner' : 'even at nominal values'}: the local solve did not converge, so nothing vouches for that level`);
    }
  }
  if (reasons.length > 0) {
    // The worst end of an unsolved state is no level at all (the chain leaves a rail's end there): not a number, not a rail.
    const unsolved = (l: typeof high) => l && (Number.isFinite(l.nominal) && Number.isFinite(l.worst) ? l : { nominal: Number.isFinite(l.nominal) ? l.nominal : NaN, worst: NaN });
    return { ...base, high: unsolved(high), low: unsolved(low), margin: { high: undefined, low: undefined }, cutoffMargin: undefined, driveMargin: undefined, headroom: undefined, status: 'fail', reasons, weakest: undefined, slack: -Infinity };
  }
  if (high && low && high.worst <= low.worst) {
    // Around a loop the bounds alone cannot say a state is lost: the latch's own verdict, decided on the whole design, says that.
    const consequence = inLoop.has(name) ? 'the bounds cannot show that it holds a state' : 'its high cannot be told from its low';
    reasons.push(`its high and low levels collapse (worst high ${v(high.worst)}, worst low ${v(low.worst)}): ${consequence}`);
  }
  if (cutoff && cutoff.volts < 0) reasons.push(`${cutoff.section} is not cut off while ${name} is high: its grid sits at ${v(cutoff.vgk)}, above its cutoff at ${v(cutoff.reference)}`);
  if (high && high.worst <= thresholdVolts) reasons.push(`its worst high level ${v(high.worst)} does not reach the logic threshold ${v(thresholdVolts)}`);
  if (low && low.worst >= thresholdVolts) reasons.push(`its worst low level ${v(low.worst)} is not below the logic threshold ${v(thresholdVolts)}: its drivers cannot pull it low`);
  // A margin just short of the requirement is shown to the millivolt, so it does not read as equal.
  const short = (x: number) => `${x.toFixed(required - x < 0.005 ? 3 : 2)} V`;
  if (margin.high !== undefined && margin.high < required) reasons.push(`high noise margin ${short(margin.high)} is below the required ${v(required)} (worst high ${v(high!.worst)} against VIH ${v(vihMax!)})`);
  if (margin.low !== undefined && margin.low < required) reasons.push(`low noise margin ${short(margin.low)} is below the required ${v(required)} (worst low ${v(low!.worst)} against VIL ${v(vilMin!)})`);
  // The corners of the whole design can decide a failure of the levels; not one of a grid, a gain or an unsettled loop.
  const decidable = reasons.length > 0 && chain.settled;
  const refinable = decidable
    ? (['high', 'low', 'cutoff'] as const).filter((x) =>
        x === 'cutoff'
          ? cutoff && cutoff.volts < 0
          : x === 'high'
            ? high && (high.worst <= thresholdVolts || (margin.high ?? Infinity) < required || (low && high.worst <= low.worst))
            : low && (low.worst >= thresholdVolts || (margin.low ?? Infinity) < required || (high && high.worst <= low.worst)),
      )
    : undefined;
  for (const from of flatInputs.get(name) ?? []) reasons.push(`its gain from ${from} never reaches 1: it cannot restore the levels it is given`);
  if (!chain.settled) reasons.push('the worst-case levels around its loop did not settle');
  const limits: { what: 'high' | 'low' | 'cutoff'; slack: number }[] = [];
  if (margin.high !== undefined) limits.push({ what: 'high', slack: margin.high - required });
  if (margin.low !== undefined) limits.push({ what: 'low', slack: margin.low - required });
  if (high) limits.push({ what: 'high', slack: high.worst - thresholdVolts - required });
  if (low) limits.push({ what: 'low', slack: thresholdVolts - low.worst - required });
  if (cutoff) limits.push({ what: 'cutoff', slack: cutoff.volts });
  limits.sort((a, b) => a.slack - b.slack);
  // Causes are filled in later, for the nets the report explains.
  const weakest = limits[0] && { what: limits[0].what, causes: [] };
  const thresholdsForHeadroom = vilMin !== undefined && vihMax !== undefined ? { vil: vilMin, vih: vihMax } : designWide;
  let headroom: number | undefined;
  if (withHeadroom && load && thresholdsForHeadroom && net.polarity !== 'input') {
    const key = `headroom|${chain.classOf(name)}|${thresholdsForHeadroom.vil}|${thresholdsForHeadroom.vih}`;
    headroom = chain.memo(key, () => fanoutHeadroom(chain, name, load, thresholdsForHeadroom, required));
  }
  return {
    ...base,
    high,
    low,
    margin,
    cutoffMargin: cutoff,
    driveMargin: drive,
    headroom,
    status: reasons.length > 0 ? 'fail' : 'pass',
    reasons,
    refinable: refinable && [...refinable],
    weakest,
    slack: limits[0]?.slack ?? Infinity,
  };
}

/**
 * Nets whose bound fails on their levels (`refinable`), judged again on every box of the
 * rails' ranges (`railBoxes`), the logic threshold kept at the design's own: a net that
 * passes on every box passes, with its levels and margins the worst over the boxes. The
 * chain runs once per box, and stops early once no such net is left passing.
 */
function passOnRailBoxes(design: Design, graph: StageGraph, scenario: AgeingScenario, nets: NetCheck[], required: number, judge: (box: LevelChain, name: string) => NetCheck, progress?: Progress): void {
  const open = new Map(nets.filter((n) => n.status === 'fail' && n.refinable && n.refinable.length > 0).map((n) => [n.name, [] as NetCheck[]]));
  if (open.size === 0) return;
  const boxes = railBoxes(design);
  if (boxes.length === 0) return;
  const rails = design.rails.filter((r, i) => boxes[0]!.rails[i]!.volts !== r.volts).map((r) => r.name);
  for (const [k, box] of boxes.entries()) {
    progress?.('rail boxes', k, boxes.length);
    const chain = new LevelChain(box, graph, scenario);
    chain.run();
    if (!chain.settled) return;
    for (const [name, judged] of open) {
      const j = judge(chain, name);
      if (j.status === 'pass') judged.push(j);
      else open.delete(name);
    }
    if (open.size === 0) return;
  }
  // Each figure's worst over the boxes; undefined where a box has none.
  const worst = (xs: (number | undefined)[], pick: typeof lowest) => (xs.some((x) => x === undefined) ? undefined : pick(xs as number[]));
  for (const n of nets) {
    const js = open.get(n.name);
    if (!js || js.length !== boxes.length || js.some((j) => j.receivers.length !== n.receivers.length)) continue;
    n.status = 'pass';
    n.reasons = [];
    n.refinable = undefined;
    n.note = boxNote(n, js, rails, required);
    if (n.high) n.high = { nominal: n.high.nominal, worst: lowest(js.map((j) => j.high!.worst)) };
    if (n.low) n.low = { nominal: n.low.nominal, worst: highest(js.map((j) => j.low!.worst)) };
    n.margin = { high: worst(js.map((j) => j.margin.high), lowest), low: worst(js.map((j) => j.margin.low), lowest) };
    n.receivers = n.receivers.map((r, i) => {
      const at = js.map((j) => j.receivers[i]!);
      const high = n.high ? worst(at.map((x, b) => (x.vihMax === undefined ? undefined : js[b]!.high!.worst - x.vihMax)), lowest) : undefined;
      const low = n.low ? worst(at.map((x, b) => (x.vilMin === undefined ? undefined : x.vilMin - js[b]!.low!.worst)), lowest) : undefined;
      return { ...r, vilMin: worst(at.map((x) => x.vilMin), lowest), vihMax: worst(at.map((x) => x.vihMax), highest), boxMargins: { high, low } };
    });
    if (n.cutoffMargin) n.cutoffMargin = js.map((j) => j.cutoffMargin!).reduce((a, b) => (b.volts < a.volts ? b : a));
    if (n.driveMargin) n.driveMargin = js.map((j) => j.driveMargin!).reduce((a, b) => (b.volts < a.volts ? b : a));
    n.slack = lowest(js.map((j) => j.slack));
  }
}

/**
 * Why a net whose whole-range bound failed passes on the rail boxes, with the figures.
 * Example: "bounded with rails hv and neg over the whole of their ranges at once, NM_L is
 * 4.17 V: the bound takes them at one end for this level and at the other for the VIL it
 * is judged against; bounded over each half of their ranges in turn (4 cases), it is
 * 5.10 V at worst".
 */
function boxNote(whole: NetCheck, boxes: readonly NetCheck[], rails: readonly string[], required: number): string {
  const sides = (['low', 'high'] as const).filter((side) => {
    const m = whole.margin[side];
    return m !== undefined && m < required;
  });
  const names = `rail${rails.length > 1 ? 's' : ''} ${rails.join(' and ')}`;
  const them = rails.length > 1 ? 'them' : 'it';
  const what = (side: 'low' | 'high') => `NM_${side === 'low' ? 'L' : 'H'}`;
  const before = sides.map((side) => `${what(side)} is ${whole.margin[side]!.toFixed(2)} V`).join(' and ');
  const after = sides.map((side) => `${what(side)} ${lowest(boxes.map((b) => b.margin[side]!)).toFixed(2)} V`).join(' and ');
  return `bounded with ${names} over the whole of ${rails.length > 1 ? 'their ranges' : 'its range'} at once, ${before || 'its margin falls short'}: the bound takes ${them} at one end for this level and at the other for the threshold it is judged against; bounded over each half of ${rails.length > 1 ? 'their ranges' : 'its range'} in turn (${boxes.length} cases), it keeps the required margin${after ? `, ${after} at worst` : ''}`;
}

/** Unchecked nets last; the rest by slack, least first. */
function weakestFirst(a: NetCheck, b: NetCheck): number {
  return (a.status === 'unchecked') !== (b.status === 'unchecked') ? (a.status === 'unchecked' ? 1 : -1) : a.slack - b.slack || compareNames(a.name, b.name);
}

/** The parameters whose corners make a level weak, largest effect first (at most four). */
function causesOf(chain: LevelChain, net: ChainNet, what: 'high' | 'low' | 'cutoff'): Cause[] {
  // Found once per class, by parameter position; named for this net.
  const found = chain.memo(`causes|${chain.classOf(net.name)}|${what}`, () => {
    const worst = chain.worstCaseOf(net, what === 'low' ? 'low' : 'high');
    const shares = worst && chain.sharesAt(worst.c, worst.r);
    if (!worst || !shares) return [];
    const r = worst.r;
    // Only what moves the level the worse way is a cause of its being worst.
    const sign = r.sense === 'min' ? -1 : 1;
    return r.bands
      .map((_, i) => ({ index: i, end: r.vertex![i] === r.bands[i]!.high ? ('high' as const) : ('low' as const), value: r.vertex![i]!, volts: shares[i]! }))
      .filter((c) => sign * c.volts > 1e-3)
      .sort((a, b) => Math.abs(b.volts) - Math.abs(a.volts))
      .slice(0, 4);
  });
  return found.map(({ index, ...c }) => ({ kind: net.parameters[index]!.kind, target: net.parameters[index]!.target, ...c }));
}

export { MAX_EXTRA_LOADS };
