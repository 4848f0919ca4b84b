import type { Design } from '../design/model.js';
import { NOMINAL_VARIATION, P, type SectionVariation } from '../models/tubeEquations.js';
import { compileCircuit, type Circuit } from '../solve/circuit.js';
import { DcSystem, type NewtonSettings } from '../solve/dcSystem.js';
import { RESIDUAL_LIMIT } from '../solve/operatingPoint.js';
import { withinSpan } from '../solve/voltageSpan.js';
import { emissionBand, type AgeingScenario } from './ageing.js';
import { localDesign } from './localDesign.js';
import type { Region } from './region.js';
import type { Band, Probe } from './vertex.js';
import { highest, largestMagnitude, lowest } from '../lists.js';

/**
 * One toleranced quantity of a local problem. Kinds beyond the design's own parameters:
 * `interface`, a section's cathode interface resistance under an ageing scenario, and
 * `level`, a boundary net's voltage, whose band is the interval its logic state allows.
 */
export interface LocalParameter extends Band {
  kind: 'resistor' | 'drive' | 'perveance' | 'interface' | 'rail' | 'level';
  /** The part, section, rail or boundary net it belongs to. */
  target: string;
}

/** A cathode interface band starts here rather than at 0 Ω, which no conductance can stand for. */
export const NO_INTERFACE_OHMS = 1e-3;

/**
 * The parameters of a region in their fixed order (resistors, drives, sections'
 * emission and interface, rails, then boundary levels), with the region's own names.
 * Two regions with the same key list the same kinds in the same order, so values found
 * for one apply to the other position by position. Boundary levels come with nominal
 * and band 0; the caller sets them.
 */
export function regionParameters(design: Design, region: Region, scenario: AgeingScenario): LocalParameter[] {
  const out: LocalParameter[] = [];
  const spread = new Map(design.models.map((m) => [m.name, m.spread]));
  for (const p of region.parts) {
    if (p.type === 'resistor') out.push({ kind: 'resistor', target: p.name, nominal: p.ohms, low: p.ohms * (1 - p.tol), high: p.ohms * (1 + p.tol) });
    else if (p.type === 'drive') out.push({ kind: 'drive', target: p.name, ...band(p.volts, p.tol) });
  }
  for (const p of region.parts) {
    if (p.type !== 'tube') continue;
    const { low, high } = emissionBand(spread.get(p.model) ?? 0, scenario);
    out.push({ kind: 'perveance', target: p.name, nominal: 1, low, high });
    if (scenario.interfaceOhms > 0) out.push({ kind: 'interface', target: p.name, nominal: NO_INTERFACE_OHMS, low: NO_INTERFACE_OHMS, high: scenario.interfaceOhms });
  }
  for (const r of region.rails) out.push({ kind: 'rail', target: r.name, ...band(r.volts, r.tol) });
  for (const b of region.boundaries) out.push({ kind: 'level', target: b, nominal: 0, low: 0, high: 0 });
  return out;
}

function band(volts: number, tol: number): Band {
  const a = volts * (1 - tol);
  const b = volts * (1 + tol);
  return { nominal: volts, low: Math.min(a, b), high: Math.max(a, b) };
}

/**
 * A region compiled for the solver once, and solved many times at different parameter
 * values: the local solve of the chained worst-case analysis. Boundary nets are held by
 * stiff sources; parameters are written straight into the compiled circuit's arrays, so
 * no solve compiles again, and each solve starts from the last solution.
 */
export class LocalProblem {
  readonly circuit: Circuit;
  readonly system: DcSystem;
  /** Terminal of the judged net (the region's first target): an unknown, or a fixed voltage when a closed switch ties it to a rail. */
  readonly target: number;
  private readonly kinds: LocalParameter['kind'][];
  private readonly slots: Int32Array;
  private readonly x: Float64Array;
  private warm = false;
  private readonly settings: NewtonSettings;
  /** The case's contacts short a boundary to a rail in this cut: it has no solution. */
  private readonly shorted: boolean = false;

