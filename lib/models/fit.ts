import type { ModelKind, TubeModel } from '../design/model.js';
import { NOMINAL_VARIATION, tubeCurrents } from './tubeEquations.js';
import { MODEL_KINDS } from './kinds.js';
import { highest, lowest } from '../lists.js';

/** One bench reading of one tube: electrode voltages against the cathode, and the currents measured. */
export interface Reading {
  tube: string;
  plateVolts: number;
  gridVolts: number;
  plateAmps: number;
  screenVolts?: number;
  screenAmps?: number;
}

/** The model parameters a fit finds, by kind (grid conduction and spread are not fitted). */
export type FittedParameters = { kind: 'koren-triode'; mu: number; ex: number; kg1: number; kp: number; kvb: number } | { kind: 'koren-pentode'; mu: number; ex: number; kg1: number; kg2: number; kp: number; kvb: number } | { kind: 'child-langmuir'; mu: number; k: number };

export interface FitResult {
  model: FittedParameters;
  /** Each tube's perveance factor against the type (their geometric mean is 1). */
  perTube: Record<string, number>;
  /** The largest departure of a tube's factor from 1: the type's spread as these tubes show it. */
  spread: number;
  /** The plate voltages of the readings: the range the fit is trusted over. */
  trustedPlateVolts: [number, number];
  /** Root-mean-square relative error of the fitted currents. */
  rmsError: number;
  readings: number;
  iterations: number;
}

export type FitAnswer = { fit: FitResult } | { refusal: string };

/** The fitted parameters of each kind, in the order the fit moves them. */
const SHAPE: Record<ModelKind, string[]> = {
  'koren-triode': ['mu', 'ex', 'kg1', 'kp', 'kvb'],
  'koren-pentode': ['mu', 'ex', 'kg1', 'kp', 'kvb', 'kg2'],
  'child-langmuir': ['mu', 'k'],
};

/** Where the fit starts: middling values of each kind (the fit is in the logarithms, so only the order of magnitude matters). */
const STARTS: Record<ModelKind, Record<string, number>[]> = {
  'koren-triode': [
    { mu: 20, ex: 1.35, kg1: 1000, kp: 100, kvb: 300 },
    { mu: 70, ex: 1.35, kg1: 800, kp: 400, kvb: 300 },
    { mu: 8, ex: 1.35, kg1: 1500, kp: 40, kvb: 300 },
  ],
  'koren-pentode': [
    { mu: 30, ex: 1.35, kg1: 1000, kp: 100, kvb: 10, kg2: 2000 },
    { mu: 15, ex: 1.35, kg1: 2000, kp: 50, kvb: 1, kg2: 4000 },
  ],
  'child-langmuir': [{ mu: 20, k: 1e-3 }],
};

/** A relative error is taken against at least this share of the largest current, so near-zero readings do not dominate. */
const CURRENT_FLOOR = 0.01;

/**
 * Most readings a fit takes. Its cost is readings × parameters × iterations (about 1.5 s per
 * thousand readings on this project's machines); past this a file is not bench readings
 * but a generated table, and the fit would run for minutes.
 */
export const MAX_READINGS = 5000;

/**
 * Fits a tube model to bench readings of one or more tubes of one type: the kind's
 * parameters shared by all tubes, and one perveance factor per tube (their geometric mean
 * fixed at 1), by Levenberg–Marquardt on the logarithms of the parameters (so they stay
 * positive), minimising relative current errors, from a few starting points, keeping the
 * best. Pentode screen readings, where given, fit the screen constant kg2; without them
 * kg2 is left at the ratio of the start.
 *
 * Refuses, rather than fit wildly: more than MAX_READINGS readings, fewer than two readings per parameter, fewer than
 * three distinct grid or plate voltages, no current, or a best fit still more than 20 %
 * off (the kind cannot describe these readings).
 *
 * Our own Levenberg–Marquardt (a few dozen lines over small dense matrices) rather than a
 * library: the fit needs parameters shared across groups with one factor per group and a
 * constraint on the factors, which general curve-fitting packages do not take directly.
 */
