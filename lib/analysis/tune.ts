import type { Design, Part, Resistor } from '../design/model.js';
import { preferredValues, type SeriesName } from '../design/preferredValues.js';
import { error, type Diagnostic } from '../source/diagnostic.js';
import type { AgeingScenario } from './ageing.js';
import { checkMargins, type CheckResult } from './check.js';
import { DERATING } from './ratings.js';
import { lowest } from '../lists.js';
import type { Progress } from '../progress.js';

export interface TuneOptions {
  /** The stage (its output net) whose resistors are chosen. */
  stage: string;
  series: SeriesName;
  requiredMargin?: number;
  scenario?: AgeingScenario;
  /** Each value is sought from its present value divided by this to multiplied by it (3 when absent). */
  span?: number;
  /** Told after every candidate of each of the two rounds. */
  onProgress?: Progress;
}

/** One choice of the stage's resistors and what `check` says of the design with it. */
export interface TuneCandidate {
  load: number;
  series: number;
  pulldown: number;
  /** The weakest slack of the nets the stage touches (its own, and those feeding its inputs): smallest margin less the required one (volts; ≥ 0 passes). */
  slack: number;
  weakestNet: string | undefined;
  verdict: CheckResult['verdict'];
  /** The stage's drive margin (volts): its ON grid must reach the cathode. */
  driveMargin: number | undefined;
  /** The plate load's nominal power as a share of its rating (derated to 50 %: at most 0.5). */
  loadShare: number;
  /** Drive margin ≥ 0 and the plate load within half its rating. */
  withinLimits: boolean;
}

export interface TuneResult {
  present: TuneCandidate;
  /** The best choices found, best first: within the limits first, then by slack. */
  best: TuneCandidate[];
  evaluated: number;
}

/**
 * Chooses a stage's plate load, input series resistors and pull-downs from an IEC 60063
 * series to give the nets the stage touches (its own output, and the nets feeding its
 * inputs, which its dividers load and whose margins its thresholds set) the largest
 * worst-case slack (smallest margin less the required one), subject to the stage's drive margin staying at or above 0 and its
 * plate load within half its rating. All the stage's inputs take the same series and
 * pull-down values. Coordinate search: each of the three values in turn is tried at every
 * preferred value within `span` of its present one, the others held, twice round; every
 * choice is judged by a full worst-case `check` (fan-out headroom left out).
 */
export function tuneStage(design: Design, options: TuneOptions): TuneResult | { diagnostics: Diagnostic[] } {
  const parts = design.parts.filter((p): p is Resistor => p.type === 'resistor' && p.stage === options.stage);
  const load = parts.find((p) => p.role === 'load');
  const series = parts.filter((p) => p.role === 'series');
  const pulldowns = parts.filter((p) => p.role === 'pulldown');
  if (!load || series.length === 0 || pulldowns.length === 0) {
    return { diagnostics: [error('tune-stage', `'${options.stage}' is not a stage written with \`stage\` (a plate load and input dividers): tune has nothing to choose`, undefined)] };
  }
  const railOf = new Map(design.rails.map((r) => [r.name, r.volts]));
  const touched = new Set([options.stage, ...series.map((p) => (p.a.startsWith(`${options.stage}.`) ? p.b : p.a))]);
  const loadRail = railOf.get(load.a) ?? railOf.get(load.b) ?? 0;
  const span = options.span ?? 3;
  const seen = new Map<string, TuneCandidate>();
  const evaluate = (l: number, s: number, p: number): TuneCandidate => {
    const key = `${l}|${s}|${p}`;
    const have = seen.get(key);
    if (have) return have;
    const moved: Design = {
      ...design,
      parts: design.parts.map((q): Part => (q === load ? { ...q, ohms: l } : series.includes(q as Resistor) ? { ...(q as Resistor), ohms: s } : pulldowns.includes(q as Resistor) ? { ...(q as Resistor), ohms: p } : q)),
    };
    const r = checkMargins(moved, { requiredMargin: options.requiredMargin, scenario: options.scenario, headroom: false, refine: false });
    const c = candidate(r, options.stage, touched, l, s, p, loadRail, load.watts);
    seen.set(key, c);
    return c;
  };
  const better = (a: TuneCandidate, b: TuneCandidate) => (a.withinLimits !== b.withinLimits ? a.withinLimits : a.slack > b.slack + 1e-9);
  const present = evaluate(load.ohms, series[0]!.ohms, pulldowns[0]!.ohms);
  let current = [load.ohms, series[0]!.ohms, pulldowns[0]!.ohms];
  let bestSoFar = present;
  for (let round = 0; round < 2; round++) {
    // Each value moves only at its own turn, so the round's candidates are known at its start.
    const values = current.map((x) => preferredValues(options.series, x / span, x * span));
    const total = values.reduce((n, vs) => n + vs.length, 0);
    const phase = `round ${round + 1} of 2`;
    let done = 0;
    options.onProgress?.(phase, 0, total);
    for (let k = 0; k < 3; k++) {
      for (const v of values[k]!) {
        const trial = [...current];
        trial[k] = v;
        const c = evaluate(trial[0]!, trial[1]!, trial[2]!);
        options.onProgress?.(phase, ++done, total);
        if (better(c, bestSoFar)) {
          bestSoFar = c;
          current = trial;
        }
      }
    }
  }
  const best = [...seen.values()].sort((a, b) => (better(a, b) ? -1 : better(b, a) ? 1 : 0)).slice(0, 5);
  return { present, best, evaluated: seen.size };
}

function candidate(r: CheckResult | { diagnostics: Diagnostic[] }, stage: string, touched: ReadonlySet<string>, load: number, series: number, pulldown: number, rail: number, watts: number): TuneCandidate {
  if (!('verdict' in r)) return { load, series, pulldown, slack: -Infinity, weakestNet: undefined, verdict: 'fail', driveMargin: undefined, loadShare: Infinity, withinLimits: false };
  const net = r.nets.find((n) => n.name === stage);
  const near = r.nets.filter((n) => touched.has(n.name));
  const slack = lowest(near.map((n) => n.slack));
  const low = net?.low?.nominal ?? 0;
  // The plate load carries the most when the stage is low: (rail − low level)² / R.
  const loadShare = ((rail - low) ** 2 / load) / watts;
  const driveMargin = net?.driveMargin?.volts;
  return {
    load,
    series,
    pulldown,
    slack,
    weakestNet: near.reduce<(typeof near)[number] | undefined>((w, n) => (!w || n.slack < w.slack ? n : w), undefined)?.name,
    verdict: r.verdict,
    driveMargin,
    loadShare,
    withinLimits: (driveMargin === undefined || driveMargin >= 0) && loadShare <= DERATING,
  };
}
