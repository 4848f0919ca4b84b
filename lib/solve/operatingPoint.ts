import { GROUND, type Design } from '../design/model.js';
import { buildStageGraph, type StageGraph } from '../graph/stageGraph.js';
import { findLibraryEntry, typeLabel } from '../models/library.js';
import { R, evaluateTube, P } from '../models/tubeEquations.js';
import { error, warning, type Diagnostic } from '../source/diagnostic.js';
import { compileCircuit, type Circuit, type CompileOptions } from './circuit.js';
import { DcSystem, type NewtonSettings } from './dcSystem.js';
import type { LinearSystemFactory } from './linearSystem.js';
import { nodesOutsideSpan, voltageSpan } from './voltageSpan.js';
import { append, highest, lowest } from '../lists.js';

/** The logic state asked of a net: 1 high, 0 low. */
export interface StateHint {
  net: string;
  high: boolean;
}

export interface SolveOptions extends CompileOptions {
  /** Logic states to start from; each latch without one starts with its first net low. */
  hints?: StateHint[];
  /** Undamped Newton (no step limit): for tests that compare it with the damped one. */
  undamped?: boolean;
  /** Linear solver; the sparse LU unless a test or the bench asks for the dense reference. */
  linear?: LinearSystemFactory;
  /** A solved system of the same topology to reuse (its factorisation's symbolic work). */
  system?: DcSystem;
  /**
   * A previous solution to start from instead of the devices-off guess. It already holds
   * the latches' states, so with a start and no hints nothing is pinned: each latch stays
   * in the state it starts in, if that state still exists. Either the unknowns of this
   * system, or net voltages by name (from a solve of the design before a switch moved:
   * nets it lacks start at 0 V).
   */
  start?: Float64Array | ReadonlyMap<string, number>;
  /** The design's stage graph, when the caller has it already. */
  graph?: StageGraph;
  /** Newton iterations allowed per run (200); tests lower it to reach the non-convergence report. */
  maxIterations?: number;
}

export interface TubeOperatingPoint {
  name: string;
  vak: number;
  vgk: number;
  vg2k: number | undefined;
  plateAmps: number;
  gridAmps: number;
  screenAmps: number;
  plateWatts: number;
  screenWatts: number;
}

export interface ResistorOperatingPoint {
  name: string;
  amps: number;
  watts: number;
  ratingWatts: number;
}

export interface HintOutcome {
  net: string;
  high: boolean;
  /** True when the tool chose this state (a latch nobody gave a hint for). */
  assumed: boolean;
  volts: number;
  held: boolean;
  /** The latch this hint starts has no states at all (`latch-no-state`): nothing was held. */
  stateless?: true;
}

/** A latch whose inputs hold both of its nets at one level: a stable state, not the metastable point. */
export interface ForcedLatch {
  nets: [string, string];
  volts: [number, number];
  /** Both nets high (both sides cut off) rather than both low (set and clear at once). */
  high: boolean;
}

export interface OperatingPoint {
  converged: boolean;
  /** How the solution was reached. */
  method: 'newton' | 'gmin stepping' | 'source stepping' | 'pseudo-transient';
  iterations: number;
  /** Voltage of every net of the design, rails and ground included. */
  nodes: Map<string, number>;
  tubes: TubeOperatingPoint[];
  resistors: ResistorOperatingPoint[];
  /** Largest KCL residual of the real circuit at the solution (amps). */
  residualAmps: number;
  /** Nets outside the span of the fixed voltages (`voltageSpan`), as `name at V`: empty for a solution; any makes it not converged. */
  outsideSpan: string[];
  hints: HintOutcome[];
  /** Latches held with both nets at one level by their inputs (stable; not `state-undecided`). */
  forcedLatches: ForcedLatch[];
  diagnostics: Diagnostic[];
  /** The solved unknowns, to warm-start another solve of the same system. */
  x: Float64Array;
  system: DcSystem;
}

/** KCL residual every reported solution must meet (amps). */
export const RESIDUAL_LIMIT = 1e-9;

/** Pin conductances stepped down to release a logic-consistent start (siemens), then 0. */
const PIN_STEPS = [1e-2, 1e-4, 1e-6, 1e-8];
const GMIN_FLOOR = 1e-12;
const GMIN_STEPS = [1e-3, 1e-4, 1e-5, 1e-6, 1e-7, 1e-8, 1e-9, 1e-10, 1e-11, GMIN_FLOOR];
const SOURCE_STEPS = [0.05, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 1];
/** Steps of pseudo-transient continuation at most: g halves per good step from 1 mS, so about 35 good steps reach the real circuit. */
const PSEUDO_TRANSIENT_STEPS = 400;
/** Newton iterations pseudo-transient continuation may spend in all (a 1,000-stage chain takes about 500). */
const PSEUDO_TRANSIENT_ITERATIONS = 3000;

