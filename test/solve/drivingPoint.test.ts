import { describe, expect, it } from 'vitest';
import { solveOperatingPoint, type OperatingPoint, type NewtonSettings } from '../../lib/index.js';
import { design } from '../helpers.js';

function solve(src: string, hints: { net: string; high: boolean }[] = []): OperatingPoint {
  const op = solveOperatingPoint(design(src), { hints });
  if (!('nodes' in op)) throw new Error(op.diagnostics.map((x) => x.message).join('; '));
  return op;
}
const settings: NewtonSettings = { gmin: 1e-12, sourceScale: 1, maxStep: 1, maxIterations: 200 };
const terminal = (op: OperatingPoint, net: string) => op.system.circuit.terminalOf.get(net)!;

const LATCH = `rail bp = 24 V
rail bias = -12 V
defaults { tube = "6AU6" }
stage q  { load 33 k to bp; screen bp; input nq series 220 k pulldown 220 k to bias }
stage nq { load 33 k to bp; screen bp; input q  series 220 k pulldown 220 k to bias }`;

describe('the resistance seen into a node (drivingPointOhms)', () => {
  it('is the Thevenin resistance of a divider, R1·R2/(R1 + R2) (Thevenin\'s theorem)', () => {
    const op = solve(`rail bp = 24 V
rail bias = -12 V
defaults { tube = "6AU6" }
drive IN (x) -12 V
stage a { load 47 k to bp; screen bp; input x series 100 k pulldown 150 k to bias }`);
    // a's grid is cut off (its input sits at the bias rail), so the plate sees its 47 k load
    // in parallel with nothing, and the grid node sees 100 k ∥ 150 k = 60 k.
    const [plate, grid] = op.system.drivingPointOhms(op.x, [terminal(op, 'a'), terminal(op, 'a.g1')], settings)!;
    expect(grid).toBeCloseTo(60e3, -1);
    expect(plate).toBeGreaterThan(46e3);
    expect(plate).toBeLessThan(47e3 + 1);
  });

  it('is positive at both nets of a latch in either state, and negative at its metastable point (a loop gain above one: Cramer\'s rule)', () => {
    const one = solve(LATCH, [{ net: 'q', high: true }]);
    const zero = solve(LATCH, [{ net: 'q', high: false }]);
    const nets = [terminal(one, 'q'), terminal(one, 'nq')];
    for (const op of [one, zero]) for (const z of op.system.drivingPointOhms(op.x, nets, settings)!) expect(z).toBeGreaterThan(0);
    // The two states are mirror images, so their mean is symmetric; Newton from a symmetric
    // start keeps the symmetry and lands on the symmetric solution, the metastable point.
    const x = one.x.map((v, i) => (v + zero.x[i]!) / 2);
    expect(one.system.newton(x, settings).converged).toBe(true);
    expect(Math.abs(x[nets[0]!]! - x[nets[1]!]!)).toBeLessThan(1e-6);
    for (const z of one.system.drivingPointOhms(x, nets, settings)!) expect(z).toBeLessThan(0);
  });
});
