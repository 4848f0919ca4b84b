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
