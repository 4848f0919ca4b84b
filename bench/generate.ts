/**
 * Generated designs for benchmarks and scaling tests: a ring of latches joined by clocked
 * copy gates, the shape of a long shift register. `stages` is rounded down to a multiple
 * of four (a latch of two stages and a copy of two gates per cell).
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
  stage q  { load 33 k to bp; screen bp; input nq series 220 k pulldown 220 k to bias; input clr series 220 k pulldown 220 k to bias }
  stage nq { load 33 k to bp; screen bp; input q  series 220 k pulldown 220 k to bias; input set series 220 k pulldown 220 k to bias }
}
block copy (phase_n, d_on, d_off, set, clr) {
  stage set { load 33 k to bp; screen bp; input phase_n series 220 k pulldown 220 k to bias; input d_off series 220 k pulldown 220 k to bias }
  stage clr { load 33 k to bp; screen bp; input phase_n series 220 k pulldown 220 k to bias; input d_on  series 220 k pulldown 220 k to bias }
}

instance cell[i in 0..${cells - 1}] of latch (set: s[i], clr: c[i], q: q[i], nq: nq[i])
instance gate[i in 0..${cells - 1}] of copy (phase_n: clk_n, d_on: q[(i + ${cells - 1}) mod ${cells}], d_off: nq[(i + ${cells - 1}) mod ${cells}], set: s[i], clr: c[i])
drive CLOCK (clk_n) 24 V source 1 k
`;
}
