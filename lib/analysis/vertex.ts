/** A parameter's band for the vertex search. */
export interface Band {
  nominal: number;
  low: number;
  high: number;
}

/** What a probe of the circuit at one set of parameter values gives: the judged voltage and its slope in every parameter. */
export interface Probe {
  value: number;
  slopes: ArrayLike<number>;
}

export interface VertexResult {
  nominal: number;
  /** The judged voltage at the vertex, solved exactly; undefined when the circuit fails there (no solution, or a lost state). */
  worst: number | undefined;
  /** Every parameter at one end of its band. */
  vertex: Float64Array;
  /** Each parameter's linearised effect across its whole band at the nominal point (volts). */
  effects: Float64Array;
  /** Parameters moved to their other end when the slopes were taken again at the vertex. */
  corrections: number;
}

/**
 * Worst case by vertex (extreme value analysis): linearise at the nominal point, put every
 * parameter at the end of its band that moves the judged voltage the wrong way, solve
 * exactly there, take the slopes again at the vertex and move any parameter whose worse
 * end has changed, up to `rounds` times. `probe` solves at the given values (starting
 * from wherever it last was) and returns undefined when the circuit fails there.
 *
 * Exact for a voltage monotone in every parameter; for others it is the linearised
 * estimate that the tests check against exhaustive corners.
 */
export function searchVertex(bands: readonly Band[], worst: 'min' | 'max', probe: (values: Float64Array) => Probe | undefined, rounds = 3): VertexResult | undefined {
  const n = bands.length;
  const values = Float64Array.from(bands, (b) => b.nominal);
  const at = probe(values);
  if (!at) return undefined;
  const sign = worst === 'min' ? -1 : 1;
  const effects = Float64Array.from(bands, (b, i) => at.slopes[i]! * (b.high - b.low));
  const vertex = Float64Array.from(bands, (b, i) => (sign * at.slopes[i]! >= 0 ? b.high : b.low));
  let here = probe(vertex);
  // Every vertex probed is a real corner; keep the most extreme one seen.
  let worstValue = here?.value;
  let worstVertex = Float64Array.from(vertex);
  let corrections = 0;
  for (let round = 0; round < rounds && here; round++) {
    let changed = false;
    for (let i = 0; i < n; i++) {
      const b = bands[i]!;
      const want = sign * here.slopes[i]! >= 0 ? b.high : b.low;
      if (want !== vertex[i]) {
        vertex[i] = want;
        changed = true;
        corrections++;
      }
    }
    if (!changed) break;
    here = probe(vertex);
    if (!here) return { nominal: at.value, worst: undefined, vertex, effects, corrections };
    if (sign * (here.value - worstValue!) > 0) {
      worstValue = here.value;
      worstVertex = Float64Array.from(vertex);
    }
  }
  if (!here) return { nominal: at.value, worst: undefined, vertex, effects, corrections };
  return { nominal: at.value, worst: worstValue, vertex: worstVertex, effects, corrections };
}

/** Bands enumerated over every corner at most, after the vertex search: 2^5 = 32 solves of a local problem. */
export const LOCAL_EXHAUSTIVE_BANDS = 5;

/**
 * The work of that enumeration per case, in solves times unknowns: a region of a few
 * nodes enumerates `LOCAL_EXHAUSTIVE_BANDS` bands, a region of a wide fan-out (hundreds
 * of grids) fewer, so that no case costs more than a few thousand node-solves.
 */
export const LOCAL_CORNER_WORK = 2_000;

/** How many bands a region of `unknowns` unknowns enumerates (see `LOCAL_CORNER_WORK`). */
export function localBands(unknowns: number): number {
  return Math.max(0, Math.min(LOCAL_EXHAUSTIVE_BANDS, Math.floor(Math.log2(LOCAL_CORNER_WORK / Math.max(1, unknowns)))));
}

/**
 * After the vertex search, every corner of the `maxBands` bands that move the judged
 * voltage most (the rest stay at the vertex), in Gray-code order so that each solve starts from its neighbour: a voltage
 * that is not monotone in its parameters (a grid that starts to conduct only when several
 * parts move together) has its extreme at a corner the linearised vertex misses. Returns
 * the vertex search's answer, or a corner more extreme than its vertex.
 */
export function searchAllCorners(bands: readonly Band[], worst: 'min' | 'max', found: VertexResult, value: (values: Float64Array) => number | undefined, maxBands = LOCAL_EXHAUSTIVE_BANDS): VertexResult {
  if (found.worst === undefined) return found;
  const sign = worst === 'min' ? -1 : 1;
  const order = bands
    .map((b, i) => ({ i, effect: Math.abs(found.effects[i]!), width: b.high - b.low }))
    .filter((b) => b.width > 0)
    .sort((a, b) => b.effect - a.effect)
    .slice(0, maxBands)
    .map((b) => b.i);
  const values = Float64Array.from(found.vertex);
  let best = found.worst;
  let at = found.vertex;
  for (let g = 1; g < 2 ** order.length; g++) {
    const i = order[31 - Math.clz32(g & -g)]!;
    values[i] = values[i] === bands[i]!.low ? bands[i]!.high : bands[i]!.low;
    const v = value(values);
    if (v !== undefined && sign * (v - best) > 0) {
      best = v;
      at = Float64Array.from(values);
    }
  }
  return { ...found, worst: best, vertex: at };
}
