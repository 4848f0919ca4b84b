/**
 * The smallest and largest of a list of numbers, by a loop. `Math.min(...xs)` passes every
 * element as an argument and overflows the call stack beyond about 10⁵ of them (a long
 * run in time, a large readings file), so nothing in lib spreads a list into a call.
 *
 * Like `Math.min()` and `Math.max()`, the empty list gives Infinity and −Infinity, and a
 * NaN anywhere gives NaN. Example: `lowest([3, 1, 2])` is 1, `highest(new Float64Array(0))` is −Infinity.
 */
export function lowest(xs: ArrayLike<number>): number {
  let m = Infinity;
  for (let i = 0; i < xs.length; i++) {
    const x = xs[i]!;
    if (Number.isNaN(x)) return NaN;
    if (x < m) m = x;
  }
  return m;
}

export function highest(xs: ArrayLike<number>): number {
  let m = -Infinity;
  for (let i = 0; i < xs.length; i++) {
    const x = xs[i]!;
    if (Number.isNaN(x)) return NaN;
    if (x > m) m = x;
  }
  return m;
}

/** The largest magnitude in a list (0 for none; NaN if any is NaN). Example: `largestMagnitude([1, -3, 2])` is 3. */
export function largestMagnitude(xs: ArrayLike<number>): number {
  let m = 0;
  for (let i = 0; i < xs.length; i++) m = Math.max(m, Math.abs(xs[i]!));
  return m;
}

/**
 * Appends `items` to `out` in place, by a loop: `out.push(...items)` passes every item as an
 * argument and overflows the stack for a table of 10⁵ rows (the resistors of a large
 * design). Returns `out`. Example: `append([1], [2, 3])` is `[1, 2, 3]`.
 */
export function append<T>(out: T[], items: readonly T[]): T[] {
  for (let i = 0; i < items.length; i++) out.push(items[i]!);
  return out;
}

/** The first item of each key, in order: `firstOfEach(['ab', 'ac', 'b'], (s) => s[0])` is `['ab', 'b']`. */
export function firstOfEach<T>(items: readonly T[], key: (item: T) => string): T[] {
  const seen = new Set<string>();
  return items.filter((item) => {
    const k = key(item);
    return !seen.has(k) && seen.add(k) !== undefined;
  });
}

/**
 * The value of `key` in `map`, made by `make` and stored first when it is missing.
 *
 * Example: `entry(byNet, 'q', () => []).push(pin)` gathers pins by net.
 */
export function entry<K, V>(map: Map<K, V>, key: K, make: () => V): V {
  let value = map.get(key);
  if (value === undefined) {
    value = make();
    map.set(key, value);
  }
  return value;
}
