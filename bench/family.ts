import fc from 'fast-check';
import type { StateHint } from '../lib/index.js';

/**
 * The oracle family: small random designs, every stage different, whose true worst-case
 * levels and latch verdicts can be found by brute force (every corner of the tolerance
 * box and a few hundred points inside it, each solved whole). `familyOracle.ts` finds the
 * truth and holds `check` to it; `npm run bench` runs the whole family, `npm test` a
 * subset.
 *
 * Three shapes, in the ranges a builder of tube logic draws from (common practice, no
 * source): cross-coupled latches of two triode sections, a stage fanning out to two to
 * four clamped grids, and a chain of two stages into a third. B+ 20–150 V, bias −6 to
 * −60 V, plate loads 10–220 kΩ, divider resistors 47 kΩ–1 MΩ, tolerances 1–10 %, triode
 * amplification factors 20–100 with spreads 0–30 %. Each section has a type of its own
 * (Koren's triode law with constants drawn round those of small-signal twin triodes), so
 * no two stages are copies; at most 16 parameters carry a tolerance, the rest are exact.
 *
 * Most dividers (85 %) are aimed: their ratio is drawn between the one that lets a high plate
 * clamp the grid and the one that cuts the section off from a low plate, so that a good
 * share of the family works and sits near its edge; the rest are drawn free, so that some
 * designs fail outright. A benchmark whose designs all pass with room would measure
 * nothing.
 */

export type FamilyShape = 'latch' | 'fanout' | 'chain' | 'gate';

/** One logic state the design is judged in: the buttons held pressed, the latch hints, and what the logic says every net reads. */
export interface FamilyState {
  label: string;
  close: string[];
  hints: StateHint[];
  /** Net → high, as the logic of the design says (an inverter's output is high when its input is low). */
  logic: Record<string, boolean>;
}

export interface FamilyDesign {
  name: string;
  shape: FamilyShape;
  text: string;
  /** The states to solve: both states of a latch, the input button released and pressed. */
  states: FamilyState[];
  /** The latch's two nets, for a latch. */
  latch: [string, string] | undefined;
}

/** Three significant digits, as a part's value is written. */
const sig = (x: number) => Number(x.toPrecision(3));

interface Triode {
  mu: number;
  ex: number;
  kg1: number;
  kp: number;
  kvb: number;
  spread: number;
}

const triode: fc.Arbitrary<Triode> = fc.record({
  mu: fc.double({ min: 20, max: 100, noNaN: true }),
  ex: fc.double({ min: 1.25, max: 1.5, noNaN: true }),
  kg1: fc.double({ min: 300, max: 3000, noNaN: true }),
  kp: fc.double({ min: 100, max: 600, noNaN: true }),
  kvb: fc.double({ min: 100, max: 3000, noNaN: true }),
  spread: fc.integer({ min: 0, max: 30 }),
});

const typeLine = (name: string, t: Triode, spread: number) =>
  `type ${name} koren-triode { mu = ${sig(t.mu)}, ex = ${sig(t.ex)}, kg1 = ${sig(t.kg1)}, kp = ${sig(t.kp)}, kvb = ${sig(t.kvb)}, spread = ${spread} % }`;

interface Supply {
  bp: number;
  bias: number;
  tol: number;
}

const supply: fc.Arbitrary<Supply> = fc.record({
  bp: fc.integer({ min: 20, max: 150 }),
  bias: fc.integer({ min: 6, max: 60 }).map((b) => -b),
  tol: fc.integer({ min: 1, max: 10 }),
});

/** A divider: series and pull-down resistors, and the share of the tolerance they carry. */
interface Divider {
  series: number;
  pulldown: number;
}

/**
 * A divider from a plate to a grid, aimed (its ratio between clamping from a high plate
 * and cutting off from a low one, at nominal, and at least three times the plate load
 * driving it, so the plate can rise) or drawn free; both resistors within 47 kΩ–1 MΩ.
 */
