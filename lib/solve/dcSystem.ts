import { R, evaluateTube, P } from '../models/tubeEquations.js';
import type { Circuit } from './circuit.js';
import type { LinearSystem, LinearSystemFactory } from './linearSystem.js';
import { SparseLu } from './sparseLu.js';
import { largestMagnitude } from '../lists.js';

/** Settings of one Newton run. */
export interface NewtonSettings {
  /** Conductance from every node to ground (siemens). */
  gmin: number;
  /** Scale of every fixed voltage (source stepping); 1 for the real circuit. */
  sourceScale: number;
  /** Largest change of any node voltage in one iteration (volts); Infinity for undamped Newton. */
  maxStep: number;
  maxIterations: number;
  /**
   * Converged once the residual is below 1e-11 A and the last step below this (volts;
   * 1e-9 when absent). A looser step is safe where the start is close (Monte Carlo from
   * the nominal solution): Newton converges quadratically, so the point after a 1 µV step
   * is far closer still, and the residual is measured at the point accepted.
   */
  stepTolerance?: number;
  /** Pins: conductance of each pinned node to its target (0 where not pinned). */
  pinSiemens?: Float64Array;
  pinVolts?: Float64Array;
  /**
   * A step in time: each capacitor k of the circuit replaced by its companion, a
   * conductance `companionSiemens[k]` in parallel with a current `companionAmps[k]` from
   * its terminal a to b (the integration rule's history). Absent in a DC solve, where
   * capacitors are open.
   */
  companionSiemens?: Float64Array;
  companionAmps?: Float64Array;
}

export interface NewtonResult {
  converged: boolean;
  iterations: number;
  /** Largest KCL residual of the system solved, gmin and pins included (amps). */
  residual: number;
}

/**
 * Stamps a two-terminal branch carrying current `i` from terminal `a` to `b` with
 * conductance `g` = ∂i/∂(va − vb): residual into `f`, Jacobian into `v` at the four slots
 * from `o` in `slots` (aa, ab, ba, bb). Fixed terminals (negative) are skipped.
 */
function stampBranch(f: Float64Array, v: Float64Array, slots: Int32Array, o: number, a: number, b: number, i: number, g: number): void {
  if (a >= 0) {
    f[a]! += i;
    v[slots[o]!]! += g;
    if (b >= 0) v[slots[o + 1]!]! -= g;
  }
  if (b >= 0) {
    f[b]! -= i;
    v[slots[o + 3]!]! += g;
    if (a >= 0) v[slots[o + 2]!]! -= g;
  }
}

/**
 * A Newton step that moves a node further than this (volts) is taken as coming from a
 * near-singular Jacobian, and damped (`newtonStep`). A kilovolt is beyond the logic rails
 * of tube designs; where damping cannot bring a real step under it, the step is taken as
 * it was. Measured on the bench register from a cold start: 1e6 V left it stalled, 1e4 V
 * and 1e3 V both let Newton converge, in 60 and 54 iterations at 2,000 stages.
 */
const WILD_STEP = 1e3;

/** A diode's exponent is linearised above this many n·Vt (or where its current passes 10 A), to keep exp finite. */
const MAX_DIODE_EXPONENT = 40;

/** Shockley's law i = Is·(e^(v/nVt) − 1) and its conductance, continued linearly above the exponent limit. */
function diodeLaw(is: number, nvt: number, vd: number): { i: number; g: number } {
  const u = vd / nvt;
  const uMax = Math.min(MAX_DIODE_EXPONENT, Math.log(10 / is + 1));
  if (u > uMax) {
    const e = Math.exp(uMax);
    return { i: is * (e * (1 + u - uMax) - 1), g: (is * e) / nvt };
  }
  const e = Math.exp(u);
  return { i: is * (e - 1), g: (is * e) / nvt };
}

/**
 * The DC system of one compiled circuit: the Jacobian's pattern and its factorisation
 * (symbolic work done once, here), the slot of every stamp, and the buffers of the Newton
 * loop. One instance serves every solve of the same topology: tolerance corners, samples,
 * homotopy steps.
 */
