import { Graph } from '@dagrejs/graphlib';
import { GROUND, type Design, type TubeSection } from '../design/model.js';
import { stronglyConnected } from './tarjan.js';

/** One grid a net feeds. */
export interface Receiver {
  /** The receiving tube section. */
  section: string;
  /** Its grid node. */
  grid: string;
  /** The net that section drives (its plate, or its cathode when a follower). */
  output: string | undefined;
}

/** What the graph knows of one logic net. */
export interface NetNode {
  name: string;
  /** 'stage': driven by tube sections; 'input': set from outside (a drive or a switch to a rail). */
  kind: 'stage' | 'input';
  /** Sections whose output this net is (several sections on one plate load make a NOR). */
  drivers: string[];
  /** Grids this net feeds, directly or through resistors and diodes. */
  receivers: Receiver[];
  /** Number of grids fed. */
  fanout: number;
}

/** A strongly connected set of nets. */
export interface Loop {
  /**
   * 'latch': two nets each feeding the other (a cross-coupled pair), wherever it sits;
   * 'loop': a strongly connected set of more than two nets (a ring, a counter), or a net
   * feeding itself. A ring of latches gives each latch and the one loop holding them all.
   */
  kind: 'latch' | 'loop';
  nets: string[];
}

export interface StageGraph {
  /** Directed graph over logic nets: an edge from each driving net to each net whose section's grid it feeds. */
  graph: Graph;
  /** Logic nets in name order. */
  nets: NetNode[];
  loops: Loop[];
}

/** How far the search from a grid back to the nets feeding it may wander through internal nodes. */
const MAX_FEED_SEARCH = 256;

/**
 * Builds the stage graph of a flat design from its topology alone, so a design written with
 * `stage` sugar and the same circuit written part by part give the same graph.
 *
 * A section's output is its plate, or its cathode when the plate goes straight to a rail (a
 * cathode follower). The nets feeding a grid are found by walking from the grid through
 * resistors and diodes, across internal nodes (divider taps, diode-gate junctions), until a
 * section output or an input net is reached; rails end the walk. Loops are the strongly
 * connected components (Tarjan's algorithm over the graphlib graph); inside each, every pair of
 * nets feeding each other is a latch.
 *
 * Example: two stages whose inputs come from each other's plates give one loop
 * `{ kind: 'latch', nets: ['nq', 'q'] }`.
 */
export function buildStageGraph(design: Design): StageGraph {
  const fixed = new Set<string>([GROUND, ...design.rails.map((r) => r.name)]);
  const sections = design.parts.filter((p): p is TubeSection => p.type === 'tube');
  const outputOf = new Map<string, string | undefined>();
  const driven = new Map<string, string[]>();
  for (const s of sections) {
    const out = !fixed.has(s.plate) ? s.plate : !fixed.has(s.cathode) ? s.cathode : undefined;
    outputOf.set(s.name, out);
    if (out !== undefined) {
      const list = driven.get(out) ?? [];
      list.push(s.name);
      driven.set(out, list);
    }
  }
  const inputs = new Set<string>();
  for (const p of design.parts) {
    if (p.type === 'drive' && !fixed.has(p.node)) inputs.add(p.node);
    if (p.type === 'switch') {
      if (fixed.has(p.a) && !fixed.has(p.b)) inputs.add(p.b);
      if (fixed.has(p.b) && !fixed.has(p.a)) inputs.add(p.a);
    }
  }
  for (const n of driven.keys()) inputs.delete(n);
  const isLogic = (n: string) => driven.has(n) || inputs.has(n);

  // Neighbours through DC coupling elements that carry a signal forward.
  const links = new Map<string, string[]>();
  const link = (a: string, b: string) => {
    (links.get(a) ?? links.set(a, []).get(a)!).push(b);
    (links.get(b) ?? links.set(b, []).get(b)!).push(a);
  };
  for (const p of design.parts) {
    if (p.type === 'resistor') link(p.a, p.b);
    else if (p.type === 'diode') link(p.anode, p.cathode);
  }

  const feeders = (grid: string): string[] => {
    if (isLogic(grid)) return [grid];
    // A grid tied straight to a rail or ground reads a fixed voltage: the plates loaded to
    // that rail do not feed it (searching from the rail would find every one of them).
    if (fixed.has(grid)) return [];
    const found = new Set<string>();
    const seen = new Set<string>([grid]);
    const queue = [grid];
    while (queue.length > 0 && seen.size < MAX_FEED_SEARCH) {
      const node = queue.shift()!;
      for (const next of links.get(node) ?? []) {
        if (seen.has(next) || fixed.has(next)) continue;
        seen.add(next);
        if (isLogic(next)) found.add(next);
        else queue.push(next);
      }
    }
    return [...found].sort();
  };

  const graph = new Graph({ directed: true });
  const nodes = new Map<string, NetNode>();
  const nodeFor = (name: string): NetNode => {
    let n = nodes.get(name);
    if (!n) {
      n = { name, kind: driven.has(name) ? 'stage' : 'input', drivers: driven.get(name) ?? [], receivers: [], fanout: 0 };
      nodes.set(name, n);
      graph.setNode(name);
    }
    return n;
  };
  for (const name of [...driven.keys(), ...inputs]) nodeFor(name);
  for (const s of sections) {
    const output = outputOf.get(s.name);
    for (const from of feeders(s.grid)) {
      nodeFor(from).receivers.push({ section: s.name, grid: s.grid, output });
      if (output !== undefined) graph.setEdge(from, output);
    }
  }
  for (const n of nodes.values()) n.fanout = new Set(n.receivers.map((r) => r.section)).size;

  const loops: Loop[] = [];
  for (const component of stronglyConnected(graph)) {
    const nets = [...component].sort(compareNames);
    const members = new Set(nets);
    // Every cross-coupled pair is a latch, also where it sits inside a larger loop (a ring
    // counter of latches is one strongly connected component holding every latch).
    for (const a of nets) {
      for (const b of graph.successors(a) ?? []) {
        if (members.has(b) && compareNames(a, b) < 0 && graph.hasEdge(b, a)) loops.push({ kind: 'latch', nets: [a, b] });
      }
    }
    if (nets.length > 2 || (nets.length === 1 && graph.hasEdge(nets[0] as string, nets[0] as string))) loops.push({ kind: 'loop', nets });
  }
  loops.sort((x, y) => (x.kind === y.kind ? compareNames(x.nets[0] as string, y.nets[0] as string) : x.kind === 'latch' ? -1 : 1));
  const nets = [...nodes.values()].sort((x, y) => compareNames(x.name, y.name));
  return { graph, nets, loops };
}

/**
 * Name order with numbers compared as numbers (`q[2]` before `q[10]`), independent of the
 * machine's locale.
 */
export function compareNames(a: string, b: string): number {
  const pa = a.split(/(\d+)/);
  const pb = b.split(/(\d+)/);
  for (let i = 0; i < Math.min(pa.length, pb.length); i++) {
    const x = pa[i] as string;
    const y = pb[i] as string;
    if (x === y) continue;
    if (i % 2 === 1) {
      const d = Number(x) - Number(y);
      if (d !== 0) return d;
    }
    return x < y ? -1 : 1;
  }
  return pa.length - pb.length;
}