/** The voltage a net reads as high from: half its plate-load rail (or of the highest rail). */
export function logicThreshold(design: Design, net: string): number {
  return pullUpVolts(design)(net) / 2;
}

const pullUpCache = new WeakMap<Design, Map<string, number>>();

/** For every net, the positive rail its plate load (or any resistor) returns it to; the highest rail where none. */
function pullUpVolts(design: Design): (net: string) => number {
  let map = pullUpCache.get(design);
  if (!map) {
    map = new Map();
    const rails = new Map(design.rails.map((r) => [r.name, r.volts]));
    for (const p of design.parts) {
      if (p.type !== 'resistor') continue;
      for (const [net, other] of [
        [p.a, p.b],
        [p.b, p.a],
      ] as const) {
        const v = rails.get(other);
        if (v !== undefined && v > 0 && (!map.has(net) || p.role === 'load')) map.set(net, v);
      }
    }
    pullUpCache.set(design, map);
  }
  const fallback = Math.max(1, highest(design.rails.map((r) => r.volts)));
  const known = map;
  return (net) => known.get(net) ?? fallback;
}

/**
 * The DC operating point of a design: modified nodal analysis (every net not held by a
 * stiff source an unknown), solved by Newton's method with analytic Jacobians and step
 * limiting, falling back on gmin stepping, then source stepping, then pseudo-transient
 * continuation.
 *
 * State selection: hinted nets (and, for every latch no hint covers, its first net in name
 * order low, as `show` lists the latch) are first pinned towards their logic level through a
 * conductance, which is then stepped down to zero; each stage starts from the last. So a
 * latch settles in the stable state nearest the hint; if that state does not exist the
 * pinned net lets go, and the outcome says the hint was not held (a warning for the user's
 * hint; for the tool's own choice, only the outcome). A latch whose two nets end within
 * 10 % of their swing of each other is reported as undecided (the metastable point, never
 * a state) when the resistance seen into its nets is negative (`drivingPointOhms`), and
 * as a forced state (`forcedLatches`) when it is positive: both nets low because set and
 * clear act at once, or both high.
 *
 * After every solve the KCL residual of the real circuit is checked at every node: above
 * 1 nA the result is marked not converged, with the nets that would not settle. So is a
 * solution with a node outside the span of the fixed voltages (`voltageSpan`), which no
 * circuit of passive parts can reach.
 */
