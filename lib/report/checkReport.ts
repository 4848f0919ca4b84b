import { typeLabel } from '../models/library.js';
import { latchSwitchingFails, type CheckResult, type Cause, type NetCheck } from '../analysis/check.js';
import type { Witness } from '../analysis/cornerSearch.js';
import { AGEING_SCENARIOS } from '../analysis/ageing.js';
import type { LatchResult } from '../analysis/latchCheck.js';
import { MAX_EXTRA_LOADS } from '../analysis/fanoutHeadroom.js';
import { CUTOFF_FRACTION } from '../analysis/gridMargins.js';
import type { MonteCarloResult } from '../analysis/monteCarlo.js';
import type { ShrinkResult } from '../analysis/shrink.js';
import { DERATING, type HeaterBudget, type Ratings } from '../analysis/ratings.js';
import type { Design } from '../design/model.js';
import { cutList, formatSI, table, wrap } from './format.js';
import { firstOfEach } from '../lists.js';
import { figure, named, WHY_SUFFIX, type Figure } from './figure.js';
import { safetyCautions } from './safety.js';
import { REPORT_COLUMNS } from './showText.js';
import { append, lowest } from '../lists.js';

/** The JSON form of a check, `tubemargin.report/1`: its own type, not the analysis's. */
export interface ReportJson {
  schema: 'tubemargin.report/1';
  title: string;
  verdict: CheckResult['verdict'];
  requiredMargin: number;
  ageing: { scenario: string; summary: string };
  nets: {
    name: string;
    driver: string;
    fanout: number;
    high: { nominal: number; worst: number } | null;
    highWhy?: string;
    low: { nominal: number; worst: number } | null;
    lowWhy?: string;
    margin: { high: number | null; highWhy?: string; low: number | null; lowWhy?: string };
    cutoffMargin: number | null;
    cutoffMarginWhy?: string;
    driveMargin: number | null;
    driveMarginWhy?: string;
    headroom: number | null;
    headroomWhy?: string;
    /** Each input the net feeds: its worst-case thresholds and the net's noise margins against them. */
    receivers: ({ section: string; stage: string } & Record<'vil' | 'vih' | 'marginHigh' | 'marginLow', number | null> & Partial<Record<'vilWhy' | 'vihWhy' | 'marginHighWhy' | 'marginLowWhy', string>>)[];
    status: NetCheck['status'];
    reasons: string[];
    /** What decided the status: bounds, corners (of the whole design), witness, undecided. */
    basis: NetCheck['basis'];
    /** For a net whose bound failed: the worst levels found at corners of the whole design, beside the bounds. */
    found: { high: number | null; highWhy?: string; low: number | null; lowWhy?: string } | null;
    foundWhy?: string;
    /** A corner where the whole design fails this net: re-solve it with `solve --at`. */
    witness: Witness | null;
    witnessWhy?: string;
    /** How a net whose whole-range bound failed was shown to pass (on halves of the rails' ranges, or at every corner). */
    note: string | null;
    noteWhy?: string;
    causes: { parameter: string; kind: string; end: 'low' | 'high'; value: number; effectVolts: number }[];
  }[];
  latches: {
    nets: [string, string];
    holds: boolean;
    /** How holds was decided: bounds, corners (of the whole design), witness (a corner where a state is lost), undecided. */
    basis: LatchResult['basis'];
    /** The corner where a state is lost, when basis is witness: re-solve it with `solve --at`. */
    witness: Witness | null;
    witnessWhy?: string;
    /** Corners of the whole design solved to decide it. */
    corners: number;
    snm: number | null;
    snmWhy?: string;
    snmNominal: number | null;
    snmNominalWhy?: string;
    switches: boolean | null;
    switchesWhy?: string;
    triggerMargin: number | null;
    triggerMarginWhy?: string;
    inputs: ({ input: string; pulls: string; switches: boolean; note: string | null; noteWhy?: string } & Record<'threshold' | 'triggerMargin', number | null> & Partial<Record<'thresholdWhy' | 'triggerMarginWhy', string>>)[];
    reasons: string[];
  }[];
  /** Present with `--samples`. */
  monteCarlo?: {
    samples: number;
    seed: number;
    distribution: string;
    yield: number;
    interval: [number, number];
    nets: ({ net: string; failures: number } & Record<'min' | 'p1' | 'median', number | null> & Partial<Record<'minWhy' | 'p1Why' | 'medianWhy', string>>)[];
    correlated: { parameter: string; kind: string; correlation: number }[];
    failingSamples: number[];
  };
  /** Ratings and budgets. */
  ratings?: {
    ok: boolean;
    sections: ({ section: string; model: string; plateWatts: number; screenWatts: number; ok: boolean } & Record<'plateRating' | 'screenRating', number | null> & Partial<Record<'plateRatingWhy' | 'screenRatingWhy', string>>)[];
    resistors: ({ resistor: string; rating: number; ok: boolean } & Figure<'watts'> & Figure<'share'>)[];
    rails: ({ rail: string; volts: number } & Record<'amps' | 'watts', number | null> & Partial<Record<'ampsWhy' | 'wattsWhy', string>>)[];
    heaters: { model: string; designation: string; envelopes: number; volts: number; amps: number; strings: { rail: string; perString: number; strings: number; droppingOhms: number; droppingWatts: number }[] }[];
    followers: ({ section: string; ok: boolean } & Record<'volts' | 'rating', number | null> & Partial<Record<'voltsWhy' | 'ratingWhy', string>>)[];
  };
  /** Present with `--shrink`. */
  shrink?: { found: boolean; seed: number; runs: number; shrinks: number; deviations: { parameter: string; kind: string; deviation: number; value: number }[]; failing: string[] };
  definitions: Record<string, string>;
  /** Library types run outside their trusted plate voltages at the nominal operating point: the verdict rests on a model used there. */
  modelRange: string[];
  cautions: string[];
}

