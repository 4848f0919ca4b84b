import { describe, expect, it } from 'vitest';
import { buildStageGraph, compareNames, loadDesign } from '../../lib/index.js';
import { design, memoryLoader, netsFiles, withoutSpans } from '../helpers.js';

const HEADER = `rail bp = 24 V
rail bias = -12 V
type LT koren-triode { mu = 21.5, ex = 1.3, kg1 = 1180, kp = 84, kvb = 300 }
defaults { tube = LT }
`;

const summary = (text: string) => {
  const g = buildStageGraph(design(text));
  return { loops: g.loops, nets: g.nets.map((n) => `${n.name}:${n.kind}:${n.drivers.length}:${n.fanout}`) };
};

describe('the stage graph', () => {
  it('finds a cross-coupled pair as a latch, with the inputs that set and clear it', () => {
    const s = summary(`${HEADER}
stage q  { load 33 k to bp; input nq series 220 k pulldown 220 k to bias; input clr series 220 k pulldown 220 k to bias }
stage nq { load 33 k to bp; input q  series 220 k pulldown 220 k to bias; input set series 220 k pulldown 220 k to bias }
drive C (clr) -12 V
drive S (set) -12 V`);
    expect(s.loops).toEqual([{ kind: 'latch', nets: ['nq', 'q'] }]);
    expect(s.nets).toEqual(['clr:input:0:1', 'nq:stage:2:1', 'q:stage:2:1', 'set:input:0:1']);
  });

  it('gives the same graph for a stage written with sugar and the same circuit written part by part', () => {
    const sugar = buildStageGraph(design(`${HEADER}
stage a { load 33 k to bp; input b series 220 k pulldown 220 k to bias }
stage b { load 33 k to bp; input a series 220 k pulldown 220 k to bias }`));
    const raw = buildStageGraph(design(`${HEADER}
resistor RA (a, bp) 33 k
resistor SA (b, ga) 220 k
resistor PA (ga, bias) 220 k
section VA LT (a, ga, gnd)
resistor RB (b, bp) 33 k
resistor SB (a, gb) 220 k
resistor PB (gb, bias) 220 k
section VB LT (b, gb, gnd)`));
    expect(raw.loops).toEqual(sugar.loops);
    expect(raw.nets.map((n) => [n.name, n.fanout])).toEqual(sugar.nets.map((n) => [n.name, n.fanout]));
    expect(raw.graph.edges()).toEqual(sugar.graph.edges());
  });

  it('finds a ring of ten inverters as one loop and no latch', () => {
    const s = summary(`${HEADER}
block inv (a, y) { stage y { load 33 k to bp; input a series 220 k pulldown 220 k to bias } }
instance r[i in 0..9] of inv (a: o[(i + 9) mod 10], y: o[i])`);
    expect(s.loops).toEqual([{ kind: 'loop', nets: ['o[0]', 'o[1]', 'o[2]', 'o[3]', 'o[4]', 'o[5]', 'o[6]', 'o[7]', 'o[8]', 'o[9]'] }]);
  });

  it('counts fan-out per net and finds no loop in a chain', () => {
    const s = summary(`${HEADER}
stage a { load 33 k to bp; input x series 220 k pulldown 220 k to bias }
stage b { load 33 k to bp; input a series 220 k pulldown 220 k to bias }
stage c { load 33 k to bp; input a series 220 k pulldown 220 k to bias; input b series 220 k pulldown 220 k to bias }
drive X (x) 0 V`);
    expect(s.loops).toEqual([]);
    expect(s.nets).toEqual(['a:stage:1:2', 'b:stage:1:1', 'c:stage:2:0', 'x:input:0:1']);
  });

  it('takes a grid tied straight to a rail as fed by nothing, not by every plate loaded to that rail', () => {
    // A rail is a fixed voltage (Kirchhoff: an ideal source's node does not move with the
    // currents into it), so no plate reaches a grid through it. Searching from the rail
    // once made each of a thousand plates a feeder of such a grid: false loops, and a
    // check that re-solved the wide stage for each of them (a 48 s check, a 282 s sweep).
    const s = summary(`${HEADER}
stage a { load 33 k to bp; input x series 220 k pulldown 220 k to bias; input bp direct }
stage b { load 33 k to bp; input a series 220 k pulldown 220 k to bias }
stage c { load 33 k to bp; input a series 220 k pulldown 220 k to bias }
drive X (x) 0 V`);
    expect(s.loops).toEqual([]);
    expect(s.nets).toEqual(['a:stage:2:2', 'b:stage:1:0', 'c:stage:1:0', 'x:input:0:1']);
  });

  it('follows a diode gate to the nets behind it, and takes a follower’s cathode as its output', () => {
    const g = buildStageGraph(design(`${HEADER}
stage a { load 33 k to bp; input x direct }
stage b { load 33 k to bp; input x direct }
diode DA (a, j)
diode DB (b, j)
resistor RJ (j, g) 100 k
resistor RP (g, bias) 100 k
section VF LT (plate: bp, grid: g, cathode: out)
resistor RK (out, bias) 47 k
resistor RX (x, bias) 100 k
switch SX (x, bp) open`));
    expect(g.nets.find((n) => n.name === 'a')?.receivers).toEqual([{ section: 'VF', grid: 'g', output: 'out' }]);
    expect(g.graph.edges().map((e) => `${e.v}->${e.w}`).sort()).toEqual(['a->out', 'b->out', 'x->a', 'x->b']);
    expect(g.nets.find((n) => n.name === 'x')?.kind).toBe('input');
  });

  it('finds every latch of the crate-tally ring counter and the one loop holding them all', () => {
    const files = netsFiles();
    const r = loadDesign('nets/crate-tally.tube', files['nets/crate-tally.tube']!, { loader: memoryLoader(files) });
    const g = buildStageGraph(r.design!);
    expect(g.loops.filter((l) => l.kind === 'latch')).toHaveLength(20);
    const loops = g.loops.filter((l) => l.kind === 'loop');
    expect(loops).toHaveLength(1);
    expect(loops[0]?.nets).toHaveLength(80);
    expect(withoutSpans(g.nets.find((n) => n.name === 'pa_n'))).toMatchObject({ kind: 'input', fanout: 20 });
  });

  it('orders names with their numbers compared as numbers', () => {
    expect(['q[10]', 'q[2]', 'p', 'q[1]'].sort(compareNames)).toEqual(['p', 'q[1]', 'q[2]', 'q[10]']);
  });
});