export function solveOperatingPoint(design: Design, options: SolveOptions = {}): OperatingPoint | { diagnostics: Diagnostic[] } {
  let system = options.system;
  const diagnostics: Diagnostic[] = [];
  if (!system) {
    const compiled = compileCircuit(design, options);
    if (!compiled.circuit) return { diagnostics: compiled.diagnostics };
    system = new DcSystem(compiled.circuit, options.linear);
  }
  const c = system.circuit;
  const graph = options.graph ?? buildStageGraph(design);
  const byName = options.start instanceof Map ? options.start : undefined;
  const start = byName ? startByName(c, byName) : (options.start as Float64Array | undefined);
  const warm = start !== undefined && start.length === c.n && options.hints === undefined;
  const hints = warm ? [] : collectHints(design, graph, options.hints ?? [], c, diagnostics);
  const rails = [0, ...design.rails.map((r) => r.volts)];
  const span = highest(rails) - lowest(rails);
  const base: NewtonSettings = {
    gmin: GMIN_FLOOR,
    sourceScale: 1,
    maxStep: options.undamped ? Infinity : Math.min(20, Math.max(1, span / 10)),
    maxIterations: options.maxIterations ?? 200,
  };
  const x = new Float64Array(c.n);
  if (start && start.length === c.n) x.set(start);
  else system.devicesOff(x, base);

  let iterations = 0;
  let method: OperatingPoint['method'] = 'newton';
  const run = (s: NewtonSettings): boolean => {
    const r = system.newton(x, s);
    iterations += r.iterations;
    return r.converged;
  };
  const robust = (s: NewtonSettings): boolean => {
    const saved = Float64Array.from(x);
    if (run(s)) return true;
    x.set(saved);
    method = 'gmin stepping';
    if (GMIN_STEPS.every((g) => run({ ...s, gmin: Math.max(g, s.gmin) }))) return true;
    x.set(saved);
    method = 'source stepping';
    if (SOURCE_STEPS.every((k) => run({ ...s, sourceScale: k, gmin: 1e-9 })) && run(s)) return true;
    x.set(saved);
    method = 'pseudo-transient';
    return pseudoTransient(s);
  };
  /**
   * Pseudo-transient continuation: every node gets a capacitor to its last value, which a
   * backward-Euler step turns into a conductance g to it, and g falls step by step to 0 (the
   * circuit settling in time, without its real capacitors). Each step is a small move from
   * the last, so Newton converges where a long chain of high-gain stages defeats it from a
   * cold start (C. T. Kelley and D. E. Keyes, "Convergence analysis of pseudo-transient
   * continuation", SIAM J. Numer. Anal., 1998). A failed step is retried with a larger g;
   * the number of steps is bounded (PSEUDO_TRANSIENT_STEPS), so it always ends.
   */
  const pseudoTransient = (s: NewtonSettings): boolean => {
    const pinSiemens = new Float64Array(c.n);
    const pinVolts = new Float64Array(c.n);
    let g = 1e-3;
    const budget = iterations + PSEUDO_TRANSIENT_ITERATIONS;
    for (let k = 0; k < PSEUDO_TRANSIENT_STEPS && g > 1e-13 && iterations < budget; k++) {
      pinSiemens.fill(g);
      pinVolts.set(x);
      if (run({ ...s, pinSiemens, pinVolts, maxIterations: Math.min(50, s.maxIterations) })) g /= 2;
      else {
        x.set(pinVolts);
        g *= 10;
        if (g > 10) return false;
      }
    }
    return run(s);
  };

  let converged: boolean;
  const pinned = hints.filter((h) => h.terminal >= 0);
  if (pinned.length > 0) {
    const pinSiemens = new Float64Array(c.n);
    const pinVolts = new Float64Array(c.n);
    for (const h of pinned) {
      pinVolts[h.terminal] = h.high ? h.pullUp : 0.1 * h.pullUp;
      x[h.terminal] = pinVolts[h.terminal]!;
    }
    // The pinned stages only lead the way: a stage that does not settle (a latch torn from a
    // state that no longer exists) is no failure, so long as the released circuit converges
    // and meets the residual check below.
    for (const g of PIN_STEPS) {
      for (const h of pinned) pinSiemens[h.terminal] = g;
      robust({ ...base, pinSiemens, pinVolts });
    }
    converged = robust(base);
  } else converged = robust(base);

  let residualAmps = system.trueResidual(x);
  if (converged && residualAmps > RESIDUAL_LIMIT) {
    // gmin's own current, 1e-12 S times a node's voltage, is a nanoamp at a kilovolt: a
    // high-voltage design can converge with gmin and miss the limit without it. A few
    // iterations without gmin, from the solution, polish it off.
    const saved = Float64Array.from(x);
    if (run({ ...base, gmin: 0, maxIterations: 20 })) residualAmps = system.trueResidual(x);
    else x.set(saved);
  }
  if (!converged || residualAmps > RESIDUAL_LIMIT) {
    const worst = system.worstNodes(5).filter((i) => Math.abs(system.f[i]!) > RESIDUAL_LIMIT).map((i) => c.nodeNames[i]!);
    diagnostics.push(
      error('no-convergence', `the operating point did not converge: KCL residual ${Number.isFinite(residualAmps) ? `${residualAmps.toExponential(2)} A` : 'not measurable (the device laws gave no finite current)'} (limit 1 nA)`, undefined, [
        `nets that would not settle: ${worst.join(', ') || 'none above the limit; Newton stopped early'}`,
      ]),
    );
    converged = false;
  }
  let outside: string[] = [];
  if (converged) {
    // A solution that meets KCL but leaves the span of the fixed voltages comes from a
    // device law gone wrong, never from a circuit: it is not reported as a state.
    outside = nodesOutsideSpan(c, x);
    if (outside.length > 0) {
      const span = voltageSpan(c);
      diagnostics.push(
        error('no-convergence', `the operating point left the span of the fixed voltages (${span.low.toFixed(2)} to ${span.high.toFixed(2)} V), which no DC solution can`, undefined, [
          `nets outside it: ${outside.slice(0, 5).join(', ')}${outside.length > 5 ? ` and ${outside.length - 5} more` : ''}`,
        ]),
      );
      converged = false;
    }
  }
  const nodes = new Map<string, number>();
  const volt = (t: number) => (t >= 0 ? x[t]! : c.fixedVolts[-1 - t]!);
  for (const [net, t] of c.terminalOf) nodes.set(net, volt(t));
  nodes.set(GROUND, 0);

  const outcomes: HintOutcome[] = hints.map((h) => {
    const volts = nodes.get(h.net) ?? 0;
    const held = h.high ? volts > h.pullUp / 2 : volts <= h.pullUp / 2;
    // The tool's own choice of start is only a place to start from: the state the latch
    // settles in instead is the answer, and the outcome says so; no warning.
    if (!held && !h.assumed) {
      diagnostics.push(
        warning('hint-not-held', `${h.net} was started ${h.high ? 'high' : 'low'} but settled at ${volts.toFixed(2)} V: that state does not exist (the hint was released)`, undefined),
      );
    }
    return { net: h.net, high: h.high, assumed: h.assumed, volts, held };
  });
  const forcedLatches: ForcedLatch[] = [];
  for (const loop of graph.loops) {
    if (loop.kind !== 'latch') continue;
    const [a, b] = loop.nets as [string, string];
    const swing = pullUpVolts(design)(a);
    const va = nodes.get(a) ?? 0;
    const vb = nodes.get(b) ?? 0;
    if (Math.abs(va - vb) >= 0.1 * swing) continue;
    // Two nets at one level are either the metastable point (the pair's loop gain above one:
    // no state) or a state the inputs force (set and clear at once: both low; both sides
    // cut off: both high), which is stable and real. The resistance seen into a net tells
    // them apart: negative only at the unstable point.
    const terminals = [c.terminalOf.get(a), c.terminalOf.get(b)].filter((t): t is number => t !== undefined && t >= 0);
    const ohms = converged && terminals.length > 0 ? system.drivingPointOhms(x, terminals, base) : undefined;
    if (ohms !== undefined && ohms.every((z) => z > 0)) {
      const high = (va + vb) / 2 > logicThreshold(design, a);
      const level = high ? 'high' : 'low';
      const fedFromOutside = [a, b].some((n) => (graph.graph.predecessors(n) ?? []).some((p) => p !== a && p !== b));
      if (fedFromOutside) forcedLatches.push({ nets: [a, b], volts: [va, vb], high });
      else {
        // Nothing but each other feeds the pair, so nothing forces it: a pair that settles
        // with both nets at one level from a start in one of its states has no such state.
        for (const o of outcomes) {
          if (o.net !== a && o.net !== b) continue;
          o.held = false;
          o.stateless = true;
        }
        diagnostics.push(
          warning('latch-no-state', `latch ${a} ↔ ${b} holds no state: both nets settle ${level} (${va.toFixed(2)} V, ${vb.toFixed(2)} V), a stable point of the pair with ${high ? 'both sides cut off' : 'both sides conducting'}, and nothing but each other feeds them`, undefined),
        );
      }
    } else {
      diagnostics.push(warning('state-undecided', `latch ${a}/${b} sits undecided at ${va.toFixed(2)} V / ${vb.toFixed(2)} V: it holds no state here`, undefined));
    }
  }
  const tubes = tubeReport(c, x);
  append(diagnostics, trustedRangeWarnings(design, tubes));
  return { converged, method, iterations, nodes, tubes, resistors: resistorReport(c, x), residualAmps, outsideSpan: outside, hints: outcomes, forcedLatches, diagnostics, x, system };
}