/** What each figure of the report means; printed under the text report and carried in the JSON. */
export const DEFINITIONS = {
  worstHigh: 'lowest high level over every tolerance, spread and ageing corner: all drivers cut off, their inputs at the highest low level, every grid the net feeds clamped',
  worstLow: 'highest low level: one driver conducting with its input at the lowest high level and the weakest tube, the others cut off',
  nmHigh: 'NM_H = worst high − the highest VIH of the inputs it feeds (VIH, VIL: unity-gain points of the receiving stage, Hodges and Jackson)',
  nmLow: 'NM_L = the lowest VIL of the inputs it feeds − worst low',
  cutoffMargin: `how far each OFF grid sits below cutoff while the net is high (cutoff: plate current ${CUTOFF_FRACTION * 100} % of its value at Vgk = 0 V, at the same plate and screen voltages)`,
  driveMargin: 'how far the ON input divider would push the grid above the cathode if grid current did not clamp it, at the worst low corner',
  headroom: `how many more standard loads (the design's most common input divider) the net can feed before a noise margin drops below the required one (counted up to ${MAX_EXTRA_LOADS})`,
  snm: 'latch static noise margin: the side of the largest square inside the smaller lobe of the butterfly of its two transfer curves (Seevinck, List, Lohstroh 1987), at the worst pair of corners',
  triggerMargin: 'a set or reset input at its weakest asserted level, minus the level at which the old state stops existing',
} satisfies Record<string, string>;

/**
 * The column each definition explains, headed as the text report's tables head it (the
 * JSON carries the definitions under their own keys), and as the HTML page heads it.
 */
export const DEFINITION_HEADINGS: Record<keyof typeof DEFINITIONS, { text: string; html: string }> = {
  worstHigh: { text: 'high', html: 'worst high' },
  worstLow: { text: 'low', html: 'worst low' },
  nmHigh: { text: 'NM_H', html: 'NM_H' },
  nmLow: { text: 'NM_L', html: 'NM_L' },
  cutoffMargin: { text: 'cutoff', html: 'cutoff' },
  driveMargin: { text: 'drive margin (in --json)', html: 'drive' },
  headroom: { text: 'more', html: 'more loads' },
  snm: { text: 'SNM', html: 'SNM (worst)' },
  triggerMargin: { text: 'trigger', html: 'set and reset inputs' },
};

export const definitionKeys = () => Object.keys(DEFINITIONS) as (keyof typeof DEFINITIONS)[];

/** A net's level in one state, or null with the reason it has none. */
function level<K extends 'high' | 'low'>(key: K, n: NetCheck): Record<K, { nominal: number; worst: number } | null> & Partial<Record<`${K}Why`, string>> {
  const l = n[key];
  type Level = Record<K, { nominal: number; worst: number } | null> & Partial<Record<`${K}Why`, string>>;
  if (l && Number.isFinite(l.nominal) && Number.isFinite(l.worst)) return { [key]: l } as unknown as Level;
  return { [key]: null, [`${key}${WHY_SUFFIX}`]: l ? noLevelWhy(key, l) : neverWhy(key, n) } as unknown as Level;
}

/** Why a net has no level in a state: it never takes it. */
function neverWhy(key: 'high' | 'low', n: NetCheck): string {
  if (n.status === 'unchecked') return `not judged: ${n.reasons[0] ?? 'the chain does not judge this net'}`;
  if (n.kind === 'input') return `never ${key}: no position of its switches and drives sets it ${key}`;
  return `never ${key}: no state of its drivers' inputs lets it go ${key}`;
}

/** Kinds of net (classes) the text explains at most; the rest are counted, and all are in the JSON. */
const MAX_EXPLAINED = 10;

/** Why a net has no `found` levels: what decided it instead. */
function foundWhy(n: NetCheck): string {
  if (n.basis === 'witness') return 'its witness decided it: the level at the witness is in its reasons';
  if (n.status === 'undecided') return 'no corner of the whole design was searched: the budget or the states ran out (see its reasons)';
  return 'its bounds decided it: no corner of the whole design was searched';
}

/** Why a net has no witness. */
function witnessWhy(n: NetCheck): string {
  if (n.status === 'fail') return 'the bound decided this failure (a grid, a gain or a loop that did not settle): no corner shows it';
  if (n.status === 'undecided') return n.found ? 'no corner searched fails it, but not every corner was searched' : 'no corner was searched (see its reasons)';
  return n.basis === 'corners' ? 'no corner fails it: every corner was solved' : 'its bounds keep the required margin: none can fail it';
}