export function fitReadings(readings: readonly Reading[], kind: ModelKind): FitAnswer {
  const usable = readings.filter((r) => [r.plateVolts, r.gridVolts, r.plateAmps].every(Number.isFinite));
  const tubes = [...new Set(usable.map((r) => r.tube))];
  const names = SHAPE[kind];
  const withScreen = kind === 'koren-pentode' && usable.some((r) => r.screenAmps !== undefined);
  const unknowns = names.length - (kind === 'koren-pentode' && !withScreen ? 1 : 0) + tubes.length - 1;
  const distinct = (xs: number[]) => new Set(xs.map((x) => x.toFixed(6))).size;
  if (usable.length > MAX_READINGS) return { refusal: `${usable.length} readings: a fit takes at most ${MAX_READINGS} (readings taken at the bench number in the hundreds; thin the file to the points that matter)` };
  if (usable.length < 2 * unknowns) return { refusal: `${usable.length} readings for ${unknowns} unknowns (the ${names.length} parameters of ${kind} and a factor per tube): take at least ${2 * unknowns}` };
  if (distinct(usable.map((r) => r.gridVolts)) < 3) return { refusal: 'the readings use fewer than three grid voltages: the amplification factor cannot be told from the perveance' };
  if (distinct(usable.map((r) => r.plateVolts)) < 3) return { refusal: 'the readings use fewer than three plate voltages: the plate characteristic cannot be fitted' };
  if (kind === 'koren-pentode' && usable.some((r) => r.screenVolts === undefined)) return { refusal: 'a pentode fit needs the screen voltage of every reading (column screen_v)' };
  const largest = highest(usable.map((r) => r.plateAmps));
  if (!(largest > 0)) return { refusal: 'no reading shows any plate current' };

  const free = names.filter((n) => !(n === 'kg2' && !withScreen));
  const floor = CURRENT_FLOOR * largest;
  const screenFloor = CURRENT_FLOOR * Math.max(1e-12, highest(usable.map((r) => r.screenAmps ?? 0)));
  const residuals = (theta: Float64Array, base: Record<string, number>, out: Float64Array) => {
    const params: Record<string, number> = { ...base };
    free.forEach((n, i) => (params[n] = Math.exp(theta[i]!)));
    const model = { name: 'fit', rgi: 2000, vgamma: 0, spread: 0, kind, ...params } as TubeModel;
    const factor = (t: number) => (t === 0 ? 1 : Math.exp(theta[free.length + t - 1]!));
    let k = 0;
    for (const r of usable) {
      const t = tubes.indexOf(r.tube);
      const c = tubeCurrents(model, { vgk: r.gridVolts, vak: r.plateVolts, vg2k: r.screenVolts }, { ...NOMINAL_VARIATION, perveance: factor(t) });
      out[k++] = (c.plate - r.plateAmps) / Math.max(Math.abs(r.plateAmps), floor);
      if (withScreen) out[k++] = r.screenAmps === undefined ? 0 : (c.screen - r.screenAmps) / Math.max(Math.abs(r.screenAmps), screenFloor);
    }
  };
  const m = usable.length * (withScreen ? 2 : 1);
  let best: { theta: Float64Array; cost: number; base: Record<string, number>; iterations: number } | undefined;
  for (const start of STARTS[kind]) {
    const theta = Float64Array.from([...free.map((n) => Math.log(start[n]!)), ...tubes.slice(1).map(() => 0)]);
    const found = levenbergMarquardt(theta, m, (th, out) => residuals(th, start, out));
    if (!best || found.cost < best.cost) best = { theta: found.theta, cost: found.cost, base: start, iterations: found.iterations };
  }
  const b = best!;
  const rmsError = Math.sqrt((2 * b.cost) / m);
  if (!(rmsError <= 0.2)) return { refusal: `the best ${kind} fit is still ${(rmsError * 100).toFixed(0)} % off these readings (RMS): the kind cannot describe them` };
  const params: Record<string, number> = { ...b.base };
  free.forEach((n, i) => (params[n] = Math.exp(b.theta[i]!)));
  // Factors with a geometric mean of 1; the type's scale (kg1, and kg2 for the screen) takes the rest.
  const factors = tubes.map((_, t) => (t === 0 ? 1 : Math.exp(b.theta[free.length + t - 1]!)));
  const mean = Math.exp(factors.reduce((a, f) => a + Math.log(f), 0) / factors.length);
  const perTube: Record<string, number> = {};
  tubes.forEach((t, i) => (perTube[t] = factors[i]! / mean));
  if (kind === 'child-langmuir') params.k = params.k! * mean;
  else {
    params.kg1 = params.kg1! / mean;
    if (kind === 'koren-pentode') params.kg2 = params.kg2! / mean;
  }
  // A fit that only matches by leaving the kind's physical domain describes no tube, and its type would not load.
  for (const { name, range } of MODEL_KINDS[kind].parameters) {
    const v = params[name]!;
    if (!(v >= range.min && v <= range.max)) return { refusal: `the best ${kind} fit puts ${name} at ${v.toPrecision(3)}, outside ${range.min}…${range.max}, where the kind has a meaning: the readings do not describe such a tube` };
  }
  const plates = usable.map((r) => r.plateVolts);
  return {
    fit: {
      model: { kind, ...params } as FittedParameters,
      perTube,
      spread: highest(Object.values(perTube).map((f) => Math.abs(f - 1))),
      trustedPlateVolts: [lowest(plates), highest(plates)],
      rmsError,
      readings: usable.length,
      iterations: b.iterations,
    },
  };
}