export class DcSystem {
  readonly lu: LinearSystem;
  /** Residual (KCL: current leaving each node) of the last assembly. */
  readonly f: Float64Array;
  private readonly dx: Float64Array;
  private readonly eval = new Float64Array(R.size);
  private readonly gSlots: Int32Array;
  private readonly tSlots: Int32Array;
  private readonly dSlots: Int32Array;
  private readonly cSlots: Int32Array;
  private readonly diagSlots: Int32Array;
  /** Newton iterations done since construction, for benchmarks. */
  iterationCount = 0;

  constructor(
    readonly circuit: Circuit,
    factory: LinearSystemFactory = (n, r, c) => new SparseLu(n, r, c),
  ) {
    const c = circuit;
    const rows: number[] = [];
    const cols: number[] = [];
    const add = (a: number, b: number) => {
      if (a >= 0 && b >= 0) {
        rows.push(a);
        cols.push(b);
      }
    };
    for (let i = 0; i < c.n; i++) add(i, i);
    for (let e = 0; e < c.gA.length; e++) {
      const a = c.gA[e]!;
      const b = c.gB[e]!;
      add(a, b);
      add(b, a);
    }
    const tubeTerms = (t: number) => [c.tA[t]!, c.tG[t]!, c.tK[t]!, c.hasScreen[t] ? c.tS[t]! : -1];
    for (let t = 0; t < c.tA.length; t++) {
      const ts = tubeTerms(t);
      for (const a of ts) for (const b of ts) add(a, b);
    }
    for (let d = 0; d < c.dA.length; d++) {
      const ts = [c.dA[d]!, c.dK[d]!];
      for (const a of ts) for (const b of ts) add(a, b);
    }
    for (let k = 0; k < c.cA.length; k++) {
      add(c.cA[k]!, c.cB[k]!);
      add(c.cB[k]!, c.cA[k]!);
    }
    this.lu = factory(c.n, rows, cols);
    const slot = (a: number, b: number) => (a >= 0 && b >= 0 ? this.lu.position(a, b) : -1);
    this.gSlots = new Int32Array(c.gA.length * 4);
    for (let e = 0; e < c.gA.length; e++) {
      const a = c.gA[e]!;
      const b = c.gB[e]!;
      this.gSlots.set([slot(a, a), slot(a, b), slot(b, a), slot(b, b)], e * 4);
    }
    this.tSlots = new Int32Array(c.tA.length * 16);
    for (let t = 0; t < c.tA.length; t++) {
      const ts = tubeTerms(t);
      for (let r = 0; r < 4; r++) for (let q = 0; q < 4; q++) this.tSlots[t * 16 + r * 4 + q] = slot(ts[r]!, ts[q]!);
    }
    this.dSlots = new Int32Array(c.dA.length * 4);
    for (let d = 0; d < c.dA.length; d++) {
      const a = c.dA[d]!;
      const k = c.dK[d]!;
      this.dSlots.set([slot(a, a), slot(a, k), slot(k, a), slot(k, k)], d * 4);
    }
    this.cSlots = new Int32Array(c.cA.length * 4);
    for (let k = 0; k < c.cA.length; k++) {
      const a = c.cA[k]!;
      const b = c.cB[k]!;
      this.cSlots.set([slot(a, a), slot(a, b), slot(b, a), slot(b, b)], k * 4);
    }
    this.diagSlots = new Int32Array(c.n);
    for (let i = 0; i < c.n; i++) this.diagSlots[i] = slot(i, i);
    this.f = new Float64Array(c.n);
    this.dx = new Float64Array(c.n);
  }