/** Why a state's level is missing though the net takes that state: the solver found no solution at one of its corners. */
function noLevelWhy(key: 'high' | 'low', l: { nominal: number; worst: number }): string {
  return Number.isFinite(l.nominal) ? `no solution at the worst corner of its ${key} state: the local solve did not converge there` : `no solution for its ${key} state even at nominal values: the local solve did not converge`;
}

/** Why a noise margin is missing. */
function marginWhy(key: 'high' | 'low', n: NetCheck, threshold: number | undefined, thresholdName: string): string {
  const l = n[key];
  if (!l) return neverWhy(key, n);
  if (!Number.isFinite(l.worst) || !Number.isFinite(l.nominal)) return noLevelWhy(key, l);
  if (n.receivers.length === 0) return 'it feeds no grid: there is no receiving threshold to hold it against';
  return threshold === undefined ? `no input it feeds has a ${thresholdName}: their gain never reaches 1` : 'not computed';
}

export function checkToJson(design: Design, r: CheckResult, mc?: MonteCarloResult, shrunk?: ShrinkResult): ReportJson {
  const json: ReportJson = {
    schema: 'tubemargin.report/1',
    title: r.title,
    verdict: r.verdict,
    requiredMargin: r.requiredMargin,
    ageing: { scenario: r.scenario.name, summary: r.scenario.summary },
    nets: r.nets.map((n) => {
      const vih = n.receivers.reduce<number | undefined>((m, x) => (x.vihMax === undefined ? m : Math.max(m ?? -Infinity, x.vihMax)), undefined);
      const vil = n.receivers.reduce<number | undefined>((m, x) => (x.vilMin === undefined ? m : Math.min(m ?? Infinity, x.vilMin)), undefined);
      const driven = n.kind === 'input' ? 'an input: no section of its own drives it' : undefined;
      return {
        name: n.name,
        driver: n.driver,
        fanout: n.fanout,
        ...level('high', n),
        ...level('low', n),
        margin: { ...figure('high', n.margin.high, marginWhy('high', n, vih, 'VIH')), ...figure('low', n.margin.low, marginWhy('low', n, vil, 'VIL')) },
        ...figure('cutoffMargin', n.cutoffMargin?.volts, driven ?? (n.high ? 'no section of its drivers could be judged at cutoff while it is high' : neverWhy('high', n))),
        ...figure('driveMargin', n.driveMargin?.volts, driven ?? (n.low ? 'no input divider of its drivers could be judged while it is low' : neverWhy('low', n))),
        ...figure('headroom', n.headroom, driven ?? (n.receivers.length === 0 && r.standardLoad === undefined ? 'the design has no input divider to count as a standard load' : 'no thresholds to judge extra loads against, or not worked out in this run')),
        receivers: n.receivers.map((x) => ({
          section: x.section,
          stage: x.stage,
          ...figure('vil', x.vilMin, 'the receiving stage never reaches a gain of 1 seen from this net: it has no unity-gain point'),
          ...figure('vih', x.vihMax, 'the receiving stage never reaches a gain of 1 seen from this net: it has no unity-gain point'),
          ...figure('marginHigh', x.boxMargins ? x.boxMargins.high : n.high && x.vihMax !== undefined ? n.high.worst - x.vihMax : undefined, !n.high ? neverWhy('high', n) : 'this input has no VIH'),
          ...figure('marginLow', x.boxMargins ? x.boxMargins.low : n.low && x.vilMin !== undefined ? x.vilMin - n.low.worst : undefined, !n.low ? neverWhy('low', n) : 'this input has no VIL'),
        })),
        status: n.status,
        reasons: n.reasons,
        basis: n.basis,
        ...named('found', n.found && { ...figure('high', n.found.high, 'not searched: its high level passes by its bound, or it is never high'), ...figure('low', n.found.low, 'not searched: its low level passes by its bound, or it is never low') }, foundWhy(n)),
        ...named('witness', n.witness, witnessWhy(n)),
        ...named('note', n.note, 'nothing beyond its bound and its basis decided it'),
        causes: (n.weakest?.causes ?? []).filter((c) => Number.isFinite(c.value) && Number.isFinite(c.volts)).map((c) => ({ parameter: c.target, kind: c.kind, end: c.end, value: c.value, effectVolts: c.volts })),
      };
    }),
    latches: r.latches.map((l) => {
      const judged = l.inputs.filter((i) => i.note === undefined);
      const margins = judged.flatMap((i) => (i.triggerMargin === undefined ? [] : [i.triggerMargin]));
      const switches = judged.length ? judged.every((i) => i.switches) : null;
      return {
        nets: l.nets,
        holds: l.holds,
        basis: l.basis,
        ...named('witness', l.witness, l.basis === 'undecided' ? 'no corner searched loses a state, but not every corner was solved' : 'it holds: no corner loses a state'),
        corners: l.corners,
        ...figure('snm', l.snm.worst, 'no butterfly could be drawn at the worst corners: a transfer curve of the latch did not solve'),
        ...figure('snmNominal', l.snm.nominal, 'no butterfly could be drawn at nominal values: a transfer curve of the latch did not solve'),
        switches: l.holds ? switches : null,
        ...(!l.holds ? { switchesWhy: 'it is not shown to hold a state: there is no switching to judge' } : switches === null ? { switchesWhy: l.inputs.length === 0 ? 'it has no set or reset input' : 'none of its inputs could be judged (see each input\'s note)' } : {}),
        ...figure('triggerMargin', switches && margins.length ? lowest(margins) : undefined, switches === null ? 'no input to judge' : switches ? 'no input gave a trigger margin' : 'an input does not switch it: there is no margin to give'),
        inputs: l.inputs.map((i) => ({
          input: i.input,
          pulls: i.pulls,
          switches: i.switches,
          ...figure('threshold', i.threshold, i.note ?? 'the old state never stopped existing along the input\'s range'),
          ...figure('triggerMargin', i.triggerMargin, i.note ?? (i.switches ? 'no level at which the old state stops was found' : 'it does not switch the latch')),
          ...named('note', i.note, 'judged: there is nothing to note'),
        })),
        reasons: l.reasons,
      };
    }),
    definitions: DEFINITIONS,
    modelRange: r.modelRange,
    cautions: safetyCautions(design),
  };
  if (r.ratings) {
    const g = r.ratings;
    const noOp = 'the nominal operating point did not converge, so no rail current was measured';
    json.ratings = {
      ok: g.ok,
      sections: g.sections.map((x) => ({
        section: x.section,
        model: x.model,
        plateWatts: x.plateWatts,
        screenWatts: x.screenWatts,
        ok: x.ok,
        ...figure('plateRating', x.plateRating, 'a type of the design\'s own: the library holds no rating for it'),
        ...figure('screenRating', x.screenRating, x.plateRating === undefined ? 'a type of the design\'s own: the library holds no rating for it' : 'a triode: no screen'),
      })),
      resistors: g.resistors.map((x) => ({ resistor: x.resistor, ...figure('watts', x.watts, noOp.replace('rail current', 'power')), rating: x.rating, ...figure('share', x.share, noOp.replace('rail current', 'power')), ok: x.ok })),
      rails: g.rails.map((x) => ({ rail: x.rail, volts: x.volts, ...figure('amps', x.amps, noOp), ...figure('watts', x.watts, noOp) })),
      heaters: g.heaters,
      followers: g.followers.map((x) => ({ section: x.section, ok: x.ok, ...figure('volts', x.volts, 'no solution at its worst corner'), ...figure('rating', x.rating, 'a type of the design\'s own: the library holds no heater–cathode rating for it') })),
    };
  }
  if (mc) {
    json.monteCarlo = {
      samples: mc.samples,
      seed: mc.seed,
      distribution: mc.distribution,
      yield: mc.yield,
      interval: mc.interval,
      nets: mc.nets.map((n) => {
        const none = 'no sample gave this net a level: none of them solved';
        return { net: n.net, ...figure('min', n.min, none), ...figure('p1', n.p1, none), ...figure('median', n.median, none), failures: n.failures };
      }),
      correlated: mc.correlated.map((c) => ({ parameter: c.target, kind: c.kind, correlation: c.correlation })),
      failingSamples: mc.failing,
    };
  }
  if (shrunk) {
    json.shrink = {
      found: shrunk.found,
      seed: shrunk.seed,
      runs: shrunk.runs,
      shrinks: shrunk.shrinks,
      deviations: shrunk.deviations.map((d) => ({ parameter: d.target, kind: d.kind, deviation: d.deviation, value: d.value })),
      failing: shrunk.failing,
    };
  }
  return json;
}

