import { describe, expect, it } from 'vitest';
import { adjointSlopes, applyParameters, designParameters, loadDesign, solveOperatingPoint, type OperatingPoint, type StateHint } from '../../lib/index.js';
import { design, memoryLoader, netsFiles } from '../helpers.js';

function solved(d: Parameters<typeof solveOperatingPoint>[0], options: Parameters<typeof solveOperatingPoint>[1] = {}): OperatingPoint {
  const op = solveOperatingPoint(d, options);
  if (!('nodes' in op)) throw new Error('no solve');
  return op;
}

describe('adjoint sensitivities (Director and Rohrer 1969)', () => {
  const cases: [string, ReturnType<typeof design>, string, StateHint[]][] = [
    [
      'a pentode latch',
      design(`rail bp = 24 V tol 5 %
rail bias = -12 V tol 5 %
defaults { tube = "6AU6", tolerance = 5 % }
stage q  { load 33 k to bp; screen bp; input nq series 220 k pulldown 220 k to bias }
stage nq { load 33 k to bp; screen bp; input q  series 220 k pulldown 220 k to bias }`),
      'nq',
      [{ net: 'q', high: true }],
    ],
  ];
  const files = netsFiles();
  cases.push(['the NOR adder', loadDesign('nets/nor-adder.tube', files['nets/nor-adder.tube']!, { loader: memoryLoader(files) }).design!, 'sum', []]);

  for (const [what, d, net, hints] of cases) {
    it(`equal finite differences of full re-solves for every resistor, rail and section of ${what}`, () => {
      const op = solved(d, { hints });
      const params = designParameters(d);
      const slopes = adjointSlopes(op, net, params)!;
      expect(slopes).toHaveLength(params.length);
      const base = op.nodes.get(net)!;
      params.forEach((p, i) => {
        const h = (p.high - p.low) * 1e-5;
        const moved = applyParameters(d, new Map([[p.id, p.nominal + h]]));
        const fd = (solved(moved.design, { start: op.x, variation: moved.variation }).nodes.get(net)! - base) / h;
        expect(Math.abs(slopes[i]! - fd)).toBeLessThanOrEqual(1e-3 * Math.abs(fd) + 1e-6 / (p.high - p.low));
      });
    });
  }
});