  /**
   * Stamps the Jacobian into the linear system and the residual into `f` at node voltages
   * `x`. Without `withDevices` the tubes and diodes are left out (all cut off), which makes
   * the system linear: one solve gives the circuit with every tube off, a safe first guess.
   */
  assemble(x: Float64Array, s: NewtonSettings, withDevices = true): void {
    const c = this.circuit;
    const f = this.f;
    const v = this.lu.values;
    this.lu.clear();
    f.fill(0);
    const fixed = c.fixedVolts;
    const scale = s.sourceScale;
    const volt = (t: number) => (t >= 0 ? x[t]! : fixed[-1 - t]! * scale);
    for (let i = 0; i < c.n; i++) {
      let g = s.gmin;
      f[i] = s.gmin * x[i]!;
      const pin = s.pinSiemens?.[i] ?? 0;
      if (pin > 0) {
        g += pin;
        f[i]! += pin * (x[i]! - s.pinVolts![i]!);
      }
      v[this.diagSlots[i]!]! += g;
    }
    const gA = c.gA;
    const gB = c.gB;
    const gS = c.gS;
    const gSlots = this.gSlots;
    for (let e = 0; e < gA.length; e++) {
      const a = gA[e]!;
      const b = gB[e]!;
      const g = gS[e]!;
      stampBranch(f, v, gSlots, e * 4, a, b, g * (volt(a) - volt(b)), g);
    }
    const cg = s.companionSiemens;
    if (cg) {
      const ci = s.companionAmps!;
      for (let k = 0; k < cg.length; k++) {
        const a = c.cA[k]!;
        const b = c.cB[k]!;
        stampBranch(f, v, this.cSlots, k * 4, a, b, cg[k]! * (volt(a) - volt(b)) + ci[k]!, cg[k]!);
      }
    }
    if (!withDevices) return;
    const r = this.eval;
    const tSlots = this.tSlots;
    const params = c.tubeParams;
    const put = (sl: number, value: number) => {
      if (sl >= 0) v[sl]! += value;
    };
    for (let t = 0; t < c.tA.length; t++) {
      const ta = c.tA[t]!;
      const tg = c.tG[t]!;
      const tk = c.tK[t]!;
      const screen = c.hasScreen[t] === 1;
      const ts = screen ? c.tS[t]! : -1;
      const vk = volt(tk);
      evaluateTube(params, t * P.size, volt(tg) - vk, volt(ta) - vk, screen ? volt(ts) - vk : 0, r, 0);
      const ia = r[R.ia]!;
      const ig = r[R.ig]!;
      const is = screen ? r[R.is]! : 0;
      if (ta >= 0) f[ta]! += ia;
      if (tg >= 0) f[tg]! += ig;
      if (screen && ts >= 0) f[ts]! += is;
      if (tk >= 0) f[tk]! -= ia + ig + is;
      // Rows: plate, grid, cathode, screen; columns likewise.
      const aA = r[R.iaVa]!;
      const aG = r[R.iaVg]!;
      const aS = r[R.iaVs]!;
      const gG = r[R.igVg]!;
      const sA = screen ? r[R.isVa]! : 0;
      const sG = screen ? r[R.isVg]! : 0;
      const sS = screen ? r[R.isVs]! : 0;
      const o = t * 16;
      // plate row
      put(tSlots[o]!, aA);
      put(tSlots[o + 1]!, aG);
      put(tSlots[o + 2]!, -(aA + aG + aS));
      put(tSlots[o + 3]!, aS);
      // grid row
      put(tSlots[o + 5]!, gG);
      put(tSlots[o + 6]!, -gG);
      // cathode row: minus the sum of the other three
      put(tSlots[o + 8]!, -(aA + sA));
      put(tSlots[o + 9]!, -(aG + gG + sG));
      put(tSlots[o + 10]!, aA + aG + aS + gG + sA + sG + sS);
      put(tSlots[o + 11]!, -(aS + sS));
      // screen row
      if (screen) {
        put(tSlots[o + 12]!, sA);
        put(tSlots[o + 13]!, sG);
        put(tSlots[o + 14]!, -(sA + sG + sS));
        put(tSlots[o + 15]!, sS);
      }
    }
    const dSlots = this.dSlots;
    for (let d = 0; d < c.dA.length; d++) {
      const a = c.dA[d]!;
      const k = c.dK[d]!;
      const is = c.dIs[d]!;
      const nvt = c.dNVt[d]!;
      const { i, g } = diodeLaw(is, nvt, volt(a) - volt(k));
      stampBranch(f, v, dSlots, d * 4, a, k, i, g);
    }
  }

