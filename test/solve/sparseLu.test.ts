import fc from 'fast-check';
import { lusolve } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { SparseLu } from '../../lib/index.js';

/** Builds a SparseLu for a dense matrix given as rows, stamping its non-zeros. */
function sparseFrom(a: number[][]): SparseLu {
  const n = a.length;
  const rows: number[] = [];
  const cols: number[] = [];
  a.forEach((r, i) => r.forEach((v, j) => v !== 0 && (rows.push(i), cols.push(j))));
  const lu = new SparseLu(n, rows, cols);
  a.forEach((r, i) => r.forEach((v, j) => v !== 0 && (lu.values[lu.position(i, j)] = v)));
  return lu;
}

/** Our solution of a·x = b equals mathjs' `lusolve` within `relative` of the largest component. */
function expectSameAsMathjs(a: number[][], b: number[], relative: number): void {
  const ours = solveSparse(a, b);
  const ref = (lusolve(a, b) as number[][]).map((r) => r[0] as number);
  const scale = Math.max(...ref.map(Math.abs), 1e-30);
  ours.forEach((x, i) => expect(Math.abs(x - ref[i]!)).toBeLessThanOrEqual(relative * scale));
}

const solveSparse = (a: number[][], b: number[]) => {
  const lu = sparseFrom(a);
  expect(lu.factor()).toBe(true);
  const x = new Float64Array(b.length);
  lu.solve(Float64Array.from(b), x);
  return [...x];
};

/** Random resistor networks: nodal conductance matrices of connected networks with some paths to ground. */
const network = fc
  .record({
    n: fc.integer({ min: 1, max: 60 }),
    edges: fc.array(fc.tuple(fc.nat(), fc.nat(), fc.double({ min: 1e-6, max: 1e-2, noNaN: true })), { maxLength: 180 }),
    grounds: fc.array(fc.tuple(fc.nat(), fc.double({ min: 1e-6, max: 1e-2, noNaN: true })), { minLength: 1, maxLength: 10 }),
    currents: fc.array(fc.integer({ min: -1000, max: 1000 }).map((k) => k * 1e-5), { minLength: 60, maxLength: 60 }),
  })
  .map(({ n, edges, grounds, currents }) => {
    const a = Array.from({ length: n }, () => new Array<number>(n).fill(0));
    const stamp = (i: number, j: number, g: number) => {
      a[i]![i]! += g;
      a[j]![j]! += g;
      a[i]![j]! -= g;
      a[j]![i]! -= g;
    };
    for (let i = 1; i < n; i++) stamp(i, i - 1 - ((i * 7) % i), 1e-4); // a spanning tree keeps it connected
    for (const [i, j, g] of edges) if (i % n !== j % n) stamp(i % n, j % n, g);
    for (const [i, g] of grounds) a[i % n]![i % n]! += g;
    const b = currents.slice(0, n);
    b[0] = 1e-3; // a source at node 0, so the solution is never all zero
    return { a, b };
  });

describe('the sparse LU', () => {
  it('solves random resistor networks as mathjs lusolve does, within 1e-9 relative (mathjs as the oracle)', () => {
    fc.assert(
      fc.property(network, ({ a, b }) => expectSameAsMathjs(a, b, 1e-9)),
      { numRuns: 300, seed: 11 },
    );
  });

  it('solves non-symmetric matrices like a tube’s transconductance makes, as mathjs does', () => {
    fc.assert(
      fc.property(network, fc.array(fc.tuple(fc.nat(), fc.nat(), fc.double({ min: -5e-3, max: 5e-3, noNaN: true })), { maxLength: 20 }), ({ a, b }, extra) => {
        const n = a.length;
        for (const [i, j, g] of extra) if (i % n !== j % n) a[i % n]![j % n]! += g * 1e-2;
        expectSameAsMathjs(a, b, 1e-8);
      }),
      { numRuns: 200, seed: 12 },
    );
  });

  it('reuses its symbolic analysis: a second matrix of the same pattern factors into the same slots', () => {
    const lu = sparseFrom([
      [4, 1, 0],
      [1, 3, 1],
      [0, 1, 2],
    ]);
    expect(lu.factor()).toBe(true);
    const slots = lu.size;
    lu.clear();
    lu.values[lu.position(0, 0)] = 2;
    lu.values[lu.position(1, 1)] = 2;
    lu.values[lu.position(2, 2)] = 2;
    expect(lu.factor()).toBe(true);
    const x = new Float64Array(3);
    lu.solve(Float64Array.from([2, 4, 6]), x);
    expect([...x]).toEqual([1, 2, 3]);
    expect(lu.size).toBe(slots);
  });

  it('refuses a singular matrix rather than return garbage', () => {
    const lu = sparseFrom([
      [1, 1, 0],
      [1, 1, 0],
      [0, 0, 1],
    ]);
    expect(lu.factor()).toBe(false);
  });

  it('keeps the fill of a long ladder linear in its length (minimum-degree ordering)', () => {
    const n = 2000;
    const rows: number[] = [];
    const cols: number[] = [];
    for (let i = 0; i < n; i++) {
      rows.push(i);
      cols.push(i);
      if (i > 0) rows.push(i, i - 1), cols.push(i - 1, i);
    }
    rows.push(0, n - 1);
    cols.push(n - 1, 0); // close the ring
    const lu = new SparseLu(n, rows, cols);
    for (let i = 0; i < n; i++) {
      lu.values[lu.position(i, i)] = 3;
      if (i > 0) (lu.values[lu.position(i, i - 1)] = -1), (lu.values[lu.position(i - 1, i)] = -1);
    }
    lu.values[lu.position(0, n - 1)] = -1;
    lu.values[lu.position(n - 1, 0)] = -1;
    expect(lu.factor()).toBe(true);
    expect(lu.size).toBeLessThan(6 * n);
  });
});
