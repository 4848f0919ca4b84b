/** The suffix of the field that says why a figure beside it is null: `"high": null, "highWhy": "never high: …"`. */
export const WHY_SUFFIX = 'Why';

/** `{ key: number | null }`, with `keyWhy` beside it when null. */
export type Figure<K extends string> = Record<K, number | null> & Partial<Record<`${K}Why`, string>>;

/**
 * A figure for a JSON report: `{ [key]: value }` when it is a finite number, else
 * `{ [key]: null, [key + 'Why']: why }`, so that a null never stands without its reason
 * and NaN or Infinity never reach the JSON (where `JSON.stringify` would write null).
 *
 * Example: `figure('headroom', undefined, 'an input')` is `{ headroom: null, headroomWhy: 'an input' }`.
 */
export function figure<K extends string>(key: K, value: number | undefined, why: string): Figure<K> {
  if (value !== undefined && Number.isFinite(value)) return { [key]: value } as unknown as Figure<K>;
  return { [key]: null, [`${key}${WHY_SUFFIX}`]: value === undefined ? why : `${why} (the computation gave no finite number)` } as unknown as Figure<K>;
}

/** A name (or other text, or an object) for a JSON report, or null with the reason it has none. */
export function named<K extends string, T = string>(key: K, value: T | undefined, why: string): Record<K, T | null> & Partial<Record<`${K}Why`, string>> {
  return (value === undefined ? { [key]: null, [`${key}${WHY_SUFFIX}`]: why } : { [key]: value }) as unknown as Record<K, T | null> & Partial<Record<`${K}Why`, string>>;
}