const v = (x: number | undefined) => (x === undefined || !Number.isFinite(x) ? '—' : x.toFixed(2));

/**
 * A margin against the required one, with the digits needed so that it is never rounded
 * onto the other side of it (1.496 against 1.50 is not printed "1.50").
 */
export function marginText(x: number | undefined, required: number): string {
  if (x === undefined || !Number.isFinite(x)) return '—';
  for (const digits of [2, 3, 4]) {
    const shown = Number(x.toFixed(digits));
    if ((shown >= required) === (x >= required)) return x.toFixed(digits);
  }
  return x.toFixed(5);
}

/** How a cause reads: "x2.v2 emission 75 % of nominal (low end): up 2.10 V". */
export function describeCause(c: Cause): string {
  const what: Record<Cause['kind'], string> = {
    resistor: `${c.target} at ${formatSI(c.value, 'Ω')}`,
    drive: `drive ${c.target} at ${v(c.value)} V`,
    rail: `rail ${c.target} at ${v(c.value)} V`,
    perveance: `${c.target} emission ${Math.round(c.value * 100)} % of nominal`,
    interface: `${c.target} cathode interface ${formatSI(c.value, 'Ω')}`,
    level: `${c.target} at ${v(c.value)} V`,
  };
  return `${what[c.kind]} (${c.end} end): ${c.volts >= 0 ? 'up' : 'down'} ${Math.abs(c.volts).toFixed(2)} V`;
}

