import type { Design } from '../design/model.js';
import type { SectionVariation } from '../models/tubeEquations.js';
import { buildStageGraph, type StageGraph } from '../graph/stageGraph.js';
import { compileCircuit } from '../solve/circuit.js';
import { DcSystem } from '../solve/dcSystem.js';
import { withinSpan } from '../solve/voltageSpan.js';
import { RESIDUAL_LIMIT, solveOperatingPoint, type OperatingPoint, type SolveOptions } from '../solve/operatingPoint.js';
import { highest, lowest } from '../lists.js';

/**
 * A design with one net held by a stiff source whose level changes between solves without
 * compiling again: the shared mechanism of transfer-curve sweeps and trigger continuations.
 * The net's own driver stays in place (the source overrides it), so its grids still load
 * the nets that drive them; a drive already on the net is replaced.
 */
export class HeldNet {
  readonly design: Design;
  readonly graph: StageGraph;
  private readonly system: DcSystem | undefined;
  private readonly fixed: number;

  constructor(design: Design, readonly net: string, variation?: ReadonlyMap<string, SectionVariation>) {
    const parts = design.parts.filter((p) => !(p.type === 'drive' && p.node === net));
    this.design = { ...design, parts: [...parts, { type: 'drive', name: `held:${net}`, node: net, volts: 0, tol: 0, sourceOhms: 0 }] };
    this.graph = buildStageGraph(this.design);
    const circuit = compileCircuit(this.design, { variation }).circuit;
    this.system = circuit && new DcSystem(circuit);
    this.fixed = circuit ? -1 - circuit.terminalOf.get(net)! : -1;
  }

  /** False when the design with the net held does not compile (a closed contact already holds it at another level). */
  get compiles(): boolean {
    return this.system !== undefined;
  }

  /** Solves with the net at `volts` (`hints` and `start` as for `solveOperatingPoint`); undefined if it does not converge. */
  solveAt(volts: number, options: Pick<SolveOptions, 'hints' | 'start'> = {}): OperatingPoint | undefined {
    if (!this.system) return undefined;
    this.system.circuit.fixedVolts[this.fixed] = volts;
    const op = solveOperatingPoint(this.design, { graph: this.graph, system: this.system, ...options });
    return 'nodes' in op && op.converged ? op : undefined;
  }

  /**
   * Newton alone from `start` with the net at `volts`, nothing pinned, no reports: the
   * inner step of a continuation, where the last solution is close. Returns the unknowns,
   * or undefined when Newton does not converge from there (near the end of a branch,
   * which the continuation answers with a shorter step, not with homotopies that would
   * find another state).
   */
  continueAt(volts: number, start: Float64Array): Float64Array | undefined {
    if (!this.system) return undefined;
    const c = this.system.circuit;
    c.fixedVolts[this.fixed] = volts;
    const x = Float64Array.from(start);
    const rails = [0, ...this.design.rails.map((r) => r.volts)];
    const maxStep = Math.min(20, Math.max(1, (highest(rails) - lowest(rails)) / 10));
    const converged = this.system.newton(x, { gmin: 1e-12, sourceScale: 1, maxStep, maxIterations: 50 }).converged;
    return converged && this.system.trueResidual(x) <= RESIDUAL_LIMIT && withinSpan(c, x) ? x : undefined;
  }

  /** Every net's voltage in a solution of this design. */
  nodesOf(x: Float64Array): Map<string, number> {
    const c = this.system!.circuit;
    return new Map([...c.terminalOf].map(([net, t]) => [net, t >= 0 ? x[t]! : c.fixedVolts[-1 - t]!]));
  }

  /** The unknowns of this design's circuit from net voltages by name (0 where unknown). */
  startFrom(nodes: ReadonlyMap<string, number>): Float64Array {
    return Float64Array.from(this.system!.circuit.nodeNames, (name) => nodes.get(name) ?? 0);
  }

  /** A net's voltage in a solution of this design. */
  voltsOf(x: Float64Array, net: string): number {
    const t = this.system!.circuit.terminalOf.get(net)!;
    return t >= 0 ? x[t]! : this.system!.circuit.fixedVolts[-1 - t]!;
  }
}
