import type { TuneCandidate, TuneResult } from '../analysis/tune.js';
import type { Design } from '../design/model.js';
import { figure, named, type Figure } from './figure.js';
import { safetyCautions } from './safety.js';

/** One choice of a stage's resistors in `tubemargin.tune/1`: ohms, and what the check says with it. */
export type TuneCandidateJson = {
  load: number;
  series: number;
  pulldown: number;
  weakestNet: string | null;
  weakestNetWhy?: string;
  verdict: TuneCandidate['verdict'];
  loadShare: number | null;
  withinLimits: boolean;
  /** passes (within the limits, slack ≥ 0), short (within the limits, slack < 0) or over limits. */
  outcome: 'passes' | 'short' | 'over limits';
} & Figure<'slack'> &
  Figure<'driveMargin'>;

/** The JSON form of `tune`, `tubemargin.tune/1`. */
export interface TuneJson {
  schema: 'tubemargin.tune/1';
  title: string;
  stage: string;
  series: string;
  evaluated: number;
  present: TuneCandidateJson;
  best: TuneCandidateJson[];
  cautions: string[];
}

/** The words of the text table's last column, for a candidate. */
export function tuneOutcome(c: TuneCandidate): TuneCandidateJson['outcome'] {
  return c.withinLimits ? (c.slack >= 0 ? 'passes' : 'short') : 'over limits';
}

function candidateJson(c: TuneCandidate): TuneCandidateJson {
  return {
    load: c.load,
    series: c.series,
    pulldown: c.pulldown,
    ...figure('slack', c.slack, 'the design with these values could not be checked (it does not solve)'),
    ...named('weakestNet', c.weakestNet, 'no net the stage touches was judged'),
    verdict: c.verdict,
    ...figure('driveMargin', c.driveMargin, 'the stage has no drive margin to judge (it was not checked, or is not an inverting stage)'),
    loadShare: Number.isFinite(c.loadShare) ? c.loadShare : null,
    withinLimits: c.withinLimits,
    outcome: tuneOutcome(c),
  };
}

/** `tune`'s result as `tubemargin.tune/1` JSON: the present values, the best choices found, best first. */
export function tuneToJson(design: Design, stage: string, series: string, r: TuneResult): TuneJson {
  return { schema: 'tubemargin.tune/1', title: design.title, stage, series, evaluated: r.evaluated, present: candidateJson(r.present), best: r.best.map(candidateJson), cautions: safetyCautions(design) };
}
