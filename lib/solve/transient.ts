import type { Design, Part } from '../design/model.js';
import type { Waveform } from '../analysis/waveform.js';
import { DEFAULT_INTERELECTRODE, findLibraryEntry, type Interelectrode } from '../models/library.js';
import type { SectionVariation } from '../models/tubeEquations.js';
import { formatSI } from '../netlist/units.js';
import { error, type Diagnostic } from '../source/diagnostic.js';
import { compileCircuit, type Circuit } from './circuit.js';
import { nodesOutsideSpan, transientSpan } from './voltageSpan.js';
import { DcSystem, type NewtonSettings } from './dcSystem.js';
import type { LinearSystemFactory } from './linearSystem.js';
import { solveOperatingPoint, type StateHint } from './operatingPoint.js';
import { highest, lowest } from '../lists.js';

export interface TransientOptions {
  /** How long to simulate (seconds). */
  stop: number;
  /** Waveforms for drives, by drive part name; other drives stay at their level. */
  inputs?: ReadonlyMap<string, Waveform>;
  /** Stray capacitance from every net to ground (farads); the design's setting (`defaults { stray = … }`) where absent. */
  strayFarads?: number;
  /** Latch states for the operating point at time 0. */
  hints?: StateHint[];
  /** Net voltages to start the operating point at time 0 from (a state reached by stepping), instead of hints. */
  start?: ReadonlyMap<string, number>;
  /** Local truncation error allowed per step: relative to each node's voltage, plus absolute volts. */
  relativeTolerance?: number;
  absoluteVolts?: number;
  /** A constant step (seconds) without error control: for tests of the method's order. */
  fixedStep?: number;
  /** 'trapezoidal' (the default, after a backward-Euler start at every corner) or backward Euler throughout. */
  method?: 'trapezoidal' | 'backward-euler';
  /** Interelectrode and stray capacitances multiplied by this (a tolerance corner; the design's own capacitors carry their values). */
  parasiticScale?: number;
  /** Per-section variation (tolerance corners, ageing), by section name. */
  variation?: ReadonlyMap<string, SectionVariation>;
  /** Steps allowed before giving up. */
  maxSteps?: number;
  /** Linear solver; the sparse LU unless a test asks for the dense reference. */
  linear?: LinearSystemFactory;
}

export interface TransientResult {
  /** Accepted time points (seconds), from 0. */
  times: number[];
  /** Voltage of a net at every time point; undefined for a net the design lacks. */
  volts(net: string): Float64Array | undefined;
  /** True when the run reached `stop`. */
  ok: boolean;
  accepted: number;
  rejected: number;
  newtonIterations: number;
  /** Why the run stopped early (errors), and the warnings of its operating point at time 0. */
  diagnostics: Diagnostic[];
  circuit: Circuit;
}

/** The interelectrode capacitances of every section, from its type's library entry (or a small triode's, for types of the builder's own). */
export function interelectrodeOf(design: Design): (section: string) => Interelectrode {
  const modelOf = new Map(design.parts.flatMap((p) => (p.type === 'tube' ? [[p.name, p.model] as const] : [])));
  const library = new Map(design.models.map((m) => [m.name, m.library ? findLibraryEntry(m.library)?.capacitance : undefined]));
  return (section) => library.get(modelOf.get(section) ?? '') ?? DEFAULT_INTERELECTRODE;
}

/** The design with each waveform's drive at its level at time `t`. */
function designAt(design: Design, inputs: ReadonlyMap<string, Waveform>, t: number): Design {
  return { ...design, parts: design.parts.map((p): Part => (p.type === 'drive' && inputs.has(p.name) ? { ...p, volts: inputs.get(p.name)!.at(t) } : p)) };
}