  constructor(design: Design, region: Region, scenario: AgeingScenario, close: ReadonlySet<string> = new Set()) {
    const local = localDesign(design, region).design;
    const variation = new Map<string, SectionVariation>();
    if (scenario.interfaceOhms > 0) for (const p of region.parts) if (p.type === 'tube') variation.set(p.name, { ...NOMINAL_VARIATION, cathodeOhms: NO_INTERFACE_OHMS });
    // A closed contact can tie a boundary net, held stiff here, to a rail or a drive (a plate
    // joined through a switch to a net a button pulls to a rail, or to a stiff drive): the
    // whole design compiles, the local cut of it does not. Such a case has no local
    // solution; the problem is built with every contact open so that its callers get "no
    // solution", never a throw.
    let compiled = compileCircuit(local, { close, variation });
    if (!compiled.circuit) {
      this.shorted = true;
      compiled = compileCircuit({ ...local, parts: local.parts.map((p) => (p.type === 'switch' ? { ...p, closed: false } : p)) }, { variation });
    }
    if (!compiled.circuit) throw new Error(`local problem of ${region.targets.join(', ')} does not compile: ${compiled.diagnostics.map((d) => d.message).join('; ')}`);
    const c = compiled.circuit;
    this.circuit = c;
    this.system = new DcSystem(c);
    this.target = c.terminalOf.get(region.targets[0]!)!;
    this.x = new Float64Array(c.n);
    const conductanceOfPart = new Map<number, number>();
    for (let e = 0; e < c.gA.length; e++) if (c.gPart[e]! >= 0) conductanceOfPart.set(c.gPart[e]!, e);
    const tubeOf = new Map<string, number>();
    for (let t = 0; t < c.tA.length; t++) tubeOf.set(local.parts[c.tubePart[t]!]!.name, t);
    const fixedOf = (net: string) => {
      const f = c.fixedNames.indexOf(`${net}:source`);
      return f >= 0 ? f : -1 - c.terminalOf.get(net)!;
    };
    const interfaceOf = (section: string) => {
      const inner = c.nodeNames.indexOf(`${section}:k`);
      for (let e = 0; e < c.gA.length; e++) if (c.gA[e] === inner && c.gPart[e] === -1) return e;
      return -1;
    };
    const params = regionParameters(design, region, scenario);
    this.kinds = params.map((p) => p.kind);
    const nameIndex = new Map(local.parts.map((p, i) => [p.name, i]));
    this.slots = Int32Array.from(params, (p) => {
      switch (p.kind) {
        case 'resistor':
          return conductanceOfPart.get(nameIndex.get(p.target)!) ?? -1;
        case 'drive': {
          const d = local.parts[nameIndex.get(p.target)!]!;
          return d.type === 'drive' ? fixedOf(d.node) : -1;
        }
        case 'perveance':
          return tubeOf.get(p.target) ?? -1;
        case 'interface':
          return interfaceOf(p.target);
        case 'rail':
        case 'level':
          return fixedOf(p.target);
      }
    });
    const rails = [0, ...region.rails.map((r) => r.volts)];
    this.settings = { gmin: 1e-12, sourceScale: 1, maxStep: Math.max(1, (highest(rails) - lowest(rails)) / 10), maxIterations: 100 };
  }

  /**
   * Whether parameter `i` can move no voltage of the region whatever its value: a part not
   * in the circuit, a resistor between two held nodes, or a section's emission where its
   * plate, cathode and screen are all held (a grid the region feeds, whose plate is a
   * boundary: emission scales the plate and screen currents, not the grid's, and those
   * flow between fixed voltages).
   */
  inert(i: number): boolean {
    const slot = this.slots[i]!;
    if (slot < 0) return true;
    const c = this.circuit;
    switch (this.kinds[i]!) {
      case 'resistor':
        return c.gA[slot]! < 0 && c.gB[slot]! < 0;
      case 'perveance':
        return c.tA[slot]! < 0 && c.tK[slot]! < 0 && (!c.hasScreen[slot] || c.tS[slot]! < 0);
      default:
        return false;
    }
  }

  /** Writes parameter values (in `regionParameters` order) into the circuit. */
  apply(values: ArrayLike<number>): void {
    const c = this.circuit;
    for (let i = 0; i < this.kinds.length; i++) {
      const slot = this.slots[i]!;
      if (slot < 0) continue;
      const v = values[i]!;
      switch (this.kinds[i]!) {
        case 'resistor':
        case 'interface':
          c.gS[slot] = 1 / v;
          break;
        case 'perveance':
          c.tubeParams[slot * P.size + P.perveance] = v;
          break;
        default:
          c.fixedVolts[slot] = v;
      }
    }
  }

  /** Solves at `values`, from the last solution when there is one; false when no solution meets the residual limit. */
  solve(values: ArrayLike<number>): boolean {
    if (this.shorted) return false;
    this.apply(values);
    const sys = this.system;
    const x = this.x;
    if (this.warm && this.settled(sys.newton(x, this.settings))) return true;
    sys.devicesOff(x, this.settings);
    const first = sys.newton(x, this.settings);
    if (first.converged) return (this.warm = this.settled(first));
    // gmin stepping: each stage starts from the last.
    sys.devicesOff(x, this.settings);
    const ok = [1e-3, 1e-5, 1e-7, 1e-9, 1e-12].every((gmin) => sys.newton(x, { ...this.settings, gmin, maxIterations: 200 }).converged);
    this.warm = ok && this.accepted(sys.trueResidual(x));
    return this.warm;
  }

