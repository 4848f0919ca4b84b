import type { Expr } from '../netlist/ast.js';
import {
  DIMENSIONLESS,
  FARADS,
  OHMS,
  VOLTS,
  WATTS,
  describeDimension,
  formatSI,
  isDimensionless,
  multiplyDimensions,
  parseUnitSuffix,
  sameDimension,
  type Dimension,
} from '../netlist/units.js';
import { error, type Diagnostic } from '../source/diagnostic.js';
import type { SourceSpan } from '../source/span.js';
import { didYouMean } from '../source/suggest.js';

/** A number with its physical dimension. */
export interface Quantity {
  value: number;
  dim: Dimension;
}

/** Named values visible at one place: a chain of scopes, innermost first. */
export class ValueScope {
  private readonly values = new Map<string, Quantity>();

  constructor(private readonly parent?: ValueScope) {}

  define(name: string, q: Quantity): void {
    this.values.set(name, q);
  }

  hasOwn(name: string): boolean {
    return this.values.has(name);
  }

  lookup(name: string): Quantity | undefined {
    return this.values.get(name) ?? this.parent?.lookup(name);
  }

  names(): string[] {
    return [...this.values.keys(), ...(this.parent?.names() ?? [])];
  }
}

/**
 * Evaluates an expression of the design language: numbers with units, named values, `+ - * /`
 * and `mod`. Nothing else exists in the language, so nothing can reach outside the design.
 * Returns undefined (with a diagnostic, unless the cause was already reported) when the
 * value cannot be computed.
 *
 * Example: `33 k * 2` is `{ value: 66000, dim: DIMENSIONLESS }`; `24 V + 1 A` is a unit mismatch.
 */
export function evaluate(expr: Expr, scope: ValueScope, diagnostics: Diagnostic[]): Quantity | undefined {
  switch (expr.kind) {
    case 'number': {
      if (Number.isNaN(expr.value)) return undefined; // unknown unit, reported by the parser
      const unit = parseUnitSuffix(expr.unit);
      return { value: expr.value, dim: unit?.dim ?? DIMENSIONLESS };
    }
    case 'name': {
      const q = scope.lookup(expr.name);
      if (!q) diagnostics.push(error('unknown-name', `unknown value '${expr.name}'`, expr.span, didYouMean(expr.name, scope.names())));
      return q;
    }
    case 'unary': {
      const q = evaluate(expr.operand, scope, diagnostics);
      return q && (expr.op === '-' ? { value: -q.value, dim: q.dim } : q);
    }
    case 'binary': {
      const l = evaluate(expr.left, scope, diagnostics);
      const r = evaluate(expr.right, scope, diagnostics);
      if (!l || !r) return undefined;
      switch (expr.op) {
        case '+':
        case '-':
          if (!sameDimension(l.dim, r.dim)) {
            diagnostics.push(
              error('unit-mismatch', `cannot ${expr.op === '+' ? 'add' : 'subtract'} ${describeDimension(r.dim)} ${expr.op === '+' ? 'to' : 'from'} ${describeDimension(l.dim)}`, expr.span),
            );
            return undefined;
          }
          return { value: expr.op === '+' ? l.value + r.value : l.value - r.value, dim: l.dim };
        case '*':
          return { value: l.value * r.value, dim: multiplyDimensions(l.dim, r.dim, 1) };
        case '/':
          if (r.value === 0) {
            diagnostics.push(error('value-not-finite', 'division by zero', expr.span));
            return undefined;
          }
          return { value: l.value / r.value, dim: multiplyDimensions(l.dim, r.dim, -1) };
        case 'mod':
          if (!isDimensionless(l.dim) || !isDimensionless(r.dim)) {
            diagnostics.push(error('unit-mismatch', "'mod' takes plain numbers", expr.span));
            return undefined;
          }
          if (r.value === 0) {
            diagnostics.push(error('value-not-finite', 'mod by zero', expr.span));
            return undefined;
          }
          // Floored modulo, so that (i - 1) mod 10 stays in 0..9 for ring indices.
          return { value: l.value - r.value * Math.floor(l.value / r.value), dim: DIMENSIONLESS };
      }
    }
  }
}

/** What a value must be, for `evaluateAs`. */
export interface Expectation {
  /** Noun for messages: "a resistance", "a tolerance". */
  what: string;
  dim: Dimension;
  /** 'positive': > 0; 'non-negative': ≥ 0; 'any': any finite number. */
  sign: 'positive' | 'non-negative' | 'any';
  /** The physical domain, inclusive, where a value outside it has no meaning (a model constant, a grid onset). */
  range?: ValueRange;
}

/** An inclusive range of allowed values, with the unit symbol its message shows (`'V'`, `'Ω'`, `''`). */
export interface ValueRange {
  min: number;
  max: number;
  unit: string;
  /** 0 is allowed too, where the place takes it (a stiff supply's source resistance). */
  zeroAllowed?: boolean;
}

/**
 * Evaluates `expr` as a value of a known dimension. A plain number is taken in the expected
 * unit (`load 33 k` is 33 kΩ); a value in another unit is a `unit-mismatch`.
 */