function divider(s: Supply, mu: number, load: number, low: number): fc.Arbitrary<Divider> {
  return fc.record({ aimed: fc.double({ min: 0, max: 1, noNaN: true }), u: fc.double({ min: 0, max: 1, noNaN: true }), drawn: fc.double({ min: 47e3, max: 1e6, noNaN: true }), free: fc.double({ min: 47e3, max: 1e6, noNaN: true }) }).map(({ aimed, u, drawn, free }) => {
    let series = drawn;
    const b = -s.bias;
    series = Math.max(series, 3 * load);
    // Grid = bias + (plate − bias)·k with k = P/(S + P): above 0 V from the high plate
    // (B+ through the load, into the divider to bias), below −high/mu (about cutoff) from
    // the driving net's low level. The divider's total R = S/(1 − k) sets the high level,
    // which sets the window for k: three rounds settle it.
    let k = 0.5;
    let window = [0, 0];
    for (let round = 0; round < 3; round++) {
      const r = series / (1 - k);
      const high = (s.bp * r + s.bias * load) / (r + load);
      window = [b / (high + b), Math.min(0.95, (b - high / mu) / Math.max(1e-9, low + b))];
      k = window[0]! + (window[1]! - window[0]!) * (0.35 + 0.3 * u);
    }
    if (aimed < 0.85 && window[1]! > window[0]! && k > 0 && k < 1) {
      // Keep the ratio; move the pair within 47 kΩ–1 MΩ if the pull-down falls outside.
      const pulldown = Math.min(1e6, Math.max(47e3, (k * series) / (1 - k)));
      const aimedSeries = (pulldown * (1 - k)) / k;
      if (aimedSeries >= Math.max(47e3, 3 * load) && aimedSeries <= 1e6) return { series: sig(aimedSeries), pulldown: sig(pulldown) };
    }
    return { series: sig(series), pulldown: sig(free) };
  });
}

/**
 * The low level of a plate: where the section's current at a grid clamped at 0 V (Koren's
 * triode law, as the models use it) meets the load line from B+; by bisection.
 */
function lowLevel(t: Triode, bp: number, load: number): number {
  const plateAmps = (vak: number) => (2 * ((vak / t.kp) * Math.log1p(Math.exp(t.kp / t.mu))) ** t.ex) / t.kg1;
  let [lo, hi] = [0, bp];
  for (let i = 0; i < 60; i++) {
    const mid = (lo + hi) / 2;
    if (plateAmps(mid) > (bp - mid) / load) hi = mid;
    else lo = mid;
  }
  return lo;
}

const loadOhms = fc.double({ min: 10e3, max: 220e3, noNaN: true }).map(sig);

/** A plate load drawn from 10–220 kΩ, raised (up to 220 kΩ) until the section pulls its plate below 30 % of B+. */
const aimedLoad = (t: Triode, bp: number) =>
  loadOhms.map((drawn) => {
    let load = drawn;
    while (load < 220e3 && lowLevel(t, bp, load) > 0.3 * bp) load = Math.min(220e3, load * 1.25);
    return sig(load);
  });
const tolerance = fc.integer({ min: 1, max: 10 });

const header = (title: string, s: Supply, margin = 1) =>
  [`title "${title}"`, `rail bp = ${s.bp} V tol ${s.tol} %`, `rail bias = ${s.bias} V tol ${s.tol} %`, `defaults { tolerance = 0 %, margin = ${margin} V }`];

const stageLine = (name: string, type: string, load: number, loadTol: number, inputs: { from: string; d: Divider; tol: number }[]) =>
  `stage ${name} { tube ${type}; load ${load} tol ${loadTol} % to bp; ${inputs.map((i) => `input ${i.from} series ${i.d.series} tol ${i.tol} % pulldown ${i.d.pulldown} tol ${i.tol} % to bias`).join('; ')} }`;

