import { fixedVolts, isGeneratedName, type Design, type Part } from '../design/model.js';
import { buildStageGraph, type StageGraph } from '../graph/stageGraph.js';
import { logicThreshold, RESIDUAL_LIMIT, solveOperatingPoint, type OperatingPoint, type StateHint } from '../solve/operatingPoint.js';
import { error, type Diagnostic } from '../source/diagnostic.js';
import { didYouMean } from '../source/suggest.js';
import type { CheckResult } from './check.js';
import { HeldNet } from './heldNet.js';
import type { SequenceAction } from './sequence.js';

/** Steps in which a closing contact's net is moved to its rail. */
const RAMP_STEPS = 16;
/**
 * Continuation steps allowed per contact's ramp: each is one Newton run of at most 50
 * iterations, so a ramp costs at most this many of them before it gives up and the step's
 * own solve answers. A smooth ramp takes RAMP_STEPS; one that creeps along a fold in
 * millivolt steps takes hundreds (the shift register of the tests, about 520).
 */
const MAX_RAMP_SOLVES = 5000;

/** The nets a state table shows unless told otherwise: every logic net but a stage's internal ones, and inputs the builder named. */
export function watchedNets(graph: StageGraph): string[] {
  return graph.nets.filter((n) => !n.name.includes('.') && (n.kind === 'stage' || !isGeneratedName(n.name))).map((n) => n.name);
}

/** The state after one step. */
export interface StepRow {
  /** What was done: "press START", "pulse PHASE_A (release)"; "start" for the state before any. */
  action: string;
  /** Voltage and logic state of each watched net. */
  states: { net: string; volts: number; high: boolean }[];
  /** Expectations about this state, and whether each held. */
  expected: { net: string; high: boolean; ok: boolean }[];
  /** The smallest worst-case noise margin of the watched nets in the states they are in (from `check`), and which net. */
  margin: { net: string; volts: number } | undefined;
  converged: boolean;
  /** Why a step has no solution: the solver's first error, or a latch left between its states. */
  why?: string;
}

export interface StepResult {
  nets: string[];
  rows: StepRow[];
  /** Every step converged and every expectation held. */
  ok: boolean;
  /** Every net's voltage after the last step that solved: a state to start a simulation in time from. */
  final: Map<string, number> | undefined;
}

/**
 * Steps a design through an input sequence quasi-statically: after each change of a
 * button, switch or drive the DC operating point is solved again, starting from the one
 * before (net by net) with nothing pinned, so latches keep their state as the real
 * circuit would while its inputs change slowly, and flip where the new inputs leave the
 * old state none (a closing contact's net is ramped to its rail first; see `ramp`).
 * Should a solve land between a latch's states, every latch is pinned where it was and
 * released instead. After each step, the logic state of every
 * watched net (its level against its logic threshold), the expectations of the sequence,
 * and the smallest worst-case margin of the watched nets in the states they are in.
 * Returns diagnostics for an action naming a part or net the design lacks.
 */
