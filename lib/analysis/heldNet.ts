import type { Design } from '../design/model.js';
import type { SectionVariation } from '../models/tubeEquations.js';
import { buildStageGraph, type StageGraph } from '../graph/stageGraph.js';
import { compileCircuit } from '../solve/circuit.js';
import { DcSystem } from '../solve/dcSystem.js';
import { solveOperatingPoint, type OperatingPoint, type SolveOptions } from '../solve/operatingPoint.js';

/**
 * A design with one net held by a stiff source whose level changes between solves without
 * compiling again: the shared mechanism of transfer-curve sweeps and trigger bisections.
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

  /** Solves with the net at `volts` (`hints` and `start` as for `solveOperatingPoint`); undefined if it does not converge. */
  solveAt(volts: number, options: Pick<SolveOptions, 'hints' | 'start'> = {}): OperatingPoint | undefined {
    if (!this.system) return undefined;
    this.system.circuit.fixedVolts[this.fixed] = volts;
    const op = solveOperatingPoint(this.design, { graph: this.graph, system: this.system, ...options });
    return 'nodes' in op && op.converged ? op : undefined;
  }
}