/** A cross-coupled latch of two different triode sections: 2 rails, 6 resistors, 2 sections (10 parameters). */
const latch = (n: number): fc.Arbitrary<FamilyDesign> =>
  fc.tuple(supply, triode, triode).chain(([s, ta, tb]) =>
    fc.tuple(aimedLoad(ta, s.bp), aimedLoad(tb, s.bp)).chain(([la, lb]) => fc.tuple(divider(s, tb.mu, la, lowLevel(ta, s.bp, la)), divider(s, ta.mu, lb, lowLevel(tb, s.bp, lb)), tolerance, tolerance).map(([da, db, t1, t2]) => ({
      name: `latch ${n}`,
      shape: 'latch' as const,
      latch: ['q', 'nq'] as [string, string],
      states: [
        { label: 'q high', close: [], hints: [{ net: 'q', high: true }], logic: { q: true, nq: false } },
        { label: 'q low', close: [], hints: [{ net: 'q', high: false }], logic: { q: false, nq: true } },
      ],
      text: [
        ...header(`family latch ${n}`, s),
        typeLine('TA', ta, ta.spread),
        typeLine('TB', tb, tb.spread),
        stageLine('q', 'TA', la, t1, [{ from: 'nq', d: db, tol: t2 }]),
        stageLine('nq', 'TB', lb, t2, [{ from: 'q', d: da, tol: t1 }]),
      ].join('\n'),
    }))),
  );

/** An input button pulling net x to B+, a resistor holding it at the bias rail otherwise. */
const buttonLines = ['button IN (x, bp)', 'resistor RX (x, bias) 100 k'];
/** The two positions of the button, and the logic of a chain of inverters from x through `nets` (in order) in each. */
const buttonStates = (nets: string[][]): FamilyState[] =>
  [false, true].map((pressed) => ({
    label: pressed ? 'IN pressed' : 'IN released',
    close: pressed ? ['IN'] : [],
    hints: [],
    logic: Object.fromEntries([['x', pressed], ...nets.flatMap((layer, depth) => layer.map((n) => [n, pressed === (depth % 2 === 1)]))]),
  }));

/** A stage driven from the button, fanning out to 2–4 grids of exact stages: 2 rails, 3 + 2k resistors, 1 section (≤ 14 parameters). */
const fanout = (n: number): fc.Arbitrary<FamilyDesign> =>
  fc.tuple(supply, triode, fc.integer({ min: 2, max: 4 })).chain(([s, ta, k]) =>
    fc.tuple(aimedLoad(ta, s.bp), fc.array(fc.tuple(triode, loadOhms, tolerance), { minLength: k, maxLength: k }), tolerance).chain(([la, receivers, t]) =>
      fc.tuple(divider(s, ta.mu, 10e3, s.bias), ...receivers.map(([tr]) => divider(s, tr.mu, la, lowLevel(ta, s.bp, la)))).map(([da, ...ds]) => ({
        name: `fan-out ${n} (${k} grids)`,
        shape: 'fanout' as const,
        latch: undefined,
        states: buttonStates([['a'], receivers.map((_, i) => `r${i + 1}`)]),
        text: [
          ...header(`family fan-out ${n}`, s),
          ...buttonLines,
          typeLine('TA', ta, ta.spread),
          ...receivers.map(([tr], i) => typeLine(`TR${i + 1}`, tr, 0)),
          stageLine('a', 'TA', la, t, [{ from: 'x', d: da, tol: t }]),
          ...receivers.map(([, lr, tr], i) => stageLine(`r${i + 1}`, `TR${i + 1}`, lr, 0, [{ from: 'a', d: ds[i]!, tol: tr }])),
        ].join('\n'),
      })),
    ),
  );

/** Two toleranced stages in a chain into a third whose divider is toleranced: 2 rails, 8 resistors, 2 sections (12 parameters). */
const chain = (n: number): fc.Arbitrary<FamilyDesign> =>
  fc.tuple(supply, triode, triode, triode).chain(([s, ta, tb, tc]) =>
    fc.tuple(aimedLoad(ta, s.bp), aimedLoad(tb, s.bp), loadOhms).chain(([la, lb, lc]) => fc.tuple(divider(s, ta.mu, 10e3, s.bias), divider(s, tb.mu, la, lowLevel(ta, s.bp, la)), divider(s, tc.mu, lb, lowLevel(tb, s.bp, lb)), tolerance, tolerance, tolerance).map(([da, db, dc, t1, t2, t3]) => ({
      name: `chain ${n}`,
      shape: 'chain' as const,
      latch: undefined,
      states: buttonStates([['a'], ['b'], ['c']]),
      text: [
        ...header(`family chain ${n}`, s),
        ...buttonLines,
        typeLine('TA', ta, ta.spread),
        typeLine('TB', tb, tb.spread),
        typeLine('TC', tc, 0),
        stageLine('a', 'TA', la, t1, [{ from: 'x', d: da, tol: t1 }]),
        stageLine('b', 'TB', lb, t2, [{ from: 'a', d: db, tol: t2 }]),
        stageLine('c', 'TC', lc, 0, [{ from: 'b', d: dc, tol: t3 }]),
      ].join('\n'),
    }))),
  );

