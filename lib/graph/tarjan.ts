import type { Graph } from '@dagrejs/graphlib';

/**
 * The strongly connected components of a directed graph, by Tarjan's algorithm
 * (R. Tarjan, "Depth-first search and linear graph algorithms", SIAM J. Computing 1972),
 * written with an explicit stack. graphlib's own `alg.tarjan` recurses once per node and
 * overflows the call stack on a ring of a few thousand stages, which a long shift register
 * is; this version gives the same components (a test compares them) at any size.
 *
 * Components come out in the order Tarjan's algorithm finds them (each after every
 * component it reaches); nodes within one are in stack order.
 *
 * Example: for edges a→b, b→a, b→c it returns `[['c'], ['b', 'a']]`.
 */
export function stronglyConnected(graph: Graph): string[][] {
  const index = new Map<string, number>();
  const low = new Map<string, number>();
  const onStack = new Set<string>();
  const stack: string[] = [];
  const out: string[][] = [];
  let counter = 0;
  for (const root of graph.nodes()) {
    if (index.has(root)) continue;
    // Each frame: a node and the successors still to visit.
    const frames: { node: string; next: string[]; i: number }[] = [];
    const enter = (node: string) => {
      index.set(node, counter);
      low.set(node, counter);
      counter++;
      stack.push(node);
      onStack.add(node);
      frames.push({ node, next: graph.successors(node) ?? [], i: 0 });
    };
    enter(root);
    while (frames.length > 0) {
      const frame = frames[frames.length - 1]!;
      if (frame.i < frame.next.length) {
        const w = frame.next[frame.i++]!;
        if (!index.has(w)) enter(w);
        else if (onStack.has(w)) low.set(frame.node, Math.min(low.get(frame.node)!, index.get(w)!));
        continue;
      }
      frames.pop();
      const v = frame.node;
      const parent = frames[frames.length - 1];
      if (parent) low.set(parent.node, Math.min(low.get(parent.node)!, low.get(v)!));
      if (low.get(v) === index.get(v)) {
        const component: string[] = [];
        let w: string;
        do {
          w = stack.pop()!;
          onStack.delete(w);
          component.push(w);
        } while (w !== v);
        out.push(component);
      }
    }
  }
  return out;
}
