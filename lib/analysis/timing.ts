import { GROUND, type Design } from '../design/model.js';
import type { StageGraph } from '../graph/stageGraph.js';
import { logicThreshold } from '../solve/operatingPoint.js';
import type { TransientResult } from '../solve/transient.js';
import { highest, lowest } from '../lists.js';

/** One crossing of a net's logic threshold. */
interface Crossing {
  time: number;
  rising: boolean;
}

/** How far the search for the nets that can set a stage off may wander through internal nodes. */
const MAX_CAUSE_SEARCH = 256;

/**
 * For every stage, the logic nets that can set it off: those reached from its output net
 * and its sections' grids through resistors, capacitors and diodes, without passing
 * another logic net or a rail. The stage graph's edges (a net feeding a grid through its
 * divider) are among them; so is a trigger that reaches a latch's plates through a
 * capacitor and steering diodes, which the stage graph, built for DC, does not follow.
 */
export function causeNets(design: Design, graph: StageGraph): Map<string, string[]> {
  const logic = new Set(graph.nets.map((n) => n.name));
  const fixed = new Set<string>([GROUND, ...design.rails.map((r) => r.name)]);
  const links = new Map<string, string[]>();
  const link = (a: string, b: string) => {
    (links.get(a) ?? links.set(a, []).get(a)!).push(b);
    (links.get(b) ?? links.set(b, []).get(b)!).push(a);
  };
  for (const p of design.parts) {
    if (p.type === 'resistor' || p.type === 'capacitor') link(p.a, p.b);
    else if (p.type === 'diode') link(p.anode, p.cathode);
  }
  const grids = new Map<string, string[]>();
  for (const p of design.parts) if (p.type === 'tube') (grids.get(p.plate) ?? grids.set(p.plate, []).get(p.plate)!).push(p.grid);
  const out = new Map<string, string[]>();
  for (const net of graph.nets) {
    if (net.kind !== 'stage') continue;
    const found = new Set<string>();
    const seen = new Set<string>([net.name]);
    const queue = [net.name, ...(grids.get(net.name) ?? [])];
    for (const g of queue) seen.add(g);
    while (queue.length > 0 && seen.size < MAX_CAUSE_SEARCH) {
      const at = queue.shift()!;
      for (const next of links.get(at) ?? []) {
        if (seen.has(next) || fixed.has(next)) continue;
        seen.add(next);
        if (logic.has(next)) found.add(next);
        else queue.push(next);
      }
    }
    for (const p of (graph.graph.predecessors(net.name) ?? []) as string[]) found.add(p);
    found.delete(net.name);
    out.set(net.name, [...found]);
  }
  return out;
}

/** How one stage switched during a simulation. */
export interface StageTiming {
  /** The stage's output net. */
  stage: string;
  /** Threshold crossings of its output. */
  transitions: number;
  /** The longest propagation delay: from the last crossing of one of its input nets to its output's crossing (seconds), and which input. */
  delay?: { seconds: number; from: string; at: number };
  /** The slowest rise and fall, 10 % to 90 % of the swing the net makes in the run (seconds). */
  rise?: number;
  fall?: number;
}

/** Times at which a sampled signal crosses `level`, linearly interpolated. */
function crossings(times: readonly number[], v: Float64Array, level: number): Crossing[] {
  const out: Crossing[] = [];
  for (let i = 1; i < v.length; i++) {
    const a = v[i - 1]! - level;
    const b = v[i]! - level;
    if ((a < 0 && b >= 0) || (a >= 0 && b < 0)) out.push({ time: times[i - 1]! + ((times[i]! - times[i - 1]!) * a) / (a - b), rising: b >= 0 });
  }
  return out;
}