export function evaluateAs(expr: Expr, scope: ValueScope, expect: Expectation, diagnostics: Diagnostic[]): number | undefined {
  const q = evaluate(expr, scope, diagnostics);
  if (!q) return undefined;
  if (!isDimensionless(q.dim) && !sameDimension(q.dim, expect.dim)) {
    diagnostics.push(
      error('unit-mismatch', `${expect.what} must be in ${describeDimension(expect.dim)}, but this is in ${describeDimension(q.dim)}`, expr.span),
    );
    return undefined;
  }
  return checkSign(q.value, expr.span, { ...expect, range: expect.range ?? rangeOfDimension(expect.dim) }, diagnostics);
}

/**
 * Where a part's value has a meaning, by its unit, for values that state no range of their
 * own: resistances from a milliohm (a contact, a wire) to a teraohm (leakage), voltages
 * within ±100 kV, capacitances from an attofarad to a farad, power ratings from a
 * microwatt to 100 kW (common practice, no source). A zero allowed by the place (a source
 * resistance of 0 for a stiff supply) stays allowed. Outside them no tube logic is meant,
 * and the arithmetic of a solve (a conductance of 1/1e-308) overflows.
 */
export function rangeOfDimension(dim: Dimension): ValueRange | undefined {
  for (const [d, range] of DIMENSION_RANGES) if (sameDimension(d, dim)) return range;
  return undefined;
}

const DIMENSION_RANGES: [Dimension, ValueRange][] = [
  [OHMS, { min: 1e-3, max: 1e12, unit: 'Ω', zeroAllowed: true }],
  [VOLTS, { min: -1e5, max: 1e5, unit: 'V' }],
  [FARADS, { min: 1e-18, max: 1, unit: 'F', zeroAllowed: true }],
  [WATTS, { min: 1e-6, max: 1e5, unit: 'W' }],
];

/** Checks a number is finite, of the required sign and, when a range is given, within it. */
export function checkSign(value: number, span: SourceSpan | undefined, expect: Pick<Expectation, 'what' | 'sign' | 'range'>, diagnostics: Diagnostic[]): number | undefined {
  if (!Number.isFinite(value)) {
    diagnostics.push(error('value-not-finite', `${expect.what} must be a finite number`, span));
    return undefined;
  }
  if ((expect.sign === 'positive' && value <= 0) || (expect.sign === 'non-negative' && value < 0)) {
    diagnostics.push(error('value-not-positive', `${expect.what} must be ${expect.sign === 'positive' ? 'greater than zero' : 'zero or more'}, not ${formatNumber(value)}`, span));
    return undefined;
  }
  const r = expect.range;
  if (r && (value < r.min || value > r.max) && !(value === 0 && r.zeroAllowed)) {
    // SI prefixes where they read well (100 MΩ), powers of ten beyond them (1e-18 A, 1e+12 Ω).
    const show = (x: number) => {
      const a = Math.abs(x);
      if (!r.unit) return formatNumber(x);
      if (x !== 0 && (a < 1e-12 || a >= 1e12)) return `${x.toExponential()} ${r.unit}`;
      return r.unit === 'A/V^1.5' ? `${formatNumber(x)} ${r.unit}` : formatSI(x, r.unit);
    };
    diagnostics.push(error('value-out-of-range', `${expect.what} must lie within ${show(r.min)}…${show(r.max)}, not ${show(value)}`, span));
    return undefined;
  }
  return value;
}

/** Largest tolerance or spread the tool accepts. */
export const MAX_TOLERANCE = 0.5;

/** Checks a tolerance or spread fraction lies within 0–50 %. */
export function checkTolerance(value: number, span: SourceSpan | undefined, what: string, diagnostics: Diagnostic[]): number | undefined {
  if (!Number.isFinite(value)) {
    diagnostics.push(error('value-not-finite', `${what} must be a finite number`, span));
    return undefined;
  }
  if (value < 0 || value > MAX_TOLERANCE) {
    const notes = value > 1 && value <= 50 ? [`did you mean ${formatNumber(value)} %?`] : [];
    diagnostics.push(error('tolerance-range', `${what} of ${formatNumber(value * 100)} % is outside 0–50 %`, span, notes));
    return undefined;
  }
  return value;
}

/** Evaluates a tolerance: `5 %` or `0.05`, within 0–50 %. */
export function evaluateTolerance(expr: Expr, scope: ValueScope, what: string, diagnostics: Diagnostic[]): number | undefined {
  const v = evaluateAs(expr, scope, { what, dim: DIMENSIONLESS, sign: 'any' }, diagnostics);
  return v === undefined ? undefined : checkTolerance(v, expr.span, what, diagnostics);
}

/** Evaluates an array bound or index: a whole number. */
export function evaluateInteger(expr: Expr, scope: ValueScope, what: string, diagnostics: Diagnostic[]): number | undefined {
  const v = evaluateAs(expr, scope, { what, dim: DIMENSIONLESS, sign: 'any' }, diagnostics);
  if (v === undefined) return undefined;
  if (!Number.isSafeInteger(v)) {
    diagnostics.push(error('index-not-integer', `${what} must be a whole number, not ${formatNumber(v)}`, expr.span));
    return undefined;
  }
  return v;
}

/** Short human form of a number: 220000 → "220000", 0.05 → "0.05", 1/3 → "0.333333". */
export function formatNumber(v: number): string {
  return Number.isInteger(v) ? String(v) : String(Number(v.toPrecision(6)));
}
