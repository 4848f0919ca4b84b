import { applyParameters, buildStageGraph, corners, designParameters, solveOperatingPoint, type Design, type StateHint } from '../../lib/index.js';

/**
 * The exhaustive oracle: every corner of the design's tolerance box solved as a whole
 * circuit, from the nominal state, giving each net's lowest and highest voltage.
 */
export function exhaustive(d: Design, hints: StateHint[]): Map<string, { min: number; max: number }> {
  const graph = buildStageGraph(d);
  const nominal = solveOperatingPoint(d, { graph, hints });
  if (!('nodes' in nominal)) throw new Error('no solve');
  const out = new Map<string, { min: number; max: number }>();
  for (const corner of corners(designParameters(d))) {
    const varied = applyParameters(d, corner);
    const op = solveOperatingPoint(varied.design, { graph, variation: varied.variation, start: nominal.x });
    if (!('nodes' in op) || !op.converged) throw new Error('a corner did not solve');
    for (const n of graph.nets) {
      const v = op.nodes.get(n.name)!;
      const m = out.get(n.name) ?? { min: Infinity, max: -Infinity };
      out.set(n.name, { min: Math.min(m.min, v), max: Math.max(m.max, v) });
    }
  }
  return out;
}

/** A latch of two stages at 24 V / −12 V (the arrangement of the bench figures). */
export const latchText = (tube: string, tol: string, load: string, divider: string, screen: string) => `rail bp = 24 V tol 5 %
rail bias = -12 V tol 5 %
defaults { tube = "${tube}", tolerance = ${tol} }
stage q  { load ${load} to bp; ${screen} input nq series ${divider} pulldown ${divider} to bias }
stage nq { load ${load} to bp; ${screen} input q  series ${divider} pulldown ${divider} to bias }`;

/** Small designs (≤ 12 parameters) for the exhaustive oracle: what, text, the state, the net that is high, the net that is low. */
export const SMALL_DESIGNS: [string, string, StateHint[], string, string][] = [
  ['a pentode latch (10 parameters)', latchText('6AU6', '5 %', '33 k', '220 k', 'screen bp;'), [{ net: 'q', high: true }], 'q', 'nq'],
  ['a twin-triode latch (10 parameters)', latchText('12AU7', '10 %', '100 k', '330 k', ''), [{ net: 'q', high: false }], 'nq', 'q'],
  [
    'two inverters in a chain (9 parameters)',
    `rail bp = 24 V tol 5 %
rail bias = -12 V tol 5 %
drive IN (x) 24 V
defaults { tube = "6AU6", tolerance = 5 % }
stage a { load 33 k to bp; screen bp; input x series 220 k pulldown 220 k to bias }
stage b { load 33 k to bp; screen bp; input a series 220 k pulldown 220 k to bias }`,
    [],
    'b',
    'a',
  ],
];


/**
 * A latch at 24 V / −12 V with set and clear buttons (each pulled down to the bias rail
 * through 100 kΩ), 5 % parts and a required margin of 1 V: the arrangement of the bench
 * figures, as a builder would draw it.
 */
export const buttonLatchText = (tube: string, screen: string, load: string, divider: string) => `rail bp = 24 V tol 5 %
rail bias = -12 V tol 5 %
defaults { tube = "${tube}", tolerance = 5 %, margin = 1 V }
button SET (set, bp)
resistor RS (set, bias) 100 k
button CLR (clr, bp)
resistor RC (clr, bias) 100 k
stage q  { load ${load} to bp; ${screen} input nq series ${divider} pulldown ${divider} to bias; input clr series ${divider} pulldown ${divider} to bias }
stage nq { load ${load} to bp; ${screen} input q  series ${divider} pulldown ${divider} to bias; input set series ${divider} pulldown ${divider} to bias }`;

/** An input net with one button to the plate rail and one to ground (rails with tolerance `tol`), feeding one stage. */
export const twoRailButtonsText = (tol: string) => `rail hv = 100 V${tol}
rail neg = -50 V${tol}
defaults { tube = "6AU6" }
button UP (n, hv)
button DOWN (n, gnd)
resistor RN (n, neg) 100 k
stage a { load 47 k to hv; screen hv; input n series 470 k pulldown 390 k to neg }`;

/**
 * A toggle binary (a test design of our own): two cross-coupled triodes with speed-up
 * capacitors, a negative trigger from CLK through capacitor CT onto a steering node held at
 * the supply, and a diode from each plate to it, so the trigger pulls down the high plate.
 */
export const toggleBinaryText = (ct: string): string => `type T like "12AU7" { spread = 30 % }
rail hv = 150 V tol 5 %
rail neg = -75 V tol 5 %
resistor LA (hv, a) 47 k
resistor LB (hv, b) 47 k
section VA T (a, ga, gnd)
section VB T (b, gb, gnd)
resistor SA (b, ga) 470 k
resistor PA (ga, neg) 390 k
resistor SB (a, gb) 470 k
resistor PB (gb, neg) 390 k
capacitor KA (b, ga) 47 pF
capacitor KB (a, gb) 47 pF
drive CLK (t) 150 V source 1 k
capacitor CT (t, s) ${ct}
resistor RS (s, hv) 100 k
diode DA (a, s)
diode DB (b, s)`;