  /**
   * Newton's method from `x` (updated in place). Converged when the largest residual is
   * below 1e-11 A and the last step below 1e-9 V. No node moves more than `maxStep` in one
   * iteration, and a step is halved (up to four times) while it makes the residual's norm
   * grow, which stops Newton cycling round the corner where a grid starts to conduct.
   */
  newton(x: Float64Array, s: NewtonSettings): NewtonResult {
    const n = this.circuit.n;
    const f = this.f;
    const dx = this.dx;
    let lastStep = Infinity;
    let lastNorm = Infinity;
    let applied = 0;
    let halvings = 0;
    const stepTolerance = s.stepTolerance ?? 1e-9;
    for (let it = 1; it <= s.maxIterations; it++) {
      this.iterationCount++;
      this.assemble(x, s);
      let residual = 0;
      let norm = 0;
      for (let i = 0; i < n; i++) {
        const r = Math.abs(f[i]!);
        residual = Math.max(residual, r);
        norm += r * r;
      }
      if (residual < 1e-11 && lastStep < stepTolerance) return { converged: true, iterations: it, residual };
      if (norm > lastNorm && halvings < 4 && applied > 0 && s.maxStep !== Infinity) {
        // Take back half of the last step and look again.
        applied /= 2;
        for (let i = 0; i < n; i++) x[i] = x[i]! - applied * dx[i]!;
        halvings++;
        continue;
      }
      halvings = 0;
      lastNorm = norm;
      const step = this.newtonStep(x, s);
      if (step === undefined) return { converged: false, iterations: it, residual };
      applied = step > s.maxStep ? s.maxStep / step : 1;
      for (let i = 0; i < n; i++) {
        dx[i] = -applied * dx[i]!;
        x[i] = x[i]! + dx[i]!;
      }
      applied = 1;
      lastStep = step * (step > s.maxStep ? s.maxStep / step : 1);
      if (residual < 1e-11 && lastStep < 1e-9) return { converged: true, iterations: it, residual };
    }
    return { converged: false, iterations: s.maxIterations, residual: Infinity };
  }

  /**
   * The Newton step into `dx` from the Jacobian and residual stamped last; its largest
   * move (volts), or undefined where none can be taken. Far from the solution, stages in
   * their linear region multiply their gains around a ring: the factors can overflow, or
   * the Jacobian is so near singular that the step runs to 1e3–1e160 V, and step limiting
   * then scales every node's move to nothing, round after round (a 500-cell ring register
   * from a cold start). Then the step is taken with the Jacobian's diagonal raised by a
   * conductance (1e-7 S, growing tenfold up to 0.1 S) until it is under `WILD_STEP`,
   * which lowers every stage's gain for this step only: a damped Newton step, as in
   * Levenberg–Marquardt (J. J. Moré, "The Levenberg–Marquardt algorithm: implementation
   * and theory", 1978). The residual, and so the solution, are unchanged.
   */
  private newtonStep(x: Float64Array, s: NewtonSettings): number | undefined {
    const tried = (): number | undefined => {
      if (!this.lu.factor()) return undefined;
      this.lu.solve(this.f, this.dx);
      const step = largestMagnitude(this.dx);
      return Number.isFinite(step) ? step : undefined;
    };
    const first = tried();
    if (first !== undefined && (first <= WILD_STEP || s.maxStep === Infinity)) return first;
    for (let shift = 1e-7; shift <= 0.1; shift *= 10) {
      this.assemble(x, s);
      const v = this.lu.values;
      for (let i = 0; i < this.circuit.n; i++) v[this.diagSlots[i]!]! += shift;
      const step = tried();
      if (step !== undefined && step <= WILD_STEP) return step;
    }
    if (first === undefined) return undefined;
    this.assemble(x, s);
    return tried();
  }