/** The Monte Carlo section: yield with its interval, the nets with the smallest 1st-percentile margin, the parts behind failures. */
function renderSamples(mc: MonteCarloResult, required: number): string[] {
  const pct = (x: number) => `${(100 * x).toFixed(x > 0.999 || x < 0.001 ? 2 : 1)} %`;
  const out = indented(
    `Monte Carlo: ${mc.samples.toLocaleString('en')} samples (${mc.distribution}, seed ${mc.seed}): yield ${pct(mc.yield)}, 95 % interval ${pct(mc.interval[0])} to ${pct(mc.interval[1])}: the share of builds in which every judged net keeps ${v(required)} V and every latch keeps both states.`,
    '',
    '  ',
  );
  const weakest = [...mc.nets].sort((a, b) => a.p1 - b.p1).slice(0, 8);
  append(out, table(
      ['  net', 'min', '1 %', 'median', 'failed'],
      weakest.map((n) => ['  ' + n.net, v(n.min), v(n.p1), v(n.median), String(n.failures)]),
      [26, 7, 7, 7],
    ));
  out.push('  (noise margin in volts over the samples, smallest 1st percentile first)');
  if (mc.correlated.length > 0) {
    out.push('  The parts whose values go most with failing builds (correlation):');
    for (const c of mc.correlated) out.push(`    ${c.kind} ${c.target}: ${c.correlation >= 0 ? '+' : '−'}${Math.abs(c.correlation).toFixed(2)} (${c.correlation >= 0 ? 'high' : 'low'} values fail)`);
  }
  if (mc.failing.length > 0) out.push(`  First failing samples: ${mc.failing.join(', ')}`);
  return out;
}

/** Ratings and budgets: what is over its rating, the most loaded parts, the rails' currents and the heater budget. */
function renderRatings(g: Ratings): string[] {
  const out = [`Ratings and budgets${g.ok ? '' : ': OVER RATING'}`];
  const overSections = g.sections.filter((s) => !s.ok);
  const overResistors = g.resistors.filter((r) => !r.ok);
  for (const s of overSections) append(out, indented(`${s.section} dissipates up to ${formatSI(s.plateWatts, 'W')} on its plate and ${formatSI(s.screenWatts, 'W')} on its screen, over its rating (${formatSI(s.plateRating ?? NaN, 'W')}${s.screenRating === undefined ? '' : `, ${formatSI(s.screenRating, 'W')}`})`, '  ', '    '));
  for (const r of overResistors.slice(0, 8)) {
    const said = Number.isFinite(r.watts)
      ? `${r.resistor} takes up to ${formatSI(r.watts, 'W')}, ${Math.round(r.share * 100)} % of its ${formatSI(r.rating, 'W')} rating (keep it under ${Math.round(DERATING * 100)} %)`
      : `${r.resistor}: its power was not measured (the nominal operating point did not converge), so nothing vouches for its ${formatSI(r.rating, 'W')} rating`;
    append(out, indented(said, '  ', '    '));
  }
  if (overResistors.length > 8) out.push(`  and ${overResistors.length - 8} more resistors over ${Math.round(DERATING * 100)} % of their rating`);
  const hot = g.sections[0];
  const mostLoaded = g.resistors.find((r) => Number.isFinite(r.share));
  if (hot) append(out, indented(`Most plate dissipation, worst case: ${hot.section}, ${formatSI(hot.plateWatts, 'W')}${hot.plateRating === undefined ? '' : ` of ${formatSI(hot.plateRating, 'W')}`}; most loaded resistor: ${mostLoaded ? `${mostLoaded.resistor}, ${Math.round(mostLoaded.share * 100)} % of its rating` : 'none measured'}.`, '  ', '    '));
  if (g.rails.some((r) => !Number.isFinite(r.amps))) append(out, indented('Rail currents: not measured, because the nominal operating point did not converge (run solve to see where).', '  ', '    '));
  else if (g.rails.length > 0) append(out, indented(`Rails at the nominal operating point: ${g.rails.map((r) => `${r.rail} ${formatSI(r.amps, 'A')} (${formatSI(Math.abs(r.watts), 'W')})`).join(', ')}.`, '  ', '    '));
  for (const h of g.heaters) {
    const group = (s: HeaterBudget['strings'][number]) => `${s.strings} ${s.strings === 1 ? 'string' : 'strings'} of ${s.perString} with ${formatSI(s.droppingOhms, 'Ω')} (${formatSI(s.droppingWatts, 'W')}) each`;
    const rails = [...new Set(h.strings.map((s) => s.rail))];
    const strings = rails.map((rail) => `${h.strings.filter((s) => s.rail === rail).map(group).join(' and ')} across ${rail}`).join('; or ');
    append(out, indented(`Heaters, ${typeLabel(h.model, h.designation)}: ${h.envelopes} envelopes at ${h.volts} V, ${formatSI(h.amps, 'A')} each, ${formatSI(h.envelopes * h.amps, 'A')} in parallel${strings ? `; or ${strings}` : ''}.`, '  ', '    '));
  }
  for (const f of g.followers) append(out, indented(`${f.section}, a cathode follower: ${v(f.volts)} V heater to cathode${f.rating === undefined ? '' : ` against ${f.rating} V`}${f.ok ? '' : ': OVER'}`, '  ', '    '));
  return out;
}