/** The time `v` passes `level` between indices `from` and `to` (searching forward, or backward from `to` when `last`). */
function passes(times: readonly number[], v: Float64Array, level: number, from: number, to: number, last: boolean): number | undefined {
  const at = (j: number) => times[j - 1]! + ((times[j]! - times[j - 1]!) * (level - v[j - 1]!)) / (v[j]! - v[j - 1]!);
  const hit = (j: number) => v[j - 1]! !== v[j]! && (v[j - 1]! - level) * (v[j]! - level) <= 0;
  if (last) {
    for (let j = to; j > from; j--) if (hit(j)) return at(j);
  } else for (let j = from + 1; j <= to; j++) if (hit(j)) return at(j);
  return undefined;
}

/** The first index at or after time t. */
function indexAt(times: readonly number[], t: number): number {
  let lo = 0;
  let hi = times.length - 1;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (times[mid]! < t) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/**
 * Propagation delay and transition times of every stage in a simulation. A net's
 * transition is a crossing of its logic threshold (half its pull-up rail, as everywhere);
 * its delay is measured from the latest crossing before it of a net that can set it off
 * (`causeNets`) or of a driven input (`triggers`, each at the midpoint of its own swing). Rise and fall run from 10 % to 90 % of
 * the step between the levels the net settles at on either side: each read halfway to its
 * neighbouring transitions (or the ends of the run). Stages that never switch are left out.
 */
export function stageTimings(design: Design, graph: StageGraph, run: TransientResult, triggers: readonly string[] = []): StageTiming[] {
  const times = run.times;
  const cache = new Map<string, Crossing[]>();
  const crossed = (net: string, level?: number): Crossing[] => {
    let c = cache.get(net);
    if (!c) {
      const v = run.volts(net);
      c = v ? crossings(times, v, level ?? logicThreshold(design, net)) : [];
      cache.set(net, c);
    }
    return c;
  };
  for (const net of triggers) {
    const v = run.volts(net);
    if (v) crossed(net, (lowest(v) + highest(v)) / 2);
  }
  const out: StageTiming[] = [];
  const end = times[times.length - 1]!;
  const coupled = causeNets(design, graph);
  for (const net of graph.nets) {
    if (net.kind !== 'stage') continue;
    const own = crossed(net.name);
    if (own.length === 0) continue;
    const v = run.volts(net.name)!;
    const causes = [...new Set([...(coupled.get(net.name) ?? []), ...triggers])].filter((n) => n !== net.name);
    const timing: StageTiming = { stage: net.name, transitions: own.length };
    own.forEach((c, k) => {
      let from: { net: string; time: number } | undefined;
      for (const input of causes) {
        for (const ic of crossed(input)) if (ic.time < c.time && (!from || ic.time > from.time)) from = { net: input, time: ic.time };
      }
      if (from && (!timing.delay || c.time - from.time > timing.delay.seconds)) timing.delay = { seconds: c.time - from.time, from: from.net, at: c.time };
      const prev = k > 0 ? own[k - 1]!.time : 0;
      const next = k + 1 < own.length ? own[k + 1]!.time : end;
      const iBefore = indexAt(times, (prev + c.time) / 2);
      const iAfter = Math.min(times.length - 1, indexAt(times, (c.time + next) / 2));
      const before = v[iBefore]!;
      const after = v[iAfter]!;
      const i = indexAt(times, c.time);
      const start = passes(times, v, before + 0.1 * (after - before), iBefore, i, true);
      const finish = passes(times, v, before + 0.9 * (after - before), Math.max(iBefore, i - 1), iAfter, false);
      if (start === undefined || finish === undefined) return;
      if (c.rising) timing.rise = Math.max(timing.rise ?? 0, finish - start);
      else timing.fall = Math.max(timing.fall ?? 0, finish - start);
    });
    out.push(timing);
  }
  return out;
}

/** The logic state of `nets` at time `t` of a run (the last point at or before it). */
export function statesAt(design: Design, run: TransientResult, nets: readonly string[], t: number): boolean[] {
  const first = indexAt(run.times, t);
  const i = run.times[first]! > t && first > 0 ? first - 1 : first;
  return nets.map((net) => run.volts(net)![i]! > logicThreshold(design, net));
}