export function stepDesign(design: Design, actions: readonly SequenceAction[], options: { hints?: StateHint[]; nets?: string[]; check?: CheckResult } = {}): StepResult | { diagnostics: Diagnostic[] } {
  const graph = buildStageGraph(design);
  const parts = new Map(design.parts.map((p) => [p.name, p]));
  const diagnostics: Diagnostic[] = [];
  const logic = new Set(graph.nets.map((n) => n.name));
  for (const a of actions) {
    if (a.kind === 'expect') {
      for (const s of a.states) if (!logic.has(s.net)) diagnostics.push(error('unknown-net', `the sequence expects a state of '${s.net}', which is no logic net of the design`, a.span, didYouMean(s.net, logic)));
      continue;
    }
    const p = parts.get(a.part);
    const want = a.kind === 'set' ? 'drive' : 'switch';
    if (!p || p.type !== want) {
      const alike = design.parts.filter((q) => q.type === want).map((q) => q.name);
      diagnostics.push(error('unknown-part', `the sequence's '${a.kind}' names '${a.part}', which is no ${want === 'drive' ? 'drive' : 'switch or button'} of the design`, a.span, didYouMean(a.part, alike)));
    }
  }
  const nets = options.nets ?? watchedNets(graph);
  diagnostics.push(...unknownWatched(nets, logic));
  if (diagnostics.length > 0) return { diagnostics };

  const closed = new Map(design.parts.flatMap((p) => (p.type === 'switch' ? [[p.name, p.closed && !p.momentary] as const] : [])));
  const level = new Map<string, number>();
  const designNow = (): Design => ({
    ...design,
    parts: design.parts.map((p): Part => (p.type === 'switch' ? { ...p, closed: closed.get(p.name)! } : p.type === 'drive' && level.has(p.name) ? { ...p, volts: level.get(p.name)! } : p)),
  });
  const margins = new Map((options.check?.nets ?? []).map((n) => [n.name, n.margin]));
  const latchPairs = graph.loops.filter((l) => l.kind === 'latch').map((l) => l.nets as [string, string]);
  const latchFirsts = latchPairs.map(([a]) => a);
  const rows: StepRow[] = [];
  let previous: Map<string, number> | undefined;
  const solveStep = (action: string) => {
    const d = designNow();
    const start = previous;
    // From the state before, nothing pinned, so every latch stays as it is where it can.
    let op: OperatingPoint | { diagnostics: Diagnostic[] } = solveOperatingPoint(d, start ? { graph, start } : { graph, hints: options.hints });
    const undecided = (o: typeof op) => !('nodes' in o) || (o as OperatingPoint).residualAmps > RESIDUAL_LIMIT || (o as OperatingPoint).outsideSpan.length > 0 || o.diagnostics.some((x) => x.code === 'state-undecided');
    // A large change can carry Newton onto a latch's metastable point, which is no state:
    // then every latch is started where it was, pinned and released.
    if (undecided(op) && previous) {
      const held = latchFirsts.map((net) => ({ net, high: previous!.get(net)! > logicThreshold(design, net) }));
      const pinned = solveOperatingPoint(d, { graph, start, hints: held });
      if (!undecided(pinned)) op = pinned;
    }
    const solved = 'nodes' in op ? (op as OperatingPoint) : undefined;
    // Accepted on the real circuit's residual (under 1 nA) with every latch in a state, whether
    // or not each pinned stage on the way converged.
    const converged = solved !== undefined && !undecided(op);
    const volts = solved?.nodes ?? new Map<string, number>();
    if (solved) previous = solved.nodes;
    const states = nets.map((net) => {
      const v = volts.get(net) ?? NaN;
      return { net, volts: v, high: v > logicThreshold(design, net) };
    });
    let margin: StepRow['margin'];
    for (const s of states) {
      const m = margins.get(s.net);
      const here = s.high ? m?.high : m?.low;
      if (here !== undefined && (!margin || here < margin.volts)) margin = { net: s.net, volts: here };
    }
    const why = converged ? undefined : (op.diagnostics.find((x) => x.severity === 'error')?.message ?? 'a latch was left between its states');
    rows.push({ action, states, expected: [], margin, converged, ...(why === undefined ? {} : { why }) });
  };
  /**
   * Closing a switch moves its net to the rail's voltage at once; the circuit, which is
   * slower, follows it there. So the net is first held by a source and moved in steps from
   * where it is to the rail, each solve continuing from the last with nothing pinned:
   * latches keep their states while those exist and flip where their state ends, as while
   * a real contact closes. The step after it then solves the closed switch itself.
   */
  const ramp = (name: string) => {
    const sw = parts.get(name);
    // A contact already closed has nothing to ramp: pressing a held button changes nothing.
    if (!previous || sw?.type !== 'switch' || closed.get(name)) return;
    const [node, target] = fixedVolts(design, sw.b) !== undefined ? [sw.a, fixedVolts(design, sw.b)] : [sw.b, fixedVolts(design, sw.a)];
    const from = previous.get(node);
    if (target === undefined || from === undefined) return;
    const held = new HeldNet(designNow(), node);
    // Held elsewhere already (another closed contact): the step's own solve reports the short.
    if (!held.compiles) return;
    let x = held.continueAt(from, held.startFrom(previous));
    // Step-halving continuation: a step Newton cannot take is taken in halves. Where even a
    // millivolt step fails, a latch's state has ended (a fold): the circuit jumps, and a full
    // solve from just past the fold finds where it lands.
    let at = from;
    const longest = (target - from) / RAMP_STEPS;
    let step = longest;
    for (let solves = 0; x && Math.abs(target - at) > 1e-9; solves++) {
      if (solves >= MAX_RAMP_SOLVES) {
        x = undefined;
        break;
      }
      const next = Math.abs(target - at) < Math.abs(step) ? target : at + step;
      const y = Math.abs(step) >= 1e-3 ? held.continueAt(next, x) : jump(held, next, x);
      if (y) {
        x = y;
        at = next;
        step = Math.abs(step * 2) > Math.abs(longest) ? longest : step * 2;
      } else if (Math.abs(step) >= 1e-3) step /= 2;
      else x = undefined;
    }
    if (x && Math.abs(target - at) <= 1e-9) previous = held.nodesOf(x);
  };
  /**
   * Past a fold: a full solve from the last state. Should it land between a latch's states
   * (its metastable point), the latches are pinned where they were, those left undecided
   * in their other state, and released.
   */
  const jump = (held: HeldNet, level: number, x: Float64Array): Float64Array | undefined => {
    const before = held.nodesOf(x);
    // Undecided as `solve` says it: the two nets of a latch within a tenth of their swing of each other.
    const undecidedLatches = (o: OperatingPoint) => latchPairs.filter(([a, b]) => Math.abs(o.nodes.get(a)! - o.nodes.get(b)!) < 0.2 * logicThreshold(design, a));
    const was = (a: string) => before.get(a)! > logicThreshold(design, a);
    // First every latch pinned where it was and released: those whose state is gone let go.
    const pinned = held.solveAt(level, { start: x, hints: latchPairs.map(([a]) => ({ net: a, high: was(a) })) });
    if (pinned && undecidedLatches(pinned).length === 0) return pinned.x;
    const free = held.solveAt(level, { start: x });
    if (free && undecidedLatches(free).length === 0) return free.x;
    // Last, the latches left undecided are started in their other state.
    const flip = new Set((pinned ? undecidedLatches(pinned) : []).map(([a]) => a));
    const flipped = held.solveAt(level, { start: x, hints: latchPairs.map(([a]) => ({ net: a, high: was(a) !== flip.has(a) })) });
    return flipped && undecidedLatches(flipped).length === 0 ? flipped.x : undefined;
  };
  solveStep('start');
  for (const a of actions) {
    switch (a.kind) {
      case 'expect': {
        const row = rows[rows.length - 1]!;
        for (const s of a.states) {
          const v = previous?.get(s.net) ?? NaN;
          row.expected.push({ net: s.net, high: s.high, ok: v > logicThreshold(design, s.net) === s.high });
        }
        break;
      }
      case 'set':
        level.set(a.part, a.volts);
        solveStep(`set ${a.part} = ${a.volts} V`);
        break;
      case 'pulse':
        ramp(a.part);
        closed.set(a.part, true);
        solveStep(`pulse ${a.part} (press)`);
        closed.set(a.part, false);
        solveStep(`pulse ${a.part} (release)`);
        break;
      default:
        if (a.kind === 'press' || a.kind === 'close') ramp(a.part);
        closed.set(a.part, a.kind === 'press' || a.kind === 'close');
        solveStep(`${a.kind} ${a.part}`);
    }
  }
  return { nets, rows, ok: rows.every((r) => r.converged && r.expected.every((e) => e.ok)), final: previous };
}

/** An error for each net to watch (`--nets`) that is no logic net, with the nearest name as a suggestion. */
export function unknownWatched(nets: readonly string[], logic: ReadonlySet<string>): Diagnostic[] {
  return nets.filter((n) => !logic.has(n)).map((n) => error('unknown-net', `'${n}' (a watched net) is no logic net of the design`, undefined, didYouMean(n, logic)));
}
