import { preferredValues } from '../lib/index.js';

/**
 * Generated designs for benchmarks and scaling tests: a ring of latches joined by clocked
 * copy gates, the shape of a long shift register. `stages` is rounded down to a multiple
 * of four (a latch of two stages and a copy of two gates per cell).
 *
 * A design that works, so that the benchmarks time a check whose bounds pass with room:
 * 39 k loads give each cell about 2 V of noise margin both ways (33 k left its low margin
 * at 1.46 V against the required 1.50 V), and the clock line is as stiff per gate it feeds
 * at every size (1 kΩ for one cell, 1 kΩ / cells for more), as a builder would buffer it;
 * one 1 kΩ drive under a thousand grids sags to a few volts and the register stops working.
 *
 * Example: `generateRegister(8)` is a two-cell register with 8 stages and 16 sections.
 */
export function generateRegister(stages: number): string {
  const cells = Math.max(1, Math.floor(stages / 4));
  return `# Generated: a ring of ${cells} latch cells with clocked copy gates (${cells * 4} stages).
title "generated register, ${cells * 4} stages"
rail bp = 24 V tol 5 %
rail bias = -12 V tol 5 %
type LP koren-pentode { mu = 35, ex = 1.35, kg1 = 600, kg2 = 4500, kp = 45, kvb = 15, spread = 25 % }
defaults { tolerance = 5 %, margin = 1.5 V, tube = LP }

block latch (set, clr, q, nq) {
  stage q  { load 39 k to bp; screen bp; input nq series 220 k pulldown 220 k to bias; input clr series 220 k pulldown 220 k to bias }
  stage nq { load 39 k to bp; screen bp; input q  series 220 k pulldown 220 k to bias; input set series 220 k pulldown 220 k to bias }
}
block copy (phase_n, d_on, d_off, set, clr) {
  stage set { load 39 k to bp; screen bp; input phase_n series 220 k pulldown 220 k to bias; input d_off series 220 k pulldown 220 k to bias }
  stage clr { load 39 k to bp; screen bp; input phase_n series 220 k pulldown 220 k to bias; input d_on  series 220 k pulldown 220 k to bias }
}

instance cell[i in 0..${cells - 1}] of latch (set: s[i], clr: c[i], q: q[i], nq: nq[i])
instance gate[i in 0..${cells - 1}] of copy (phase_n: clk_n, d_on: q[(i + ${cells - 1}) mod ${cells}], d_off: nq[(i + ${cells - 1}) mod ${cells}], set: s[i], clr: c[i])
drive CLOCK (clk_n) 24 V source ${+(1000 / cells).toPrecision(3)}
`;
}


/** What `generateVariedRegister` may change in its design. */
export interface VariedRegisterOptions {
  /**
   * How many latch nets to weaken (0 when absent), spread round the ring among those that
   * feed only their latch partner and a copy gate: each gets the plate load `WEAK_LOAD`,
   * the highest divider ratio drawn anywhere into its partner (240 k / 470 k) and the
   * heaviest series resistor into its copy gate, as a repair with the wrong resistors would,
   * which leaves its high noise margin short of the required one by its bound and about
   * at it in truth, so that `check` must refine it.
   * Everything else is drawn exactly as without them: the same seed gives the same design
   * but for those values.
   */
  weakNets?: number;
}

/** E24 (IEC 60063) values from 10 kΩ to 2 MΩ, among which every drawn value steps. */
const E24_OHMS = preferredValues('E24', 10e3, 2e6);

/**
 * The nominal plate load for each fan-out, 1 to 6 (ohms): each receiver's divider draws
 * current from a high plate, so a plate that feeds more has a stiffer load (a designer's
 * rule, not a formula: at 48 V it keeps every fan-out's worst high a few volts above the
 * logic threshold and every worst low below 4 V).
 */
const LOAD_BY_FANOUT = [68e3, 47e3, 39e3, 33e3, 30e3, 27e3];

/**
 * The dividers: a series resistor among {200, 220, 240} k with a pull-down among
 * {430, 470, 510} k, never more than one step apart, so that the ratio stays within ±9 %
 * of 0.47. A receiving threshold moves by the ratio's change times the bias (44 V): two
 * steps apart (200/510 or 240/430) would move it 4 V, more than any margin here. The extra
 * gates read through dividers twice as large, as a builder hangs decoders where they load a
 * bit least.
 */
const DIVIDERS = { series: [200e3, 220e3, 240e3], pulldown: [430e3, 470e3, 510e3] };
const DECODER_DIVIDERS = { series: [430e3, 470e3, 510e3], pulldown: [910e3, 1e6, 1.1e6] };

