import { describe, expect, it } from 'vitest';
import { buildStageGraph, checkMargins, loadDesign, type Design } from '../../lib/index.js';
import { generateVariedRegister } from '../../bench/generate.js';

/** IEC 60063 E24 mantissas (from memory): every value the varied register draws is one of these times a power of ten. */
const E24 = [1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1];
const isE24 = (ohms: number) => E24.some((m) => Math.abs(ohms / (m * 10 ** Math.floor(Math.log10(ohms / m))) - 1) < 1e-9);

/** Loads design text that must be free of errors and warnings. */
function loaded(text: string): Design {
  const r = loadDesign('varied.tube', text);
  expect(r.diagnostics.map((d) => `${d.code}: ${d.message}`)).toEqual([]);
  return r.design!;
}

/** Per stage (by output net): its plate load, its inputs' dividers (series/pull-down, ohms) and its number of inputs, from the expanded parts. */
function stagesOf(design: Design): Map<string, { load: number; dividers: [number, number][]; inputs: number }> {
  const stages = new Map<string, { load: number; dividers: [number, number][]; inputs: number }>();
  const of = (net: string) => stages.get(net) ?? stages.set(net, { load: 0, dividers: [], inputs: 0 }).get(net)!;
  // Parts are named `q.s1`, `q.p1`, … by input (docs/LANGUAGE.md, Expanded names).
  const byInput = (name: string) => Number(name.slice(name.lastIndexOf('.') + 2)) - 1;
  for (const p of design.parts) {
    if (!p.stage) continue;
    const s = of(p.stage);
    if (p.type === 'tube') s.inputs++;
    if (p.type !== 'resistor') continue;
    if (p.role === 'load') s.load = p.ohms;
    if (p.role === 'series') (s.dividers[byInput(p.name)] ??= [0, 0])[0] = p.ohms;
    if (p.role === 'pulldown') (s.dividers[byInput(p.name)] ??= [0, 0])[1] = p.ohms;
  }
  return stages;
}

describe('the varied register (bench/generate.ts)', () => {
  it('gives the same text for the same seed and another design for another seed', () => {
    expect(generateVariedRegister(200, 7)).toBe(generateVariedRegister(200, 7));
    expect(generateVariedRegister(200, 8)).not.toBe(generateVariedRegister(200, 7));
  });

  it('has exactly the stages asked for, and they differ: fan-outs 1 to 6, NOR gates of 1 to 3 inputs, E24 values, and over 160 kinds of stage (values and count of inputs) among 200', () => {
    for (const stages of [4, 6, 8, 9, 200, 203]) {
      const graph = buildStageGraph(loaded(generateVariedRegister(stages, 1)));
      expect(graph.nets.filter((n) => n.kind === 'stage').length).toBe(stages);
    }
    const design = loaded(generateVariedRegister(200, 1));
    const graph = buildStageGraph(design);
    const stageNets = graph.nets.filter((n) => n.kind === 'stage');
    expect([...new Set(stageNets.map((n) => n.fanout))].sort()).toEqual([1, 2, 3, 4, 5, 6]);
    const stages = [...stagesOf(design).values()];
    expect(stages.length).toBe(200);
    expect([...new Set(stages.map((s) => s.inputs))].sort()).toEqual([1, 2, 3]);
    const values = stages.flatMap((s) => [s.load, ...s.dividers.flat()]);
    expect(values.filter((v) => !isE24(v))).toEqual([]);
    expect(new Set(stages.map((s) => s.load)).size).toBeGreaterThanOrEqual(10);
    // A stage's values and its count of inputs: the uniform register has one combination for all its stages.
    const kinds = new Set(stages.map((s) => JSON.stringify([s.load, s.dividers, s.inputs])));
    expect(kinds.size).toBeGreaterThan(0.8 * stages.length);
    // Every divider keeps within one preferred step of its nominal ratio, 220 k / 470 k (the design rule that keeps the thresholds put).
    const ratios = stages.flatMap((s) => s.dividers.map(([series, pulldown]) => series / pulldown / (220 / 470)));
    expect(Math.min(...ratios)).toBeGreaterThan(0.9);
    expect(Math.max(...ratios)).toBeLessThan(1.11);
  });

  it('changes only the weak nets and the dividers they feed when weak nets are planted, and says which', () => {
    const plain = generateVariedRegister(200, 1).split('\n');
    const weak = generateVariedRegister(200, 1, { weakNets: 4 }).split('\n');
    const named = /weakened: (.*)\.$/.exec(weak[0]!)![1]!.split(', ');
    expect(named.length).toBe(4);
    const changed = weak.slice(1).filter((line, i) => line !== plain[i + 1]);
    // Each weak net's own stage, its latch partner and its copy gate: three lines at most.
    expect(changed.length).toBeGreaterThanOrEqual(4);
    expect(changed.length).toBeLessThanOrEqual(12);
    for (const line of changed.filter((l) => !l.startsWith('title'))) expect(named.some((net) => line.includes(`stage ${net} `) || line.includes(`input ${net} `))).toBe(true);
  });

  // The tool's own check, not an outside reference: a sanity check that the bench times a
  // design that works, with room, so that its figures are the cost of the bounds alone.
  it('passes the tool\'s own check at 100 stages with every net ok by its bounds and more than 0.5 V of slack (sanity check of the bench, not of check)', () => {
    const design = loaded(generateVariedRegister(100, 1));
    const r = checkMargins(design);
    if (!('verdict' in r)) throw new Error('no verdict');
    expect(r.verdict).toBe('pass');
    expect(r.nets.filter((n) => n.status !== 'pass' || n.basis !== 'bounds').map((n) => n.name)).toEqual([]);
    expect(Math.min(...r.nets.map((n) => n.slack))).toBeGreaterThan(0.5);
  });

  it('plants weak nets whose bounds, and only theirs, fall short of the required margin, by less than 1 V (the tool\'s own bounds, refinement off)', () => {
    const text = generateVariedRegister(40, 1, { weakNets: 3 });
    const named = /weakened: (.*)\.$/.exec(text.split('\n')[0]!)![1]!.split(', ');
    const r = checkMargins(loaded(text), { refine: false });
    if (!('verdict' in r)) throw new Error('no verdict');
    const short = r.nets.filter((n) => n.status !== 'pass');
    expect(short.map((n) => n.name).sort()).toEqual([...named].sort());
    for (const n of short) expect(n.margin.high! - r.requiredMargin).toBeGreaterThan(-1);
  });
});