/**
 * Levenberg–Marquardt (K. Levenberg 1944; D. W. Marquardt, J. SIAM 1963) with Marquardt's
 * scaling of the damping by the diagonal of JᵀJ and a forward-difference Jacobian:
 * minimises ½·Σ r² from `theta`. Returns the best parameters, the cost and the iterations.
 */
export function levenbergMarquardt(theta0: Float64Array, m: number, residual: (theta: Float64Array, out: Float64Array) => void, maxIterations = 300): { theta: Float64Array; cost: number; iterations: number } {
  const n = theta0.length;
  const theta = Float64Array.from(theta0);
  const r = new Float64Array(m);
  const rTry = new Float64Array(m);
  const jac = new Float64Array(m * n);
  const cost = (v: Float64Array) => 0.5 * v.reduce((a, x) => a + x * x, 0);
  residual(theta, r);
  let c = cost(r);
  let lambda = 1e-3;
  let it = 0;
  for (; it < maxIterations && Number.isFinite(c); it++) {
    for (let j = 0; j < n; j++) {
      const h = 1e-6 * Math.max(1, Math.abs(theta[j]!));
      theta[j] = theta[j]! + h;
      residual(theta, rTry);
      theta[j] = theta[j]! - h;
      for (let i = 0; i < m; i++) jac[i * n + j] = (rTry[i]! - r[i]!) / h;
    }
    const a = new Float64Array(n * n);
    const g = new Float64Array(n);
    for (let i = 0; i < m; i++) {
      for (let p = 0; p < n; p++) {
        const jp = jac[i * n + p]!;
        g[p]! += jp * r[i]!;
        for (let q = 0; q < n; q++) a[p * n + q]! += jp * jac[i * n + q]!;
      }
    }
    let improved = false;
    for (let tries = 0; tries < 12 && !improved; tries++) {
      const damped = Float64Array.from(a);
      for (let p = 0; p < n; p++) damped[p * n + p]! += lambda * Math.max(a[p * n + p]!, 1e-12);
      const step = solveDense(damped, Float64Array.from(g, (x) => -x), n);
      if (!step) {
        lambda *= 10;
        continue;
      }
      const trial = Float64Array.from(theta, (x, p) => x + step[p]!);
      residual(trial, rTry);
      const cTry = cost(rTry);
      if (Number.isFinite(cTry) && cTry < c) {
        const gain = c - cTry;
        theta.set(trial);
        r.set(rTry);
        c = cTry;
        lambda = Math.max(lambda / 10, 1e-12);
        improved = true;
        if (gain < 1e-14 * Math.max(1, c)) return { theta, cost: c, iterations: it + 1 };
      } else lambda *= 10;
    }
    if (!improved) break;
  }
  return { theta, cost: c, iterations: it };
}

/** Solves a small dense system by Gaussian elimination with partial pivoting; undefined when singular. */
function solveDense(a: Float64Array, b: Float64Array, n: number): Float64Array | undefined {
  for (let col = 0; col < n; col++) {
    let pivot = col;
    for (let row = col + 1; row < n; row++) if (Math.abs(a[row * n + col]!) > Math.abs(a[pivot * n + col]!)) pivot = row;
    if (!(Math.abs(a[pivot * n + col]!) > 1e-300)) return undefined;
    if (pivot !== col) {
      for (let k = 0; k < n; k++) [a[col * n + k], a[pivot * n + k]] = [a[pivot * n + k]!, a[col * n + k]!];
      [b[col], b[pivot]] = [b[pivot]!, b[col]!];
    }
    for (let row = col + 1; row < n; row++) {
      const f = a[row * n + col]! / a[col * n + col]!;
      if (f === 0) continue;
      for (let k = col; k < n; k++) a[row * n + k]! -= f * a[col * n + k]!;
      b[row]! -= f * b[col]!;
    }
  }
  const x = new Float64Array(n);
  for (let row = n - 1; row >= 0; row--) {
    let s = b[row]!;
    for (let k = row + 1; k < n; k++) s -= a[row * n + k]! * x[k]!;
    x[row] = s / a[row * n + row]!;
  }
  return x;
}