/**
 * The unknowns of `c` from net voltages by name. An internal node (behind a cathode
 * interface or a diode's series resistance) that the map lacks starts at the net its
 * internal resistance leads to, not at 0 V, which would put a diode hard into conduction.
 */
function startByName(c: Circuit, byName: ReadonlyMap<string, number>): Float64Array {
  const x = Float64Array.from(c.nodeNames, (name) => byName.get(name) ?? NaN);
  const volt = (t: number) => (t >= 0 ? x[t]! : c.fixedVolts[-1 - t]!);
  for (let e = 0; e < c.gA.length; e++) {
    if (c.gPart[e]! >= 0) continue;
    const a = c.gA[e]!;
    const b = c.gB[e]!;
    if (a >= 0 && Number.isNaN(x[a]!) && !Number.isNaN(volt(b))) x[a] = volt(b);
    else if (b >= 0 && Number.isNaN(x[b]!) && !Number.isNaN(volt(a))) x[b] = volt(a);
  }
  for (let i = 0; i < x.length; i++) if (Number.isNaN(x[i]!)) x[i] = 0;
  return x;
}

/** A section counts as conducting, for the trusted-range check, above this plate current. */
const CONDUCTING_AMPS = 1e-6;

/** Warns, per tube type from the library, of conducting sections whose plate voltage lies outside the range its fit is trusted over. */
function trustedRangeWarnings(design: Design, tubes: TubeOperatingPoint[]): Diagnostic[] {
  const modelOf = new Map(design.parts.filter((p) => p.type === 'tube').map((p) => [p.name, p.model]));
  const byModel = new Map<string, number[]>();
  for (const t of tubes) {
    if (t.plateAmps < CONDUCTING_AMPS) continue;
    const m = modelOf.get(t.name)!;
    (byModel.get(m) ?? byModel.set(m, []).get(m)!).push(t.vak);
  }
  const out: Diagnostic[] = [];
  for (const model of design.models) {
    const entry = model.library ? findLibraryEntry(model.library) : undefined;
    const vaks = byModel.get(model.name);
    if (!entry || !vaks) continue;
    const [lo, hi] = entry.trustedPlateVolts;
    const outside = vaks.filter((v) => v < lo || v > hi);
    if (outside.length === 0) continue;
    const [a, b] = [lowest(outside).toFixed(1), highest(outside).toFixed(1)];
    const range = a === b ? `${a} V` : `${a}–${b} V`;
    out.push(
      warning('outside-trusted-range', `${typeLabel(model.name, entry.designation)} is trusted from ${lo} to ${hi} V on the plate; ${outside.length} conducting section${outside.length === 1 ? '' : 's'} here run${outside.length === 1 ? 's' : ''} at ${range}`, model.span, [
        'fit the type to bench readings of your own tubes at these voltages before trusting the levels',
      ]),
    );
  }
  return out;
}

