import { GROUND, partPins, type Design, type Part, type Rail, type TubeModel, type TubeSection } from '../design/model.js';
import type { StageGraph } from '../graph/stageGraph.js';

/**
 * What the local analyses need to know of a design, computed once: which nets are fixed
 * (ground and rails) and which are logic nets, the parts at every net, each logic net's
 * driving sections, and the logic nets feeding each section's grid.
 */
export interface DesignIndex {
  design: Design;
  graph: StageGraph;
  fixed: Set<string>;
  logic: Set<string>;
  /** Part indices at each net; capacitors are left out (open in DC). */
  partsAt: Map<string, number[]>;
  sections: Map<string, TubeSection>;
  /** The sections driving each logic net. */
  driversOf: Map<string, string[]>;
  /** The logic nets feeding each section's grid (through dividers, diodes). */
  feedersOf: Map<string, string[]>;
  /** True for a section whose output is its cathode (a follower: output rises with its grid). */
  follower: Set<string>;
  /** Each part's nets, pin by pin, and its type and values as key text (names left out). */
  pins: string[][];
  signatures: string[];
}

export function indexDesign(design: Design, graph: StageGraph): DesignIndex {
  const fixed = new Set<string>([GROUND, ...design.rails.map((r) => r.name)]);
  const logic = new Set(graph.nets.map((n) => n.name));
  const partsAt = new Map<string, number[]>();
  design.parts.forEach((p, i) => {
    if (p.type === 'capacitor') return;
    for (const [, net] of partPins(p)) {
      const list = partsAt.get(net) ?? partsAt.set(net, []).get(net)!;
      if (list[list.length - 1] !== i) list.push(i);
    }
  });
  const sections = new Map(design.parts.filter((p): p is TubeSection => p.type === 'tube').map((p) => [p.name, p]));
  const driversOf = new Map(graph.nets.map((n) => [n.name, n.drivers]));
  const feedersOf = new Map<string, string[]>();
  for (const n of graph.nets) for (const r of n.receivers) (feedersOf.get(r.section) ?? feedersOf.set(r.section, []).get(r.section)!).push(n.name);
  const follower = new Set<string>();
  for (const s of sections.values()) if (fixed.has(s.plate) && !fixed.has(s.cathode)) follower.add(s.name);
  const pins = design.parts.map((p) => partPins(p).map(([, net]) => net));
  return { design, graph, fixed, logic, partsAt, sections, driversOf, feedersOf, follower, pins, signatures: design.parts.map(signature) };
}

/** A part's type and values as key text: everything about it but its name and wiring. */
function signature(p: Part): string {
  switch (p.type) {
    case 'resistor':
      return `r${p.ohms}/${p.tol}`;
    case 'tube':
      return `t${p.model}${p.screen === undefined ? '' : 's'}`;
    case 'diode':
      return `d${p.is}/${p.n}/${p.rs}`;
    case 'switch':
      return `s${p.closed ? 1 : 0}${p.momentary ? 'm' : ''}`;
    case 'drive':
      return `v${p.volts}/${p.tol}/${p.sourceOhms}`;
    case 'capacitor':
      return '';
  }
}

/**
 * The small circuit around one or more logic nets that a local solve needs: the nets
 * themselves (the targets), every internal node reachable from them through parts
 * (divider taps, grids, cathodes, screens) up to rails and other logic nets, and every
 * part touching those nodes. The other logic nets it reaches are its boundaries: a local
 * solve holds each at a chosen level.
 */
export interface Region {
  targets: string[];
  /** Indices into `design.parts`, ascending, plus any extra parts appended (fan-out probes). */
  parts: Part[];
  /** Logic nets held fixed, in the order they first appear in `parts`. */
  boundaries: string[];
  /** Rails the parts touch, in order of first appearance. */
  rails: Rail[];
  models: TubeModel[];
  /**
   * Everything that determines the local solve except names: topology with nets relabelled
   * in order of appearance, values, tolerances, types, switch states. Two regions with the
   * same key are the same problem, so results found for one serve the other.
   */
  key: string;
}

/** A region larger than this many internal nodes stops growing (a shared screen or cathode node would pull in the whole design). */
const MAX_REGION_NODES = 400;

/**
 * Builds the region of `targets`; `extra` parts (already named and wired) are added to it;
 * switches named in `open` are taken open whatever the design says. A region stops growing
 * at `limit` internal nodes (a region of every logic net, the whole design, sets none).
 */
export function buildRegion(index: DesignIndex, targets: readonly string[], extra: readonly Part[] = [], open?: ReadonlySet<string>, limit = MAX_REGION_NODES): Region {
  const { design, fixed, logic, partsAt } = index;
  const inside = new Set<string>(targets);
  const queue = [...targets];
  const taken: number[] = [];
  const seen = new Set<number>();
  for (let q = 0; q < queue.length; q++) {
    for (const i of partsAt.get(queue[q]!) ?? []) {
      if (seen.has(i)) continue;
      seen.add(i);
      taken.push(i);
      for (const other of index.pins[i]!) {
        if (inside.has(other) || fixed.has(other) || logic.has(other)) continue;
        if (inside.size >= limit + targets.length) continue;
        inside.add(other);
        queue.push(other);
      }
    }
  }
  taken.sort((a, b) => a - b);
  // Relabel nets: targets T0…, boundaries B0…, internal nodes U0…, in order of appearance.
  const label = new Map<string, string>(targets.map((t, i) => [t, `T${i}`]));
  const boundaries: string[] = [];
  const railNames: string[] = [];
  let internal = 0;
  const labelOf = (net: string): string => {
    let l = label.get(net);
    if (l === undefined) {
      if (fixed.has(net)) {
        l = net;
        if (net !== GROUND) railNames.push(net);
      } else if (logic.has(net) && !inside.has(net)) {
        l = `B${boundaries.length}`;
        boundaries.push(net);
      } else l = `U${internal++}`;
      label.set(net, l);
    }
    return l;
  };
  const parts: Part[] = [];
  let key = '';
  const add = (p: Part, pins: readonly string[], sig: string) => {
    const part = p.type === 'switch' && open?.has(p.name) ? { ...p, closed: false } : p;
    parts.push(part);
    if (p.type === 'capacitor') return;
    key += `${part === p ? sig : signature(part)}(`;
    for (const net of pins) key += `${labelOf(net)},`;
    key += ');';
  };
  for (const i of taken) add(design.parts[i]!, index.pins[i]!, index.signatures[i]!);
  for (const p of extra) add(p, partPins(p).map(([, net]) => net), signature(p));
  const railOf = new Map(design.rails.map((r) => [r.name, r]));
  const rails = railNames.map((n) => railOf.get(n)!);
  for (const r of rails) key += `R${r.name}=${r.volts}/${r.tol}/${r.sourceOhms};`;
  const modelNames = new Set(parts.flatMap((p) => (p.type === 'tube' ? [p.model] : [])));
  const models = design.models.filter((m) => modelNames.has(m.name));
  return { targets: [...targets], parts, boundaries, rails, models, key };
}