/** The `--shrink` section: the smallest failing set of part values found, or that none was. */
function renderShrink(s: ShrinkResult): string[] {
  if (!s.found) return indented(`Shrink: no failing set of part values found at the worst corners or in ${s.runs} random cases (seed ${s.seed}).`, '', '  ');
  const out = indented(`Shrink: the smallest failing set of part values found (seed ${s.seed}, ${s.shrinks} shrinking steps); every other part nominal; band shares run from −100 % (low end) to +100 % (high end). It fails: ${s.failing.join(', ')}.`, '', '  ');
  const unit = { resistor: 'Ω', rail: 'V', drive: 'V', perveance: '' } as const;
  for (const d of s.deviations) {
    const value = d.kind === 'perveance' ? `emission ${Math.round(d.value * 100)} % of nominal` : formatSI(d.value, unit[d.kind]);
    out.push(`  ${d.kind} ${d.target}: ${value} (${d.deviation >= 0 ? '+' : '−'}${Math.round(Math.abs(d.deviation) * 100)} % of its band)`);
  }
  return out;
}

/** Cells of the margin bar; the required margin is at the middle. */
const BAR_CELLS = 6;

/**
 * The smaller noise margin as a bar of six cells, the required margin filling three: a
 * net that falls short shows fewer than half, one with twice the margin a full bar;
 * blank for a net with no margin to show.
 */
export function marginBar(n: NetCheck, required: number): string {
  const m = Math.min(n.margin.high ?? Infinity, n.margin.low ?? Infinity);
  if (!Number.isFinite(m)) return ' '.repeat(BAR_CELLS);
  const filled = Math.max(0, Math.min(BAR_CELLS, Math.round((m / Math.max(required, 1e-9)) * (BAR_CELLS / 2))));
  return '█'.repeat(filled) + '░'.repeat(BAR_CELLS - filled);
}

/** Prose wrapped to the report's width, its first line after `first`, the rest after `rest`. */
function indented(text: string, first: string, rest: string): string[] {
  return wrap(text, REPORT_COLUMNS - first.length, rest.slice(first.length)).map((line) => first + line);
}

/** A net's status in words (`short`: for the table's last column, four characters at most). */
function statusText(n: NetCheck, short = false): string {
  if (n.status === 'pass') return n.basis === 'corners' ? (short ? 'ok*' : 'ok by corners') : 'ok';
  return n.status === 'fail' ? 'FAIL' : n.status === 'undecided' ? (short ? '?' : 'UNDECIDED') : 'unchecked';
}

