import type { Part } from '../design/model.js';
import type { LevelChain } from './levelChain.js';

/** One standard load: the input divider and grid of the design's most common receiving input. */
export interface StandardLoad {
  seriesOhms: number;
  seriesTol: number;
  pulldownOhms: number;
  pulldownTol: number;
  /** The rail the pull-down returns to. */
  pulldownRail: string;
  model: string;
  /** The receiving section's cathode (a fixed net). */
  cathode: string;
  /** How many inputs of the design are of this kind. */
  count: number;
}

/**
 * The design's standard load: the most common receiving input among those fed through a
 * plain divider (a series resistor from the driving net to the grid, a pull-down from the
 * grid to a rail) into a section whose cathode sits on a rail or ground. Undefined when
 * no input is of that shape.
 */
export function standardLoad(chain: LevelChain): StandardLoad | undefined {
  const { index } = chain;
  const kinds = new Map<string, StandardLoad>();
  for (const n of chain.index.graph.nets) {
    for (const r of n.receivers) {
      const s = index.sections.get(r.section)!;
      if (!index.fixed.has(s.cathode) || index.fixed.has(r.grid) || index.logic.has(r.grid)) continue;
      const at = (index.partsAt.get(r.grid) ?? []).map((i) => index.design.parts[i]!).filter((p) => p.type === 'resistor');
      if (at.length !== 2) continue;
      const other = (p: Part) => (p.type === 'resistor' ? (p.a === r.grid ? p.b : p.a) : '');
      const series = at.find((p) => other(p) === n.name);
      const pull = at.find((p) => index.fixed.has(other(p)));
      if (!series || !pull || series.type !== 'resistor' || pull.type !== 'resistor') continue;
      const load = { seriesOhms: series.ohms, seriesTol: series.tol, pulldownOhms: pull.ohms, pulldownTol: pull.tol, pulldownRail: other(pull), model: s.model, cathode: s.cathode, count: 0 };
      const key = `${load.seriesOhms}/${load.seriesTol}/${load.pulldownOhms}/${load.pulldownTol}/${load.pulldownRail}/${load.model}/${load.cathode}`;
      const have = kinds.get(key) ?? kinds.set(key, load).get(key)!;
      have.count++;
    }
  }
  return [...kinds.values()].sort((a, b) => b.count - a.count)[0];
}

/** Largest number of extra loads probed. */
export const MAX_EXTRA_LOADS = 32;

/**
 * Fan-out headroom: how many more standard loads a net can feed before its worst-case
 * noise margin (against the thresholds given: the lowest VIL and highest VIH of the
 * inputs it feeds) drops below `required`. Each probe adds that many loads to the net's
 * local region and solves its worst-case levels again with its inputs where the chain
 * left them; the count is found by doubling and then bisection, up to 32. Zero when the
 * net already misses the margin; undefined for nets the chain does not judge.
 */
export function fanoutHeadroom(chain: LevelChain, net: string, load: StandardLoad, thresholds: { vil: number; vih: number }, required: number): number | undefined {
  const n = chain.nets.get(net)!;
  if (n.polarity !== 'inverting' && n.polarity !== 'follower') return undefined;
  const l = chain.levels.get(net)!;
  const cases = chain.casesOf(n);
  const passes = (extra: number): boolean => {
    const parts: Part[] = [];
    for (let j = 0; j < extra; j++) {
      const grid = `fanout:${j}.grid`;
      parts.push({ type: 'resistor', name: `fanout:${j}.series`, a: net, b: grid, ohms: load.seriesOhms, tol: load.seriesTol, watts: 1 });
      parts.push({ type: 'resistor', name: `fanout:${j}.pulldown`, a: grid, b: load.pulldownRail, ohms: load.pulldownOhms, tol: load.pulldownTol, watts: 1 });
      parts.push({ type: 'tube', name: `fanout:${j}.section`, model: load.model, plate: load.cathode, grid, cathode: load.cathode });
    }
    // A probe's regions are asked about once: the chain drops them after (`scratch`).
    return chain.scratch(() => {
      const probe = chain.withParts(n, parts);
      // Case by case: the first that misses the margin decides.
      if (l.canHigh && !cases.high.every((c) => (chain.solveCase(c, probe).worst ?? -Infinity) - thresholds.vih >= required)) return false;
      return !l.canLow || cases.low.every((c) => thresholds.vil - (chain.solveCase(c, probe).worst ?? Infinity) >= required);
    });
  };
  if (!passes(0)) return 0;
  let good = 0;
  let bad = 1;
  while (bad <= MAX_EXTRA_LOADS && passes(bad)) {
    good = bad;
    bad *= 2;
  }
  if (bad > MAX_EXTRA_LOADS) return good;
  while (bad - good > 1) {
    const mid = (good + bad) >> 1;
    if (passes(mid)) good = mid;
    else bad = mid;
  }
  return good;
}
