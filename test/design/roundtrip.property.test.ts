import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { designToJson, loadDesign } from '../../lib/index.js';
import { load, withoutSpans } from '../helpers.js';

const MULT = ['', ' k', 'k', ' M', ' kΩ'];
const resistance = fc.tuple(fc.integer({ min: 1, max: 999 }), fc.constantFrom(...MULT)).map(([m, u]) => `${m}${u}`);
const percent = fc.integer({ min: 0, max: 50 }).map((p) => `${p} %`);

interface StageSpec {
  type: number;
  load: string;
  inputs: { from: number; series: string; pulldown: string | undefined; tol: string | undefined }[];
}

/** Random valid designs in the design language: rails, types, stages feeding each other, a block array. */
const designText = fc
  .record({
    rails: fc.uniqueArray(fc.constantFrom('bp', 'hv', 'bias', 'neg', 'aux'), { minLength: 2, maxLength: 4 }),
    volts: fc.array(fc.integer({ min: -250, max: 250 }), { minLength: 4, maxLength: 4 }),
    tols: fc.array(percent, { minLength: 4, maxLength: 4 }),
    types: fc.array(
      fc.record({
        mu: fc.integer({ min: 5, max: 100 }),
        ex: fc.double({ min: 1.1, max: 1.6, noNaN: true }),
        kg1: fc.integer({ min: 100, max: 3000 }),
        spread: percent,
      }),
      { minLength: 1, maxLength: 3 },
    ),
    stages: fc.array(
      fc.record({
        type: fc.nat(),
        load: resistance,
        inputs: fc.array(fc.record({ from: fc.nat(), series: resistance, pulldown: fc.option(resistance, { nil: undefined }), tol: fc.option(percent, { nil: undefined }) }), {
          minLength: 1,
          maxLength: 3,
        }),
      }),
      { minLength: 1, maxLength: 12 },
    ),
    array: fc.integer({ min: 0, max: 5 }),
    defaultsTol: percent,
  })
  .map((r) => {
    const lines: string[] = ['title "random"', `defaults { tolerance = ${r.defaultsTol}, margin = 1 V }`];
    r.rails.forEach((name, i) => lines.push(`rail ${name} = ${r.volts[i]} V tol ${r.tols[i]}`));
    r.types.forEach((t, i) => lines.push(`type T${i} koren-triode { mu = ${t.mu}, ex = ${t.ex}, kg1 = ${t.kg1}, kp = 84, kvb = 300, spread = ${t.spread} }`));
    const top = r.rails[0] as string;
    const bottom = r.rails[r.rails.length - 1] as string;
    r.stages.forEach((s: StageSpec, i) => {
      const items = [`tube T${s.type % r.types.length}`, `load ${s.load} to ${top}`];
      for (const input of s.inputs) {
        const from = `s${input.from % r.stages.length}`;
        items.push(`input ${from} series ${input.series}${input.tol ? ` tol ${input.tol}` : ''}${input.pulldown ? ` pulldown ${input.pulldown} to ${bottom}` : ''}`);
      }
      lines.push(`stage s${i} {\n  ${items.join('\n  ')}\n}`);
    });
    if (r.array > 0) {
      lines.push(`block inv (a, y) {\n  param rl = 10 k\n  stage y { tube T0; load rl to ${top}; input a series 100 k pulldown 100 k to ${bottom} }\n}`);
      lines.push(`instance u[i in 0..${r.array - 1}] of inv (a: s0, y: o[i]) with (rl = 10 k * (i + 1))`);
    }
    return lines.join('\n') + '\n';
  });

describe('random designs (fast-check)', () => {
  it('load without errors and round-trip through the JSON form to an equal model', () => {
    fc.assert(
      fc.property(designText, (text) => {
        const fromText = load(text);
        expect(fromText.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
        const json = JSON.stringify(designToJson(fromText.design!));
        const fromJson = loadDesign('d.json', json, { checkModel: true });
        expect(fromJson.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
        expect(withoutSpans(fromJson.design)).toEqual(withoutSpans(fromText.design));
      }),
      { numRuns: 300, seed: 20261201 },
    );
  });
});