  /**
   * Adjoint sensitivities of the voltage of unknown `node` at the solution `x`: with
   * Jᵀ·λ = e_node, dV/dp = −λᵀ·∂F/∂p for every parameter p (Director and Rohrer, "The
   * generalized adjoint network and network sensitivities", IEEE Trans. Circuit Theory,
   * 1969). One transposed solve serves every parameter. Derivatives returned:
   * - `resistors[e]`: dV/dR (V/Ω) for conductance e (resistors, and the internal ones:
   *   source resistances, cathode interface layers);
   * - `fixed[f]`: dV/dV_f for fixed voltage f (rails, drives);
   * - `perveance[t]`: dV/dP for section t's perveance factor.
   * Returns undefined when the Jacobian cannot be factored.
   */
  sensitivities(x: Float64Array, node: number, s: NewtonSettings): { resistors: Float64Array; fixed: Float64Array; perveance: Float64Array } | undefined {
    const c = this.circuit;
    this.assemble(x, s);
    if (!this.lu.factor() || !this.lu.solveTransposed) return undefined;
    const e = new Float64Array(c.n);
    e[node] = 1;
    const lambda = new Float64Array(c.n);
    this.lu.solveTransposed(e, lambda);
    const fixedVolts = c.fixedVolts;
    const volt = (t: number) => (t >= 0 ? x[t]! : fixedVolts[-1 - t]! * s.sourceScale);
    const lam = (t: number) => (t >= 0 ? lambda[t]! : 0);
    const resistors = new Float64Array(c.gA.length);
    for (let k = 0; k < c.gA.length; k++) {
      const a = c.gA[k]!;
      const b = c.gB[k]!;
      const g = c.gS[k]!;
      // i = g·(va − vb) leaves a, enters b; ∂i/∂R = −i·g.
      const dI = -g * g * (volt(a) - volt(b));
      resistors[k] = -(lam(a) - lam(b)) * dI;
    }
    const perveance = new Float64Array(c.tA.length);
    const r = this.eval;
    for (let t = 0; t < c.tA.length; t++) {
      const screen = c.hasScreen[t] === 1;
      this.evaluateSection(t, x, s.sourceScale);
      // Plate and screen currents are proportional to the perveance factor; grid current is not.
      const pv = c.tubeParams[t * P.size + P.perveance]!;
      const ia = r[R.ia]! / pv;
      const is = screen ? r[R.is]! / pv : 0;
      perveance[t] = -(lam(c.tA[t]!) * ia + (screen ? lam(c.tS[t]!) * is : 0) - lam(c.tK[t]!) * (ia + is));
    }
    // Fixed voltages: ∂F/∂V_f from each element's own partials at its fixed terminals, so
    // the cost does not grow with the number of fixed voltages times the circuit's size.
    const fixed = new Float64Array(c.fixedVolts.length);
    const scale = s.sourceScale;
    for (let k = 0; k < c.gA.length; k++) {
      const a = c.gA[k]!;
      const b = c.gB[k]!;
      const g = c.gS[k]!;
      if (b < 0 && a >= 0) fixed[-1 - b]! += lambda[a]! * g * scale;
      if (a < 0 && b >= 0) fixed[-1 - a]! += lambda[b]! * g * scale;
    }
    for (let t = 0; t < c.tA.length; t++) {
      const ta = c.tA[t]!;
      const tg = c.tG[t]!;
      const tk = c.tK[t]!;
      const screen = c.hasScreen[t] === 1;
      const ts = screen ? c.tS[t]! : -1;
      if (ta >= 0 && tg >= 0 && tk >= 0 && (!screen || ts >= 0)) continue;
      this.evaluateSection(t, x, scale);
      const iaVa = r[R.iaVa]!;
      const iaVg = r[R.iaVg]!;
      const iaVs = screen ? r[R.iaVs]! : 0;
      const igVg = r[R.igVg]!;
      const isVa = screen ? r[R.isVa]! : 0;
      const isVg = screen ? r[R.isVg]! : 0;
      const isVs = screen ? r[R.isVs]! : 0;
      // λ·∂F/∂V_T for each terminal T: plate, grid and screen currents enter the tube, the cathode returns them.
      const la = lam(ta);
      const lg = lam(tg);
      const ls = screen ? lam(ts) : 0;
      const lk = lam(tk);
      const dot = (dia: number, dig: number, dis: number) => la * dia + lg * dig + ls * dis - lk * (dia + dig + dis);
      if (ta < 0) fixed[-1 - ta]! -= dot(iaVa, 0, isVa) * scale;
      if (tg < 0) fixed[-1 - tg]! -= dot(iaVg, igVg, isVg) * scale;
      if (screen && ts < 0) fixed[-1 - ts]! -= dot(iaVs, 0, isVs) * scale;
      if (tk < 0) fixed[-1 - tk]! -= dot(-(iaVa + iaVg + iaVs), -igVg, -(isVa + isVg + isVs)) * scale;
    }
    for (let d = 0; d < c.dA.length; d++) {
      const a = c.dA[d]!;
      const k = c.dK[d]!;
      if (a >= 0 && k >= 0) continue;
      const g = this.diodeConductance(d, volt(a) - volt(k));
      if (a < 0) fixed[-1 - a]! -= (lam(a) - lam(k)) * g * scale;
      if (k < 0) fixed[-1 - k]! += (lam(a) - lam(k)) * g * scale;
    }
    return { resistors, fixed, perveance };
  }