describe('strongly connected components', () => {
  it('equal graphlib’s own Tarjan on random graphs (graphlib as the oracle)', async () => {
    const fc = (await import('fast-check')).default;
    const { Graph, alg } = await import('@dagrejs/graphlib');
    const { stronglyConnected } = await import('../../lib/index.js');
    const norm = (cs: string[][]) => cs.map((c) => [...c].sort().join(',')).sort();
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 40 }), fc.array(fc.tuple(fc.nat(), fc.nat()), { maxLength: 120 }), (n, edges) => {
        const g = new Graph({ directed: true });
        for (let i = 0; i < n; i++) g.setNode(`n${i}`);
        for (const [a, b] of edges) g.setEdge(`n${a % n}`, `n${b % n}`);
        expect(norm(stronglyConnected(g))).toEqual(norm(alg.tarjan(g)));
      }),
      { numRuns: 500, seed: 7 },
    );
  });

  it('handles a ring of 200,000 nodes, where a recursive search overflows the stack', async () => {
    const { Graph } = await import('@dagrejs/graphlib');
    const { stronglyConnected } = await import('../../lib/index.js');
    const g = new Graph({ directed: true });
    const n = 200_000;
    for (let i = 0; i < n; i++) g.setEdge(`n${i}`, `n${(i + 1) % n}`);
    const cs = stronglyConnected(g);
    expect(cs).toHaveLength(1);
    expect(cs[0]).toHaveLength(n);
  });
});