interface ResolvedHint {
  net: string;
  high: boolean;
  assumed: boolean;
  terminal: number;
  pullUp: number;
}

function collectHints(design: Design, graph: StageGraph, given: StateHint[], c: Circuit, diagnostics: Diagnostic[]): ResolvedHint[] {
  const out: ResolvedHint[] = [];
  const pullUp = pullUpVolts(design);
  const seen = new Set<string>();
  const resolve = (h: StateHint, assumed: boolean) => {
    const t = c.terminalOf.get(h.net);
    if (t === undefined) {
      diagnostics.push(error('unknown-net', `hint for unknown net '${h.net}'`, undefined));
      return;
    }
    seen.add(h.net);
    out.push({ net: h.net, high: h.high, assumed, terminal: t, pullUp: pullUp(h.net) });
  };
  for (const h of given) resolve(h, false);
  for (const loop of graph.loops) {
    if (loop.kind !== 'latch') continue;
    // The latch's first net is the first of its two in name order (numbers compared as
    // numbers: `compareNames`), as `show` lists it; it starts low.
    const [a, b] = loop.nets as [string, string];
    if (seen.has(a) || seen.has(b)) continue;
    resolve({ net: a, high: false }, true);
  }
  return out;
}

function tubeReport(c: Circuit, x: Float64Array): TubeOperatingPoint[] {
  const r = new Float64Array(R.size);
  const volt = (t: number) => (t >= 0 ? x[t]! : c.fixedVolts[-1 - t]!);
  const out: TubeOperatingPoint[] = [];
  for (let t = 0; t < c.tA.length; t++) {
    const vk = volt(c.tK[t]!);
    const vak = volt(c.tA[t]!) - vk;
    const vgk = volt(c.tG[t]!) - vk;
    const screen = c.hasScreen[t] === 1;
    const vg2k = screen ? volt(c.tS[t]!) - vk : undefined;
    evaluateTube(c.tubeParams, t * P.size, vgk, vak, vg2k ?? 0, r, 0);
    const plateAmps = r[R.ia]!;
    const screenAmps = screen ? r[R.is]! : 0;
    out.push({
      name: c.design.parts[c.tubePart[t]!]!.name,
      vak,
      vgk,
      vg2k,
      plateAmps,
      gridAmps: r[R.ig]!,
      screenAmps,
      plateWatts: plateAmps * vak,
      screenWatts: screenAmps * (vg2k ?? 0),
    });
  }
  return out;
}

function resistorReport(c: Circuit, x: Float64Array): ResistorOperatingPoint[] {
  const volt = (t: number) => (t >= 0 ? x[t]! : c.fixedVolts[-1 - t]!);
  const out: ResistorOperatingPoint[] = [];
  for (let e = 0; e < c.gA.length; e++) {
    const part = c.gPart[e]!;
    if (part < 0) continue;
    const p = c.design.parts[part]!;
    if (p.type !== 'resistor') continue;
    const amps = (volt(c.gA[e]!) - volt(c.gB[e]!)) * c.gS[e]!;
    out.push({ name: p.name, amps, watts: amps * amps * p.ohms, ratingWatts: p.watts });
  }
  return out;
}