  /**
   * The small-signal resistance seen into each of `nodes` at `x` with the rest of the
   * circuit in place: entry i of (∂F/∂x)⁻¹ at row and column i, the voltage a unit current
   * pushed into the node would raise it by. Positive at every node of a circuit at rest in a
   * stable state. At a cross-coupled pair's metastable point the loop gain around the pair
   * exceeds one, and the resistance seen into either of its nets is negative: held at one
   * net, the rest of the circuit is stable, so by Cramer's rule the sign of the entry is the
   * sign of det(∂F/∂x), which the one unstable mode (a real eigenvalue of the wrong sign)
   * turns negative (Cramer's rule; the same sign test as for a negative-resistance
   * element). One factorisation serves every node; undefined when the Jacobian cannot be
   * factored.
   */
  drivingPointOhms(x: Float64Array, nodes: readonly number[], s: NewtonSettings): number[] | undefined {
    this.assemble(x, s);
    if (!this.lu.factor()) return undefined;
    const e = new Float64Array(this.circuit.n);
    const z = new Float64Array(this.circuit.n);
    return nodes.map((node) => {
      e.fill(0);
      e[node] = 1;
      this.lu.solve(e, z);
      return z[node]!;
    });
  }

  private diodeConductance(d: number, vd: number): number {
    return diodeLaw(this.circuit.dIs[d]!, this.circuit.dNVt[d]!, vd).g;
  }

  /** One Newton iteration's linear algebra at `x` (assemble, factor, solve) without moving `x`: for benchmarks. */
  linearise(x: Float64Array, s: NewtonSettings): boolean {
    this.assemble(x, s);
    if (!this.lu.factor()) return false;
    this.lu.solve(this.f, this.dx);
    return true;
  }

  /** Evaluates every tube section's equations once at `x`, the work no solver can skip: for benchmarks. */
  evaluateSections(x: Float64Array, s: NewtonSettings): number {
    let sum = 0;
    for (let t = 0; t < this.circuit.tA.length; t++) {
      this.evaluateSection(t, x, s.sourceScale);
      sum += this.eval[R.ia]!;
    }
    return sum;
  }

  /** Evaluates section `t` at node voltages `x` into `this.eval` (outside the Newton loop, which inlines it). */
  private evaluateSection(t: number, x: Float64Array, scale: number): void {
    const c = this.circuit;
    const volt = (k: number) => (k >= 0 ? x[k]! : c.fixedVolts[-1 - k]! * scale);
    const vk = volt(c.tK[t]!);
    evaluateTube(c.tubeParams, t * P.size, volt(c.tG[t]!) - vk, volt(c.tA[t]!) - vk, c.hasScreen[t] ? volt(c.tS[t]!) - vk : 0, this.eval, 0);
  }

  /** The circuit with every tube cut off, solved exactly (it is linear): a first guess. */
  devicesOff(x: Float64Array, s: NewtonSettings): boolean {
    x.fill(0);
    this.assemble(x, s, false);
    if (!this.lu.factor()) return false;
    this.lu.solve(this.f, this.dx);
    for (let i = 0; i < x.length; i++) x[i] = -this.dx[i]!;
    return true;
  }

  /** Largest KCL residual of the real circuit (no gmin, no pins, full sources) at `x`; leaves the residuals in `f`. */
  trueResidual(x: Float64Array): number {
    this.assemble(x, { gmin: 0, sourceScale: 1, maxStep: Infinity, maxIterations: 0 });
    return largestMagnitude(this.f);
  }

  /** The nodes with the largest residuals after `trueResidual`, largest first: for a non-convergence report. */
  worstNodes(count: number): number[] {
    const f = this.f;
    return [...f.keys()].sort((a, b) => Math.abs(f[b]!) - Math.abs(f[a]!)).slice(0, count);
  }
}