  /**
   * Whether Newton's run ended on an accepted solution. The residual Newton measured at the
   * point it accepted, gmin's share added, already bounds the real circuit's: no second
   * assembly unless that bound exceeds the limit.
   */
  private settled(run: { converged: boolean; residual: number }): boolean {
    if (!run.converged) return false;
    if (run.residual + this.settings.gmin * largestMagnitude(this.x) <= RESIDUAL_LIMIT) return this.accepted(0);
    return this.accepted(this.system.trueResidual(this.x));
  }

  /**
   * A solution is accepted on the residual limit and inside the span of the fixed voltages
   * in force (see `voltageSpan`). One over the limit only by gmin's own current (a
   * kilovolt node) is polished by a few iterations without gmin, as `solve` does.
   */
  private accepted(residualAmps: number): boolean {
    if (residualAmps > RESIDUAL_LIMIT && residualAmps < 1e3 * RESIDUAL_LIMIT) {
      const converged = this.system.newton(this.x, { ...this.settings, gmin: 0, maxIterations: 20 }).converged;
      if (converged) residualAmps = this.system.trueResidual(this.x);
    }
    return residualAmps <= RESIDUAL_LIMIT && withinSpan(this.circuit, this.x);
  }

  /**
   * Solves at `values` starting from `start` (a solution of the same problem), keeping to
   * the state it holds: Newton, then gmin stepping from the same start; never the
   * devices-off guess, which could land in another state. False when neither converges.
   */
  solveFrom(values: ArrayLike<number>, start: Float64Array): boolean {
    if (this.shorted) return false;
    this.apply(values);
    const sys = this.system;
    const x = this.x;
    x.set(start);
    const first = sys.newton(x, { ...this.settings, stepTolerance: 1e-6 });
    if (first.converged) return (this.warm = this.settled(first));
    x.set(start);
    const ok = [1e-6, 1e-8, 1e-10, 1e-12].every((gmin) => sys.newton(x, { ...this.settings, gmin, maxIterations: 200 }).converged);
    this.warm = ok && this.accepted(sys.trueResidual(x));
    return this.warm;
  }

  /** Starts the next `solve` from `x`, a solution of this problem at nearby values (or a guess made from such solutions). */
  startFrom(x: ArrayLike<number>): void {
    if (this.shorted) return;
    this.x.set(x);
    this.warm = true;
  }

  /** Voltage of terminal `t` in the last solution. */
  volts(t: number): number {
    return t >= 0 ? this.x[t]! : this.circuit.fixedVolts[-1 - t]!;
  }

  /** The last solution's unknowns (a view: copy it to keep it). */
  get solution(): Float64Array {
    return this.x;
  }

  /** Solves at `values` and returns the judged net's voltage and its slope in every parameter (adjoint method). */
  probe(values: ArrayLike<number>): Probe | undefined {
    if (!this.solve(values)) return undefined;
    const slopes = this.slopesAt(this.target);
    return slopes && { value: this.volts(this.target), slopes };
  }

  /**
   * The slope of terminal `t`'s voltage in every parameter at the last solution (adjoint
   * method: one transposed solve); undefined when the Jacobian is singular there.
   */
  slopesAt(t: number): Float64Array | undefined {
    const slopes = new Float64Array(this.kinds.length);
    if (t < 0) {
      const f = -1 - t;
      for (let i = 0; i < slopes.length; i++) if (this.kinds[i] !== 'resistor' && this.kinds[i] !== 'perveance' && this.kinds[i] !== 'interface' && this.slots[i] === f) slopes[i] = 1;
      return slopes;
    }
    const sens = this.system.sensitivities(this.x, t, { ...this.settings, maxStep: Infinity });
    if (!sens) return undefined;
    for (let i = 0; i < slopes.length; i++) {
      const slot = this.slots[i]!;
      if (slot < 0) continue;
      switch (this.kinds[i]!) {
        case 'resistor':
        case 'interface':
          slopes[i] = sens.resistors[slot]!;
          break;
        case 'perveance':
          slopes[i] = sens.perveance[slot]!;
          break;
        default:
          slopes[i] = sens.fixed[slot]!;
      }
    }
    return slopes;
  }
}