/**
 * A weak net's plate load, 71.5 k (E96: a repair with a 1 % resistor of the wrong value):
 * with 240 k / 470 k into its partner and 200 k / 470 k into its copy gate it leaves the
 * net's high noise margin 0.4–0.5 V short of 1.5 V by its bound, and a few tens of
 * millivolts short at the corner the bound comes from, solved whole (tried at 160 stages:
 * 68 k passes by its bound, 75 k falls 1 V short by it and 0.5 V at that corner).
 */
const WEAK_LOAD = 71.5e3;

/** A stage as drawn: its plate load and, per input, the net it reads and its divider. */
interface DrawnStage {
  net: string;
  load: number;
  inputs: { from: string; series: number; pulldown: number }[];
}

/**
 * A small seeded generator of numbers in [0, 1): mulberry32 (public domain), the mixing the
 * Monte Carlo sampler also uses, so that a seed gives the same design on every machine.
 */
function mulberry32(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = Math.imul(state ^ (state >>> 15), state | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** The preferred value `steps` places from `ohms` in E24. */
function stepFrom(ohms: number, steps: number): number {
  const i = E24_OHMS.indexOf(ohms);
  if (i < 0) throw new Error(`${ohms} Ω is not an E24 value`);
  return E24_OHMS[Math.min(E24_OHMS.length - 1, Math.max(0, i + steps))]!;
}

/** A resistance as the language writes it, in kΩ: 470e3 is "470 k", 1.1e6 is "1100 k". */
function kilohms(ohms: number): string {
  return `${Number((ohms / 1e3).toPrecision(3))} k`;
}

/** The seed of the varied registers the bench measures (`generateVariedRegister`). */
export const VARIED_SEED = 1;

/**
 * The register of `generateRegister` as a real machine is: the same ring of latch cells
 * and clocked copy gates, with exactly `stages` stages (from 8 on; fewer make one cell of
 * 4 to 6), no two regions of which are alike. Drawn from `seed` (mulberry32: one seed,
 * one text):
 * - each cell carries 0–2 extra NOR gates of 1–3 inputs reading its own latch and the one
 *   before it (a decoder, say), each feeding a third input of one of the cell's copy gates,
 *   so that latch nets feed 2 to 6 grids, the rest 1, and gates have 1 to 3 inputs;
 * - each plate load is its fan-out's nominal (`LOAD_BY_FANOUT`) or the preferred value
 *   either side of it, and each input's divider a series and a pull-down drawn among
 *   neighbouring preferred values (`DIVIDERS`).
 * The clock is held at its idle level, as `check` sees a clocked machine at rest: every
 * copy gate is held low, and the decoders feeding them only load the nets they read.
 *
 * A design that works, so that the bench times a check whose bounds pass with room: the
 * uniform register's 24 V with 220 k / 220 k dividers to −12 V keeps only 0.5 V above its
 * 1.5 V margin, which the varied values use up (its receiving thresholds span 8 V of its
 * 13 V swing, and a ratio one step off moves them 1 V). Here the plates run from 50 V and
 * the dividers, of ratio 0.47, return to −45 V: the thresholds sit about 8–12 V (VIL) and
 * 22–27 V (VIH), between worst lows under 5 V and worst highs over 27 V. Every net keeps
 * more than 1 V of slack (seeds 1 to 3 at 160 stages: 1.16 V at least; seed 1 at 500 and
 * 2,000 stages: 1.70 and 1.51 V); at 48 V and −44 V a fan-out of 6 on the highest load
 * its draws allow kept only 0.6 V, and a fan-out of 6 on the lowest limits the low side.
 *
 * Example: `generateVariedRegister(500, 1)` has 500 stages in about 100 cells; the same
 * call gives the same text, `generateVariedRegister(500, 2)` another design.
 */
export function generateVariedRegister(stages: number, seed: number, options: VariedRegisterOptions = {}): string {
  const random = mulberry32(seed);
  const draw = <T>(xs: readonly T[]): T => xs[Math.floor(random() * xs.length)]!;
  // The cells: a fifth of the stages (each four stages and 0–2 extra gates, one on average),
  // but enough that two extra gates a cell take up the rest; the extra gates go to cells
  // drawn at random among those with room, each with its count of inputs.
  const target = Math.max(4, Math.floor(stages));
  const n = target < 8 ? 1 : Math.max(Math.ceil(target / 6), Math.floor(target / 5));
  const perCell = new Array<number>(n).fill(0);
  for (let extra = 0; extra < Math.min(target - 4 * n, 2 * n); ) {
    const i = Math.floor(random() * n);
    if (perCell[i]! < 2) {
      perCell[i]!++;
      extra++;
    }
  }
  const cells = perCell.map((k) => Array.from({ length: k }, () => draw([1, 2, 3])));
  const count = 4 * n + perCell.reduce((a, b) => a + b, 0);
  const before = (i: number) => (i + n - 1) % n;
  // Every stage's inputs, in the order they are written: latches and copy gates, then decoders.
  const reads = new Map<string, string[]>();
  for (let i = 0; i < n; i++) {
    reads.set(`q[${i}]`, [`nq[${i}]`, `c[${i}]`]);
    reads.set(`nq[${i}]`, [`q[${i}]`, `s[${i}]`]);
    reads.set(`s[${i}]`, ['clk_n', `nq[${before(i)}]`]);
    reads.set(`c[${i}]`, ['clk_n', `q[${before(i)}]`]);
  }
  const decoders = new Set<string>();
  for (const [i, extras] of cells.entries()) {
    extras.forEach((inputCount, k) => {
      const pool = [`q[${i}]`, `nq[${i}]`, `q[${before(i)}]`, `nq[${before(i)}]`];
      const name = `x${k}[${i}]`;
      reads.set(name, Array.from({ length: inputCount }, () => pool.splice(Math.floor(random() * pool.length), 1)[0]!));
      reads.get(k === 0 ? `s[${i}]` : `c[${i}]`)!.push(name);
      decoders.add(name);
    });
  }
  const fanout = new Map<string, number>();
  for (const list of reads.values()) for (const net of list) fanout.set(net, (fanout.get(net) ?? 0) + 1);
  const drawn: DrawnStage[] = [...reads].map(([net, list]) => {
    const load = stepFrom(LOAD_BY_FANOUT[fanout.get(net)! - 1]!, draw([-1, 0, 1]));
    const { series, pulldown } = decoders.has(net) ? DECODER_DIVIDERS : DIVIDERS;
    const inputs = list.map((from) => {
      const s = Math.floor(random() * 3);
      return { from, series: series[s]!, pulldown: pulldown[Math.min(2, Math.max(0, s + draw([-1, 0, 1])))]! };
    });
    return { net, load, inputs };
  });
  const weak = weakenNets(drawn, fanout, options.weakNets ?? 0);
  const text = (s: DrawnStage) => `stage ${s.net} { load ${kilohms(s.load)} to bp; screen bp; ${s.inputs.map((d) => `input ${d.from} series ${kilohms(d.series)} pulldown ${kilohms(d.pulldown)} to bias`).join('; ')} }`;
  return `# Generated: a ring of ${n} latch cells with clocked copy gates and ${count - 4 * n} decoding gates (${count} stages), values drawn from seed ${seed}${weak.length > 0 ? `; weakened: ${weak.join(', ')}` : ''}.
title "generated varied register, ${count} stages, seed ${seed}"
rail bp = 50 V tol 5 %
rail bias = -45 V tol 5 %
type LP koren-pentode { mu = 35, ex = 1.35, kg1 = 600, kg2 = 4500, kp = 45, kvb = 15, spread = 25 % }
defaults { tolerance = 5 %, margin = 1.5 V, tube = LP }

${drawn.map(text).join('\n')}
drive CLOCK (clk_n) 50 V source ${+(1000 / n).toPrecision(3)}
`;
}

/**
 * Weakens `count` latch nets of a drawn register in place, spread evenly over those that
 * feed only their partner and a copy gate (fan-out 2), and returns their names: each net's
 * load becomes `WEAK_LOAD`, its partner's divider from it 240 k / 470 k, and the copy
 * gate's 200 k / 470 k, so that every weak net is the same problem up to its partner's own
 * values.
 */
function weakenNets(stages: DrawnStage[], fanout: ReadonlyMap<string, number>, count: number): string[] {
  const candidates = stages.filter((s) => /^n?q\[/.test(s.net) && fanout.get(s.net) === 2);
  const chosen = Array.from({ length: Math.min(count, candidates.length) }, (_, k) => candidates[Math.floor(((k + 0.5) * candidates.length) / count)]!);
  for (const weak of chosen) {
    weak.load = WEAK_LOAD;
    for (const s of stages) {
      for (const input of s.inputs) {
        if (input.from !== weak.net) continue;
        const partner = /^n?q\[/.test(s.net);
        input.series = partner ? 240e3 : 200e3;
        input.pulldown = 470e3;
      }
    }
  }
  return chosen.map((s) => s.net);
}