/** A word as a shell reads it: as it is when plain, else in single quotes (a net such as `bed[1]/off` is a pattern to a shell). */
function shellWord(word: string): string {
  return /^[\w./:+-]+$/.test(word) ? word : `'${word.replace(/'/g, `'\\''`)}'`;
}

/**
 * A witness in a few lines: its states and contacts, the values that matter most (every
 * value is in `--json`), and how to re-solve it.
 */
export function renderWitness(w: Witness, source: string, atNet: string, checkOptions = ''): string[] {
  const states = Object.entries(w.states).map(([net, s]) => `${net} ${s}`).join(', ');
  const closed = Object.entries(w.positions).filter(([, p]) => p === 'closed').map(([k]) => k);
  const key = (w.key ?? []).filter((k) => w.values[k] !== undefined);
  const rest = Object.keys(w.values).length - key.length;
  const values = key.map((k) => `${k} ${Number(w.values[k]!.toPrecision(4))}`).join(', ');
  const lines = indented(`witness: ${states || 'no latch state asked'}; ${closed.length ? `closed: ${closed.join(', ')}` : 'every contact at rest'}`, '   ', '     ');
  if (key.length > 0) lines.push(...indented(`at ${values}${rest > 0 ? `, and ${rest} more part${rest === 1 ? '' : 's'} at the ends of their bands (every value in --json)` : ''}`, '     ', '       '));
  else if (rest > 0) lines.push(...indented(`at the ${rest} values in --json`, '     ', '       '));
  const file = shellWord(source);
  lines.push(...indented(`re-solve it: tubemargin check ${file}${checkOptions ? ` ${checkOptions}` : ''} --json > c.json; tubemargin solve ${file} --at c.json --at-net ${shellWord(atNet)}`, '     ', '       '));
  return lines;
}

/**
 * The text of `tubemargin check`: the verdict; nets weakest first (driver, fan-out, worst
 * high and low, noise margins, cutoff and drive margins, headroom, status); latches
 * (holds, SNM, switches, trigger margin); the weakest three nets explained by the
 * parameters whose corners make them weak; what each figure means. Lines fit 80 columns.
 */
export function renderCheck(design: Design, r: CheckResult, source: string, mc?: MonteCarloResult, shrunk?: ShrinkResult): string {
  const out: string[] = [];
  const failing = r.nets.filter((n) => n.status === 'fail');
  const badLatches = r.latches.filter((l) => l.basis === 'witness' || latchSwitchingFails(l));
  const undecidedLatches = r.latches.filter((l) => l.basis === 'undecided');
  // The options a witness needs to be found again: its scenario and required margin, where not the design's own.
  const again = [r.scenario.name !== AGEING_SCENARIOS[0]!.name ? `--age ${r.scenario.name}` : '', r.requiredMargin !== design.settings.requiredMargin ? `--margin ${r.requiredMargin}` : ''].filter((x) => x).join(' ');
  out.push(`${design.title || '(untitled design)'} — ${source}`);
  const latchWords = r.latches.length > 0 ? ' and every latch holds and switches' : '';
  const failWords = [`${failing.length} of ${r.nets.length} nets`, ...(r.latches.length > 0 ? [`${badLatches.length} of ${r.latches.length} latches`] : [])].join(' and ');
  const overRating = r.ratings?.ok === false ? ' Parts run over their ratings (below).' : '';
  const undecidedNets = r.nets.filter((n) => n.status === 'undecided');
  const undecidedWords = [
    ...(undecidedNets.length > 0 ? [` ${undecidedNets.length} of ${r.nets.length} nets could be shown neither to keep their margins nor to fail them`] : []),
    ...(undecidedLatches.length > 0 ? [` ${undecidedLatches.length} of ${r.latches.length} latches could be shown neither to hold nor to lose a state`] : []),
  ].join(';');
  // "scenario new: new tubes, …": the name as the user types it for --age, then what it means.
  const scenario = `scenario ${r.scenario.name}: ${r.scenario.summary}`;
  const verdict =
    r.nets.length === 0 && r.latches.length === 0
      ? `${r.verdict === 'pass' ? 'PASS' : 'FAIL'}: no logic net to judge (no section drives a net); ${r.verdict === 'pass' ? 'every part keeps within its rating.' : 'parts run over their ratings (below).'}`
      : r.verdict === 'pass'
      ? `PASS: every net keeps ${v(r.requiredMargin)} V of margin${latchWords}, in worst case (${scenario}).`
      : r.verdict === 'undecided'
        ? `UNDECIDED: nothing is shown to fail in worst case (${scenario}), but${undecidedWords}: it may fail (below).`
        : failing.length + badLatches.length === 0 && r.settled && r.ratings?.ok === false
          ? `FAIL: every net keeps ${v(r.requiredMargin)} V of margin${latchWords}, in worst case (${scenario}), but parts run over their ratings (below).`
          : `FAIL: ${failWords} fail in worst case (${scenario}); required margin ${v(r.requiredMargin)} V.${overRating}${undecidedWords ? `${undecidedWords} (below).` : ''}`;
  append(out, wrap(verdict, REPORT_COLUMNS));
  for (const m of r.modelRange) append(out, wrap(`The verdict rests on a model used outside its trusted range: ${m}; fit the type to bench readings of your own tubes at these voltages (tubemargin fit).`, REPORT_COLUMNS));
  if (!r.settled) append(out, wrap(`The worst-case levels around a loop did not settle in ${r.rounds} rounds.`, REPORT_COLUMNS));
  out.push('');
  out.push(`Nets, weakest first (${r.nets.length})`);
  append(out, table(
      ['  net', 'drv', 'fan', 'high', 'low', 'NM_H', 'NM_L', 'cutoff', 'more', 'status'],
      r.nets.map((n) => [
        '  ' + n.name,
        n.kind === 'input' ? 'in' : n.driver.split(' ')[0]!,
        String(n.fanout),
        v(n.high?.worst),
        v(n.low?.worst),
        marginText(n.margin.high, r.requiredMargin),
        marginText(n.margin.low, r.requiredMargin),
        v(n.cutoffMargin?.volts),
        n.headroom === undefined ? '—' : n.headroom >= MAX_EXTRA_LOADS ? `${MAX_EXTRA_LOADS}+` : String(n.headroom),
        `${marginBar(n, r.requiredMargin)} ${statusText(n, true)}`,
      ]),
      [16, 3, 3, 7, 7, 7, 7, 6, 4],
    ));
  out.push('  (volts, worst case; drv: sections driving it, "in" for an input; more:');
  out.push('  extra standard loads it can take; the bar: the smaller noise margin, with');
  out.push('  the required one at its middle; drive margins are in --json; status: ok*');
  out.push('  passes by every corner of the whole design where its bound did not; ?');
  out.push('  undecided, it may fail)');
  if (r.latches.length > 0) {
    out.push('');
    out.push(`Latches (${r.latches.length})`);
    append(out, table(
        ['  latch', 'holds', 'SNM', 'input', 'switches', 'trigger'],
        r.latches.flatMap((l) => {
          const head = ['  ' + l.nets.join(' ↔ '), l.holds ? 'yes' : l.basis === 'undecided' ? '?' : 'NO', `${v(l.snm.worst)}`];
          if (l.inputs.length === 0) return [[...head, '—', '—', '—']];
          // A latch not shown to hold has no switching to judge.
          return l.inputs.map((i, k) => [
            ...(k === 0 ? head : ['', '', '']),
            i.input,
            !l.holds ? '—' : i.note !== undefined ? 'never set' : i.switches ? 'yes' : 'NO',
            !l.holds || i.note !== undefined ? '—' : v(i.triggerMargin),
          ]);
        }),
        [26, 5, 6, 14, 9],
      ));
    out.push('  (SNM and trigger margin in volts, worst case; holds: both states exist at');
    out.push('  every corner; "?": neither that nor a corner losing a state was shown)');
  }
  // The three weakest, and every one that fails or is undecided, one per class and verdict
  // (nets alike that came to the same verdict the same way are named with the first: one
  // whose latch cannot hold is not grouped with one whose level fails), at most MAX_EXPLAINED.
  const judged = r.nets.filter((n) => n.status !== 'unchecked');
  const witnessKind = (w: Witness | undefined) => (!w ? '' : w.level ? 'level' : w.grid ? 'grid' : w.gain ? 'gain' : 'latch');
  // Alike: one verdict come to the same way, with the same figures to the millivolt (nets
  // of one class always are; nets of different classes often are, e.g. ten copies of a
  // block whose boundaries differ only in names).
  const mv = (x: number | undefined) => (x === undefined ? '-' : x.toFixed(3));
  const group = (n: NetCheck) => [n.status, n.basis, witnessKind(n.witness), mv(n.high?.worst), mv(n.low?.worst), mv(n.margin.high), mv(n.margin.low), mv(n.cutoffMargin?.volts), mv(n.found?.high), mv(n.found?.low), n.reasons.length].join('|');
  const heads = firstOfEach(judged, group);
  const wanted = heads.filter((n, i) => i < 3 || n.status === 'fail' || n.status === 'undecided');
  const explained = wanted.slice(0, MAX_EXPLAINED);
  if (explained.length > 0) {
    out.push('');
    out.push('The weakest nets, and why');
    explained.forEach((n, k) => {
      // The head already says UNDECIDED: a reason that opens with it does not say it twice.
      const summary =
        n.reasons[0]?.replace(n.status === 'undecided' ? /^undecided: / : /^$/, '') ??
        (n.weakest?.what === 'cutoff'
          ? `cutoff margin ${v(n.cutoffMargin?.volts)} V`
          : n.weakest?.what === 'low'
            ? `worst low ${v(n.low?.worst)} V, ${n.margin.low === undefined ? 'no input to judge NM_L against' : `NM_L ${v(n.margin.low)} V`}`
            : `worst high ${v(n.high?.worst)} V, ${n.margin.high === undefined ? 'no input to judge NM_H against' : `NM_H ${v(n.margin.high)} V`}`);
      append(out, indented(`${k + 1}. ${n.name} (${statusText(n)}): ${n.note && n.basis === 'bounds' ? `${summary}; ${n.note}` : (n.note ?? summary)}`, '', '     '));
      // A latch's witness is printed once, with the latch.
      if (n.witness && (n.witness.level || n.witness.grid || n.witness.gain)) append(out, renderWitness(n.witness, source, n.name, again));
      const alike = judged.filter((m) => group(m) === group(n) && m !== n);
      // Alike nets can fail at witnesses of their own (their own parts at the same ends).
      const own = alike.some((m) => m.witness && m.witness !== n.witness) ? ' (each with a witness of its own, in --json)' : '';
      if (alike.length > 0) out.push(`   alike: ${cutList(alike.map((m) => m.name), REPORT_COLUMNS - 10 - own.length)}${own}`);
      for (const reason of n.reasons.slice(1)) append(out, indented(`also: ${reason}`, '   ', '     '));
      if (n.weakest && n.weakest.causes.length > 0) {
        out.push(`   its worst ${n.weakest.what === 'low' ? 'low level' : 'high level'} comes from:`);
        for (const c of n.weakest.causes) append(out, indented(describeCause(c), '     ', '       '));
      }
    });
  }
  if (wanted.length > explained.length) out.push(`   … and ${wanted.length - explained.length} more nets (or groups of alike nets) that fail or are undecided (every one in --json)`);
  // Latches that fail, that are undecided, and those the corners showed to hold where the bounds could not.
  for (const l of r.latches.filter((l) => badLatches.includes(l) || l.basis !== 'bounds')) {
    out.push('');
    const head = l.basis === 'undecided' ? 'UNDECIDED' : l.holds ? 'holds' : 'does NOT hold';
    // The head already says UNDECIDED: a reason that opens with it does not say it twice.
    const reasons = l.reasons.map((x) => (l.basis === 'undecided' ? x.replace(/^undecided: /, '') : x));
    append(out, indented(`Latch ${l.nets.join(' ↔ ')}: ${head}${reasons.length ? ': ' + reasons.join('; ') : ''}`, '', '  '));
    if (l.witness) append(out, renderWitness(l.witness, source, l.nets[0], again));
    if (l.holds) for (const i of l.inputs) if (!i.switches && i.note === undefined) append(out, indented(`${i.input} at its weakest asserted level ${v(i.asserted)} V does not switch it`, '  ', '    '));
  }
  if (r.ratings) out.push('', ...renderRatings(r.ratings));
  if (mc) out.push('', ...renderSamples(mc, r.requiredMargin));
  if (shrunk) out.push('', ...renderShrink(shrunk));
  out.push('');
  out.push('What the figures mean');
  for (const k of definitionKeys()) append(out, indented(`${DEFINITION_HEADINGS[k].text}: ${DEFINITIONS[k]}`, '  ', '    '));
  const cautions = safetyCautions(design);
  if (cautions.length > 0) out.push('', ...cautions.flatMap((c) => wrap(c, REPORT_COLUMNS)));
  return out.join('\n') + '\n';
}