/**
 * Simulates a design in time. Every capacitor (the design's, each section's grid–cathode,
 * grid–plate and plate–cathode capacitance, a stray capacitance from each net to ground)
 * is replaced at each step by its companion model; the trapezoidal rule integrates, with
 * backward-Euler steps at the start and after every waveform corner (where the trapezoidal
 * rule, carrying the old current, would ring); Newton's method solves each step's
 * nonlinear circuit from a linear prediction.
 *
 * The step is chosen by local truncation error: the third divided difference of each
 * node's voltage over the last four points estimates x''' and so the trapezoidal rule's
 * error h³·x'''/12 (the second, and h²·x''/2, for a backward-Euler step); a step whose
 * error passes the tolerance is taken again shorter, and the next is scaled by the cube
 * root of the margin. Steps land exactly on waveform corners. A step Newton cannot take is
 * taken again at a quarter of its length. A node whose change flips sign three steps in a
 * row is ringing (the trapezoidal rule does not damp modes far faster than its step): one
 * backward-Euler step damps it.
 *
 * Starts from the DC operating point with every input at its level at time 0.
 */
export function simulate(design: Design, options: TransientOptions): TransientResult | { diagnostics: Diagnostic[] } {
  const inputs = options.inputs ?? new Map<string, Waveform>();
  const start = designAt(design, inputs, 0);
  const op = solveOperatingPoint(start, { ...(options.start ? { start: options.start } : { hints: options.hints }), variation: options.variation, linear: options.linear });
  if (!('nodes' in op)) return { diagnostics: op.diagnostics };
  if (!op.converged) return { diagnostics: [error('no-convergence', 'the operating point at time 0 did not converge, so there is nothing to start the simulation from', undefined), ...op.diagnostics.filter((d) => d.severity === 'error')] };
  const compiled = compileCircuit(start, {
    variation: options.variation,
    dynamic: { strayFarads: options.strayFarads ?? design.settings.strayFarads, interelectrode: interelectrodeOf(design) },
  });
  if (!compiled.circuit) return { diagnostics: compiled.diagnostics };
  const c = compiled.circuit;
  const own = new Set(design.parts.filter((p) => p.type === 'capacitor').map((p) => p.name));
  if (options.parasiticScale !== undefined) for (let k = 0; k < c.cF.length; k++) if (!own.has(c.capacitorNames[k]!)) c.cF[k] = c.cF[k]! * options.parasiticScale;
  const system = new DcSystem(c, options.linear);
  const n = c.n;
  const m = c.cA.length;
  const stuck = [...inputs.keys()].filter((name) => !c.driveFixed.has(name));
  if (stuck.length > 0) return { diagnostics: stuck.map((name) => error('short-circuit', `drive '${name}' shares its net with a rail, ground or another drive at the same level, so no waveform can move it`, undefined)) };
  const driven = [...inputs].map(([name, w]) => [c.driveFixed.get(name)!, w] as const);
  const setInputs = (t: number) => {
    for (const [f, w] of driven) c.fixedVolts[f] = w.at(t);
  };

  // The state at time 0: the operating point, unknown by unknown.
  const dc = new Map(op.system.circuit.nodeNames.map((name, i) => [name, op.x[i]!]));
  let x = Float64Array.from(c.nodeNames, (name) => dc.get(name) ?? 0);
  const fixedAt = (t: number) => {
    setInputs(t);
    return Float64Array.from(c.fixedVolts);
  };
  const times: number[] = [0];
  const states: Float64Array[] = [x];
  const fixedStates: Float64Array[] = [fixedAt(0)];

  const volt = (xs: Float64Array, fixed: Float64Array, t: number) => (t >= 0 ? xs[t]! : fixed[-1 - t]!);
  const capVolts = (xs: Float64Array, fixed: Float64Array, out: Float64Array) => {
    for (let k = 0; k < m; k++) out[k] = volt(xs, fixed, c.cA[k]!) - volt(xs, fixed, c.cB[k]!);
  };
  const vc = new Float64Array(m);
  capVolts(x, fixedStates[0]!, vc);
  const ic = new Float64Array(m); // at the DC start every capacitor carries nothing
  const companionSiemens = new Float64Array(m);
  const companionAmps = new Float64Array(m);
  const rails = [0, ...design.rails.map((r) => r.volts)];
  const settings: NewtonSettings = {
    gmin: 1e-12,
    sourceScale: 1,
    maxStep: Math.max(1, (highest(rails) - lowest(rails)) / 10),
    maxIterations: 40,
    stepTolerance: 1e-7,
    companionSiemens,
    companionAmps,
  };

  const stop = options.stop;
  const corners = [...new Set([...inputs.values()].flatMap((w) => w.corners(stop)).concat([stop]))].sort((a, b) => a - b);
  const relTol = options.relativeTolerance ?? 1e-4;
  const absTol = options.absoluteVolts ?? 1e-4;
  const trapezoidal = (options.method ?? 'trapezoidal') === 'trapezoidal';
  const maxSteps = options.maxSteps ?? 200_000;
  // The start's warnings (a hint not held, a latch undecided, a fit outside its range) stay with the run.
  const diagnostics: Diagnostic[] = op.diagnostics.filter((d) => d.severity === 'warning');
  const hMin = stop * 1e-12;
  const hMax = options.fixedStep ?? stop / 50;
  let h = options.fixedStep ?? Math.min(hMax, (corners[0] ?? stop) / 100);
  let t = 0;
  let nextCorner = 0;
  /** Points since the last corner (the start counts as one): the error estimate needs four for the trapezoidal rule, three for Euler. */
  let sinceCorner = 1;
  let accepted = 0;
  let rejected = 0;
  let iterations = 0;
  const xNew = new Float64Array(n);
  const vcNew = new Float64Array(m);
  // The last points for the error estimate, and one node's values at them (reused every step).
  const tsLast = new Float64Array(4);
  const xsLast: Float64Array[] = [xNew, xNew, xNew, xNew];
  const ys = new Float64Array(4);
  // Ringing watch: each node's last change, and how many changes in a row flipped sign.
  const lastChange = new Float64Array(n);
  const flips = new Int32Array(n);
  let damp = false;

  while (t < stop * (1 - 1e-12) && accepted < maxSteps) {
    while (corners[nextCorner]! <= t * (1 + 1e-12)) nextCorner++;
    const corner = corners[nextCorner] ?? stop;
    const landsOnCorner = t + h >= corner * (1 - 1e-9);
    const step = landsOnCorner ? corner - t : h;
    const tNew = t + step;
    const euler = !trapezoidal || sinceCorner < 2 || damp;
    const fixedNew = fixedAt(tNew);
    for (let k = 0; k < m; k++) {
      const g = ((euler ? 1 : 2) * c.cF[k]!) / step;
      companionSiemens[k] = g;
      companionAmps[k] = euler ? -g * vc[k]! : -g * vc[k]! - ic[k]!;
    }
    // Predict along the last step, then correct by Newton.
    const prev = states.length > 1 && sinceCorner > 1 ? states[states.length - 2]! : x;
    const tPrev = states.length > 1 && sinceCorner > 1 ? times[times.length - 2]! : t;
    for (let i = 0; i < n; i++) xNew[i] = tPrev < t ? x[i]! + ((x[i]! - prev[i]!) * step) / (t - tPrev) : x[i]!;
    const r = system.newton(xNew, settings);
    iterations += r.iterations;
    if (!r.converged) {
      rejected++;
      if (options.fixedStep !== undefined || h / 4 < hMin) {
        diagnostics.push(error('no-convergence', `the simulation could not take a step at ${formatSI(tNew, 's')}: Newton's method did not converge even on a step of ${formatSI(step, 's')}`, undefined));
        break;
      }
      h = step / 4;
      continue;
    }
    // Local truncation error from divided differences over the last points.
    let ratio = 0;
    const need = euler ? 3 : 4;
    if (options.fixedStep === undefined && sinceCorner + 1 >= need) {
      for (let j = 0; j < need - 1; j++) {
        tsLast[j] = times[times.length - need + 1 + j]!;
        xsLast[j] = states[states.length - need + 1 + j]!;
      }
      tsLast[need - 1] = tNew;
      xsLast[need - 1] = xNew;
      for (let i = 0; i < n; i++) {
        for (let j = 0; j < need; j++) ys[j] = xsLast[j]![i]!;
        const dd = dividedDifference(tsLast, ys, need);
        const err = euler ? step * step * Math.abs(dd) : (step * step * step * Math.abs(dd)) / 2;
        const allowed = relTol * Math.max(Math.abs(xNew[i]!), Math.abs(x[i]!)) + absTol;
        ratio = Math.max(ratio, err / allowed);
      }
      if (ratio > 1 && step > hMin * 16) {
        rejected++;
        h = step * Math.max(0.2, 0.9 * Math.cbrt(1 / ratio));
        continue;
      }
    }
    // Accept: the capacitors' currents at the new point, by the rule that made it.
    capVolts(xNew, fixedNew, vcNew);
    for (let k = 0; k < m; k++) {
      ic[k] = companionSiemens[k]! * vcNew[k]! + companionAmps[k]!;
      vc[k] = vcNew[k]!;
    }
    // The trapezoidal rule does not damp a mode much faster than the step (a node behind a
    // small resistance and its stray): excited, it rings, flipping sign every step, and
    // does not die away. Three flips in a row at a node, and one backward-Euler step,
    // which damps such a mode at once, clears it.
    damp = false;
    for (let i = 0; i < n; i++) {
      const change = xNew[i]! - x[i]!;
      flips[i] = change * lastChange[i]! < 0 && Math.abs(change) > absTol ? flips[i]! + 1 : 0;
      lastChange[i] = change;
      if (flips[i]! >= 3 && !euler) {
        damp = true;
        flips[i] = 0;
      }
    }
    x = Float64Array.from(xNew);
    t = tNew;
    times.push(t);
    states.push(x);
    fixedStates.push(fixedNew);
    accepted++;
    sinceCorner++;
    if (options.fixedStep === undefined) {
      const grow = ratio > 0 ? Math.min(2, 0.9 * Math.cbrt(1 / ratio)) : 2;
      h = Math.min(hMax, Math.max(hMin, (landsOnCorner ? Math.max(step, h) : step) * (landsOnCorner ? 1 : grow)));
      if (landsOnCorner) {
        // A corner: the slope of the input jumps, so the history says nothing of what follows.
        sinceCorner = 1;
        const after = corners[nextCorner + 1] ?? stop;
        h = Math.min(h, step, (after - t) / 8);
        if (!(h > 0)) h = hMin;
      }
    }
  }
  let ok = t >= stop * (1 - 1e-12);
  if (!ok && !diagnostics.some((d) => d.severity === 'error')) diagnostics.push(error('no-convergence', `the simulation stopped at ${formatSI(t, 's')} after ${accepted} steps (the limit)`, undefined));
  const bound = transientSpan(c, fixedStates);
  const strayed = states.findIndex((s) => nodesOutsideSpan(c, s, bound).length > 0);
  if (strayed >= 0) {
    ok = false;
    diagnostics.push(
      error('no-convergence', `the simulation left the span a run in time can reach (${bound.low.toFixed(1)} to ${bound.high.toFixed(1)} V) at ${formatSI(times[strayed]!, 's')}: its results are not a solution`, undefined, [
        `nets outside it: ${nodesOutsideSpan(c, states[strayed]!, bound).slice(0, 5).join(', ')}`,
      ]),
    );
  }
  const traces = new Map<string, Float64Array>();
  return {
    times,
    volts(net) {
      const term = c.terminalOf.get(net);
      if (term === undefined) return undefined;
      let trace = traces.get(net);
      if (!trace) traces.set(net, (trace = Float64Array.from(states, (s, i) => volt(s, fixedStates[i]!, term))));
      return trace;
    },
    ok,
    accepted,
    rejected,
    newtonIterations: iterations,
    diagnostics,
    circuit: c,
  };
}

/** The highest divided difference of the first `count` values `y` at times `t` (Newton's form); overwrites `y`. */
function dividedDifference(t: Float64Array, y: Float64Array, count: number): number {
  for (let level = 1; level < count; level++) for (let i = count - 1; i >= level; i--) y[i] = (y[i]! - y[i - 1]!) / (t[i]! - t[i - level]!);
  return y[count - 1]!;
}
