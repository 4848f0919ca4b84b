import type { Design } from '../design/model.js';
import { buildStageGraph } from '../graph/stageGraph.js';
import { logicThreshold, solveOperatingPoint, type OperatingPoint, type StateHint } from '../solve/operatingPoint.js';
import { applyParameters, type DesignParameter } from './parameters.js';
import { searchVertex, type Probe } from './vertex.js';

export interface WorstCaseQuestion {
  /** The net whose voltage is judged. */
  net: string;
  /** 'min' for a worst-case high level (the lowest it can be), 'max' for a worst-case low level. */
  worst: 'min' | 'max';
  /** The logic state the circuit is in (latch hints), as for `solve`. */
  hints: StateHint[];
  parameters: readonly DesignParameter[];
}

export interface WorstCaseAnswer {
  nominal: number;
  /** The net's voltage at the chosen vertex, solved exactly. */
  worst: number | undefined;
  /** The vertex: every parameter at one end of its band. */
  vertex: Map<string, number>;
  /** Each parameter's linearised effect on the net across its whole band (volts), largest first. */
  effects: { id: string; volts: number }[];
  /** False when the state no longer exists at the vertex (a latch that flips there). */
  stateHolds: boolean;
  /** Vertex corrections made when re-checking the sensitivities at the vertex. */
  corrections: number;
}

/**
 * Worst case by vertex (extreme value analysis): the net's sensitivity to every parameter
 * is linearised at the nominal point (adjoint sensitivities: one transposed solve), each
 * parameter is put at the end of its band that moves the
 * net the wrong way, and the circuit is solved exactly there, starting from the nominal
 * state so the latches keep theirs. The sensitivities are then taken again at the vertex,
 * and any parameter whose best end has changed is moved and the vertex solved again, up
 * to three times. If the state stops existing on the way, that is the answer: the circuit
 * fails at that vertex.
 *
 * Exact for a net monotone in every parameter; for others it is the usual linearised
 * estimate, which the exhaustive-corner oracle checks on small designs.
 */
export function worstCaseVoltage(design: Design, q: WorstCaseQuestion): WorstCaseAnswer | undefined {
  const graph = buildStageGraph(design);
  const nominalOp = solveOperatingPoint(design, { graph, hints: q.hints });
  if (!('nodes' in nominalOp) || !nominalOp.converged) return undefined;
  // Every latch (hinted or started by the tool) must read as it did at the nominal point.
  const stillInState = (op: OperatingPoint) => nominalOp.hints.every((h) => op.nodes.get(h.net)! > logicThreshold(design, h.net) === h.high);
  const asMap = (values: Float64Array) => new Map(q.parameters.map((p, i) => [p.id, values[i]!]));
  let last = nominalOp;
  let lost = false;
  const probe = (values: Float64Array): Probe | undefined => {
    const varied = applyParameters(design, asMap(values));
    const op = solveOperatingPoint(varied.design, { graph, variation: varied.variation, start: last.x });
    if (!('nodes' in op) || !op.converged || !stillInState(op)) {
      lost = true;
      return undefined;
    }
    last = op;
    const value = op.nodes.get(q.net)!;
    // Adjoint sensitivities (one transposed solve for all parameters); forward differences where they do not apply.
    const slopes =
      adjointSlopes(op, q.net, q.parameters) ??
      q.parameters.map((p, i) => {
        const h = (p.high - p.low) * 0.01;
        const moved = Float64Array.from(values);
        moved[i] = values[i]! + h <= p.high ? values[i]! + h : values[i]! - h;
        const v = applyParameters(design, asMap(moved));
        const o = solveOperatingPoint(v.design, { graph, variation: v.variation, start: op.x });
        return 'nodes' in o && o.converged ? (o.nodes.get(q.net)! - value) / (moved[i]! - values[i]!) : 0;
      });
    return { value, slopes };
  };
  const found = searchVertex(q.parameters, q.worst, probe);
  if (!found) return undefined;
  const effects = q.parameters.map((p, i) => ({ id: p.id, volts: found.effects[i]! })).sort((a, b) => Math.abs(b.volts) - Math.abs(a.volts));
  const vertex = asMap(found.vertex);
  const holds = found.worst !== undefined && !lost;
  return { nominal: found.nominal, worst: holds ? found.worst : undefined, vertex, effects, stateHolds: holds, corrections: found.corrections };
}

/** dV(net)/dp for every parameter at the solution `op`, by the adjoint method; undefined where it does not apply. */
export function adjointSlopes(op: OperatingPoint, net: string, parameters: readonly DesignParameter[]): number[] | undefined {
  const c = op.system.circuit;
  const node = c.terminalOf.get(net);
  if (node === undefined || node < 0) return undefined;
  const sens = op.system.sensitivities(op.x, node, { gmin: 1e-12, sourceScale: 1, maxStep: Infinity, maxIterations: 1 });
  if (!sens) return undefined;
  const conductanceOf = new Map<string, number>();
  for (let e = 0; e < c.gA.length; e++) if (c.gPart[e]! >= 0) conductanceOf.set(c.design.parts[c.gPart[e]!]!.name, e);
  const fixedOf = new Map<string, number>();
  c.fixedNames.forEach((name, f) => fixedOf.set(name, f));
  const tubeOf = new Map<string, number>();
  for (let t = 0; t < c.tA.length; t++) tubeOf.set(c.design.parts[c.tubePart[t]!]!.name, t);
  const driveNode = new Map(c.design.parts.filter((p) => p.type === 'drive').map((p) => [p.name, p.node]));
  return parameters.map((p) => {
    switch (p.kind) {
      case 'resistor':
        return sens.resistors[conductanceOf.get(p.target) ?? -1] ?? 0;
      case 'perveance':
        return sens.perveance[tubeOf.get(p.target) ?? -1] ?? 0;
      case 'rail':
      case 'drive': {
        const net = p.kind === 'rail' ? p.target : driveNode.get(p.target)!;
        const f = fixedOf.get(net) ?? fixedOf.get(`${net}:source`);
        return f === undefined ? 0 : sens.fixed[f]!;
      }
    }
  });
}
