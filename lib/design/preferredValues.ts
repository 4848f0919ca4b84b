/**
 * The IEC 60063 preferred-number series of resistor values, one decade (1.0 to 10):
 * hard-coded, because several E24 values (2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2) are not
 * the rounded 10^(i/24) of the formula; E48 and up follow the formula to three figures.
 * (IEC 60063:2015, from memory.)
 */
export const E_SERIES = {
  E6: [1.0, 1.5, 2.2, 3.3, 4.7, 6.8],
  E12: [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2],
  E24: [1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1],
  E96: [
    1.0, 1.02, 1.05, 1.07, 1.1, 1.13, 1.15, 1.18, 1.21, 1.24, 1.27, 1.3, 1.33, 1.37, 1.4, 1.43, 1.47, 1.5, 1.54, 1.58, 1.62, 1.65, 1.69, 1.74, 1.78, 1.82, 1.87, 1.91, 1.96, 2.0, 2.05, 2.1, 2.15, 2.21, 2.26, 2.32,
    2.37, 2.43, 2.49, 2.55, 2.61, 2.67, 2.74, 2.8, 2.87, 2.94, 3.01, 3.09, 3.16, 3.24, 3.32, 3.4, 3.48, 3.57, 3.65, 3.74, 3.83, 3.92, 4.02, 4.12, 4.22, 4.32, 4.42, 4.53, 4.64, 4.75, 4.87, 4.99, 5.11, 5.23, 5.36, 5.49,
    5.62, 5.76, 5.9, 6.04, 6.19, 6.34, 6.49, 6.65, 6.81, 6.98, 7.15, 7.32, 7.5, 7.68, 7.87, 8.06, 8.25, 8.45, 8.66, 8.87, 9.09, 9.31, 9.53, 9.76,
  ],
} as const;

export type SeriesName = keyof typeof E_SERIES;

/**
 * The values of a series from `low` to `high` ohms, over as many decades as that takes.
 *
 * Example: `preferredValues('E12', 20e3, 50e3)` is 22 k, 27 k, 33 k, 39 k, 47 k.
 */
export function preferredValues(series: SeriesName, low: number, high: number): number[] {
  const out: number[] = [];
  for (let decade = Math.floor(Math.log10(low)) - 1; decade <= Math.ceil(Math.log10(high)); decade++) {
    for (const m of E_SERIES[series]) {
      // Rounded to the series' own figures, so 4.7 × 10⁴ is 47000 and not 47000.000000000004.
      const v = Number((m * 10 ** decade).toPrecision(3));
      if (v >= low && v <= high) out.push(v);
    }
  }
  return out;
}
