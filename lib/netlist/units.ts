/**
 * Physical dimensions as exponents of volt, ampere and second. Every electrical unit the
 * design language knows is a product of these (ohm = V/A, farad = A·s/V, watt = V·A).
 */
export interface Dimension {
  volt: number;
  amp: number;
  second: number;
}

export const DIMENSIONLESS: Dimension = { volt: 0, amp: 0, second: 0 };
export const VOLTS: Dimension = { volt: 1, amp: 0, second: 0 };
export const AMPS: Dimension = { volt: 0, amp: 1, second: 0 };
export const SECONDS: Dimension = { volt: 0, amp: 0, second: 1 };
export const OHMS: Dimension = { volt: 1, amp: -1, second: 0 };
export const FARADS: Dimension = { volt: -1, amp: 1, second: 1 };
export const WATTS: Dimension = { volt: 1, amp: 1, second: 0 };
export const PERVEANCE: Dimension = { volt: -1.5, amp: 1, second: 0 };

export function sameDimension(a: Dimension, b: Dimension): boolean {
  return a.volt === b.volt && a.amp === b.amp && a.second === b.second;
}

export function isDimensionless(d: Dimension): boolean {
  return d.volt === 0 && d.amp === 0 && d.second === 0;
}

export function multiplyDimensions(a: Dimension, b: Dimension, sign: 1 | -1): Dimension {
  return { volt: a.volt + sign * b.volt, amp: a.amp + sign * b.amp, second: a.second + sign * b.second };
}

const NAMED: [Dimension, string][] = [
  [VOLTS, 'volts'],
  [AMPS, 'amps'],
  [OHMS, 'ohms'],
  [FARADS, 'farads'],
  [WATTS, 'watts'],
  [SECONDS, 'seconds'],
  [DIMENSIONLESS, 'a plain number'],
  [PERVEANCE, 'A/V^1.5'],
];

/** A reader's name for a dimension: "ohms", "volts", or a formula such as "V^2/A". */
export function describeDimension(d: Dimension): string {
  for (const [dim, name] of NAMED) if (sameDimension(d, dim)) return name;
  const parts: string[] = [];
  for (const [sym, e] of [['V', d.volt], ['A', d.amp], ['s', d.second]] as const) {
    if (e !== 0) parts.push(e === 1 ? sym : `${sym}^${e}`);
  }
  return parts.join('·');
}

/** SI multipliers the language accepts in front of a unit. `u` and `µ` both mean micro. */
const MULTIPLIERS: Record<string, number> = {
  p: 1e-12,
  n: 1e-9,
  u: 1e-6,
  'µ': 1e-6,
  'μ': 1e-6,
  m: 1e-3,
  k: 1e3,
  M: 1e6,
  G: 1e9,
};

/** Unit symbols and words. `%` scales by 0.01 and is dimensionless. */
const UNITS: Record<string, { scale: number; dim: Dimension }> = {
  V: { scale: 1, dim: VOLTS },
  A: { scale: 1, dim: AMPS },
  F: { scale: 1, dim: FARADS },
  W: { scale: 1, dim: WATTS },
  s: { scale: 1, dim: SECONDS },
  'Ω': { scale: 1, dim: OHMS },
  ohm: { scale: 1, dim: OHMS },
  ohms: { scale: 1, dim: OHMS },
  '%': { scale: 0.01, dim: DIMENSIONLESS },
};

export interface UnitSuffix {
  scale: number;
  dim: Dimension;
}

/**
 * Reads a unit suffix such as `k`, `kΩ`, `mA`, `pF`, `%` or `ohm`.
 * Returns undefined when the text is not a unit. A bare multiplier (`k`) is a
 * dimensionless scale; its unit comes from where the value is used.
 *
 * Example: `parseUnitSuffix("kΩ")` is `{ scale: 1000, dim: OHMS }`.
 */
export function parseUnitSuffix(text: string): UnitSuffix | undefined {
  if (text === '') return { scale: 1, dim: DIMENSIONLESS };
  const unit = UNITS[text];
  if (unit) return unit;
  const first = text[0] as string;
  const mult = MULTIPLIERS[first];
  if (mult === undefined) return undefined;
  const rest = text.slice(first.length);
  if (rest === '') return { scale: mult, dim: DIMENSIONLESS };
  const after = UNITS[rest];
  if (!after || rest === '%') return undefined;
  return { scale: mult * after.scale, dim: after.dim };
}

const PREFIXES: [number, string][] = [
  [1e9, 'G'],
  [1e6, 'M'],
  [1e3, 'k'],
  [1, ''],
  [1e-3, 'm'],
  [1e-6, 'µ'],
  [1e-9, 'n'],
  [1e-12, 'p'],
  [1e-15, 'f'],
];

/**
 * A value with an SI prefix (the reverse of reading a unit suffix) and three significant digits, the way a builder reads a part:
 * `formatSI(33000, 'Ω')` is "33 kΩ", `formatSI(4.7e-11, 'F')` is "47 pF", `formatSI(-12, 'V')` is "-12 V".
 */
export function formatSI(value: number, unit: string): string {
  // A figure that does not exist reads as a dash, never as NaN or Infinity; callers that know why say so in words beside it.
  if (Number.isNaN(value)) return '—';
  if (!Number.isFinite(value)) return value > 0 ? `beyond any ${unit}` : `below any ${unit}`;
  // Below a femto-unit nothing a builder measures is left: show it as zero.
  if (Math.abs(value) < 1e-15) return `0 ${unit}`;
  const abs = Math.abs(value);
  const [scale, prefix] = PREFIXES.find(([s]) => abs >= s * 0.9995) ?? PREFIXES[PREFIXES.length - 1]!;
  const shown = Number((value / scale).toPrecision(3));
  return `${shown} ${prefix}${unit}`;
}