/**
 * Two buttons into a NOR gate (two sections of one type, each with its own spread), its
 * output into an inverter and, with the second button, into a second NOR: four states
 * (neither, either, both pressed), in which each net's level depends on which inputs are
 * pressed together. 2 rails, 8 resistors and 2 sections toleranced (12 parameters); the
 * second NOR's own parts exact.
 */
const gate = (n: number): fc.Arbitrary<FamilyDesign> =>
  fc.tuple(supply, triode, triode, triode).chain(([s, ta, tc, td]) =>
    fc.tuple(aimedLoad(ta, s.bp), aimedLoad(tc, s.bp), aimedLoad(td, s.bp)).chain(([lg, lh, lk]) =>
      fc
        .tuple(divider(s, ta.mu, 10e3, s.bias), divider(s, ta.mu, 10e3, s.bias), divider(s, tc.mu, lg, lowLevel(ta, s.bp, lg)), divider(s, td.mu, lg, lowLevel(ta, s.bp, lg)), divider(s, td.mu, 10e3, s.bias), tolerance, tolerance, tolerance)
        .map(([d1, d2, dh, dk, dk2, t1, t2, t3]) => ({
          name: `gate ${n}`,
          shape: 'gate' as const,
          latch: undefined,
          states: [
            [false, false],
            [true, false],
            [false, true],
            [true, true],
          ].map(([p1, p2]) => {
            const g = !(p1 || p2);
            return { label: `IN1 ${p1 ? 'pressed' : 'released'}, IN2 ${p2 ? 'pressed' : 'released'}`, close: [...(p1 ? ['IN1'] : []), ...(p2 ? ['IN2'] : [])], hints: [], logic: { x1: p1!, x2: p2!, g, h: !g, k: !(g || p2) } };
          }),
          text: [
            ...header(`family gate ${n}`, s),
            'button IN1 (x1, bp)',
            'resistor RX1 (x1, bias) 100 k',
            'button IN2 (x2, bp)',
            'resistor RX2 (x2, bias) 100 k',
            typeLine('TA', ta, ta.spread),
            typeLine('TC', tc, 0),
            typeLine('TD', td, 0),
            stageLine('g', 'TA', lg, t1, [
              { from: 'x1', d: d1, tol: t1 },
              { from: 'x2', d: d2, tol: t2 },
            ]),
            stageLine('h', 'TC', lh, t3, [{ from: 'g', d: dh, tol: t3 }]),
            stageLine('k', 'TD', lk, 0, [
              { from: 'g', d: dk, tol: 0 },
              { from: 'x2', d: dk2, tol: 0 },
            ]),
          ].join('\n'),
        })),
    ),
  );

/** `count` gate designs (`gate`) from `seed`, each fixed by the seed and its index alone. */
export function gateDesigns(seed: number, count: number): FamilyDesign[] {
  return Array.from({ length: count }, (_, i) => fc.sample(gate(i + 1), { seed: seed + i, numRuns: 1 })[0]!);
}

/**
 * `count` designs of the family from `seed`, shapes in turn (latch, fan-out, chain), each
 * fixed by the seed and its index alone.
 */
export function familyDesigns(seed: number, count: number): FamilyDesign[] {
  const shapes = [latch, fanout, chain];
  return Array.from({ length: count }, (_, i) => fc.sample(shapes[i % 3]!(i + 1), { seed: seed + i, numRuns: 1 })[0]!);
}
