import type { CheckResult } from '../analysis/check.js';
import { TIMING_CORNERS, type ClockLimitResult } from '../analysis/clockLimit.js';
import type { PulseRun } from '../analysis/pulseRun.js';
import type { MonteCarloResult } from '../analysis/monteCarlo.js';
import type { RailSweepResult } from '../analysis/sweep.js';
import type { Design } from '../design/model.js';
import { findLibraryEntry } from '../models/library.js';
import { logicThreshold, type OperatingPoint } from '../solve/operatingPoint.js';
import { butterflyChart, histogramChart, marginChart, marginRows, MAX_WAVE_ROWS, PALETTE, svgOf, sweepChart, transferChart, waveformChart } from './charts.js';
import { DEFINITIONS, DEFINITION_HEADINGS, definitionKeys } from './checkReport.js';
import { escapeHtml, formatReading, formatSI } from './format.js';
import { CAUTION_PREFIX, safetyCautions, sweptLevels, type AppliedLevel } from './safety.js';
import type { Diagnostic } from '../source/diagnostic.js';
import { buildStageGraph, compareNames } from '../graph/stageGraph.js';
import { drawDesign, FOLD_ABOVE } from './drawing.js';

export { escapeHtml };

/** The first line of every report: `report` overwrites a file only when it starts so (its own earlier output). */
export const REPORT_MARK = '<!doctype html><!-- tubemargin report -->';


/**
 * Escapes prose for HTML and keeps each number with what follows it: the space after a
 * digit becomes a no-break space ("1.50 V", "2 sections", "100.00 %"), and a range's dash
 * between digits holds on to the number after it ("16–26 V"), so no line breaks a number
 * from its unit. For page text only: never for markup, whose attributes hold numbers too.
 *
 * Example: `htmlText('worst low 7.26 V & more')` is "worst low 7.26\u00a0V &amp; more".
 */
export function htmlText(text: string): string {
  return escapeHtml(text)
    .replace(/(\d) (?=\S)/g, '$1\u00a0')
    .replace(/(\d)–(?=[−-]?\d)/g, '$1–\u2060');
}

/** The caution block of a page; the block's heading already says caution, so the first line does not again. */
function cautionSection(cautions: readonly string[]): string {
  if (cautions.length === 0) return '';
  const lines = cautions.map((c) => (c.startsWith(CAUTION_PREFIX) ? c.slice(CAUTION_PREFIX.length) : c));
  return `<section id="caution" class="caution"><h2>Caution: high voltage</h2>${lines.map((c) => `<p>${htmlText(c)}</p>`).join('')}</section>`;
}

export interface HtmlReportInput {
  design: Design;
  check: CheckResult;
  /** The file the design was read from, as the user named it. */
  source: string;
  /** The nominal operating point (every latch's first net low), for the design facts. */
  nominal: OperatingPoint | undefined;
  samples?: MonteCarloResult;
  sweep?: RailSweepResult;
}

/** Most plots of one kind in a report: the rest are alike or listed in the tables. */
const MAX_PLOTS = 8;

const v = (x: number | undefined) => (x === undefined || !Number.isFinite(x) ? '—' : x.toFixed(2));
const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;

/**
 * The HTML report: one self-contained page (styles and SVG plots inline, no script, no
 * request) with the verdict, the safety cautions when a rail exceeds 60 V, nets weakest
 * first, the margin chart (every judged net, failing first), each kind of latch's
 * butterfly with its largest squares, each kind of stage's transfer curve with VOL, VOH,
 * VIL and VIH, the Monte Carlo histograms and the supply map when run, and the design's
 * facts. Every name from the design is escaped; no number is parted from its unit.
 */
export async function renderHtmlReport(input: HtmlReportInput): Promise<string> {
  const { design, check, source } = input;
  const e = htmlText;
  const title = design.title || '(untitled design)';
  const parts: string[] = [];
  const plot = async (caption: string, spec: Parameters<typeof svgOf>[0]) => `<figure class="plot">${await svgOf(spec)}<figcaption>${e(caption)}</figcaption></figure>`;

  const failing = check.nets.filter((n) => n.status === 'fail').length;
  const undecided = check.nets.filter((n) => n.status === 'undecided').length + check.latches.filter((l) => l.basis === 'undecided').length;
  const verdict =
    check.nets.length === 0
      ? `${check.verdict === 'pass' ? 'PASS' : 'FAIL'}: no logic net to judge; ${check.verdict === 'pass' ? 'every part keeps within its rating.' : 'parts run over their ratings.'}`
      : check.verdict === 'pass'
      ? `PASS: every net keeps ${v(check.requiredMargin)} V of margin${check.latches.length ? ' and every latch holds and switches' : ''} in worst case.`
      : check.verdict === 'undecided'
        ? `UNDECIDED: nothing is shown to fail in worst case, but ${undecided} net${undecided === 1 ? '' : 's'} or latches could be shown neither to pass nor to fail: it may fail.`
      : failing === 0 && check.ratings?.ok === false
        ? `FAIL: every net keeps ${v(check.requiredMargin)} V of margin in worst case, but parts run over their ratings.`
        : `FAIL: ${failing} of ${check.nets.length} nets fail in worst case; required margin ${v(check.requiredMargin)} V.${undecided ? ` ${undecided} more could be shown neither to pass nor to fail.` : ''}`;
  const weakestNet = check.nets[0];
  const weakestLine = weakestNet ? `<p class="weakest">The weakest net is <strong id="weakest">${e(weakestNet.name)}</strong>${weakestNet.reasons[0] ? `: ${e(weakestNet.reasons[0])}` : ''}.</p>` : '';
  parts.push(`<header><h1>${e(title)}</h1><p class="source">${e(source)} · ageing: ${e(check.scenario.name)} (${e(check.scenario.summary)})</p><p id="verdict" class="verdict ${check.verdict}">${e(verdict)}</p>${check.modelRange.map((m) => `<p class="model-range">${e(`The verdict rests on a model used outside its trusted range: ${m}.`)}</p>`).join('')}${weakestLine}</header>`);

  // A supply map's rails at the farthest values swept to, as well as at their tolerance.
  parts.push(cautionSection(safetyCautions(design, input.sweep ? sweptLevels(input.sweep.axes) : [])));

  // The drawing: each net coloured by its slack and linked to its row in the table of nets.
  const rowId = (net: string) => `net-${net}`;
  const drawing = await drawDesign(design, buildStageGraph(design), { check, link: (net) => `#${encodeURIComponent(rowId(net))}` });
  const weakLinks = check.nets
    .filter((n) => n.status !== 'unchecked')
    .slice(0, 5)
    .map((n) => `<a href="#${escapeHtml(encodeURIComponent(rowId(n.name)))}">${e(n.name)}</a>`);
  parts.push(
    `<section id="drawing"><h2>The design</h2><div class="drawing">${drawing.svg.slice(drawing.svg.indexOf('<svg'))}</div><p class="caption">${e(
      `Each stage is a box with a pin per input; each net runs from the stage that drives it to every input it feeds, coloured by its worst-case slack above the required margin (darkest weakest); failing nets are thick and dashed, undecided ones dotted. Hover over a net for its levels; click it for its row below.${drawing.folded ? ` The design has more than ${FOLD_ABOVE} stages: each block instance or array is drawn as one box.` : ''}`,
    )}${weakLinks.length > 0 ? ` Weakest: ${weakLinks.join(', ')}.` : ''}</p></section>`,
  );

  const netsTable =
    `<section id="nets"><h2>Nets, weakest first</h2><table><thead><tr><th>net</th><th>driver</th><th>fan-out</th><th>worst high</th><th>worst low</th><th>NM_H</th><th>NM_L</th><th>cutoff</th><th>drive</th><th>more loads</th><th>status</th></tr></thead><tbody>${check.nets
      .map(
        (n) =>
          `<tr class="${n.status}" id="${escapeHtml(`net-${n.name}`)}"><td>${e(n.name)}</td><td>${e(n.driver)}</td><td>${n.fanout}</td><td>${v(n.high?.worst)}</td><td>${v(n.low?.worst)}</td><td>${v(n.margin.high)}</td><td>${v(n.margin.low)}</td><td>${v(n.cutoffMargin?.volts)}</td><td>${v(n.driveMargin?.volts)}</td><td>${n.headroom ?? '—'}</td><td>${n.status === 'fail' ? `FAIL: ${e(n.reasons.join('; '))}` : e(n.status)}</td></tr>`,
      )
      .join('')}</tbody></table></section>`;

  // The three weakest kinds of net, each named with the nets alike.
  const seenClass = new Set<number>();
  // The first net of each class (a Set, not a search per net: a design may have 10,000 classes).
  const explained = check.nets.filter((n) => !seenClass.has(n.classId) && seenClass.add(n.classId) && n.weakest && n.weakest.causes.length > 0).slice(0, 3);
  if (explained.length > 0) {
    parts.push(
      `<section id="why"><h2>What makes the weakest nets weak</h2>${explained
        .map((n) => {
          const alike = check.nets.filter((m) => m.classId === n.classId && m !== n).map((m) => m.name);
          const also = alike.length ? `<p class="alike">Alike: ${e(alike.slice(0, 12).join(', '))}${alike.length > 12 ? e(` and ${alike.length - 12} more`) : ''}.</p>` : '';
          const causes = n.weakest!.causes.map((c) => `<li>${e(`${c.kind} ${c.target} at its ${c.end} end: moves the ${n.weakest!.what === 'low' ? 'low' : 'high'} level ${c.volts >= 0 ? 'up' : 'down'} ${Math.abs(c.volts).toFixed(2)} V`)}</li>`).join('');
          return `<h3>${e(n.name)}${n.reasons[0] ? `: ${e(n.reasons[0])}` : ''}</h3>${also}<ul>${causes}</ul>`;
        })
        .join('')}</section>`,
    );
  }

  const { rows, omitted } = marginRows(check.nets);
  const unchecked = check.nets.filter((n) => n.status === 'unchecked').length;
  const againstThreshold = rows.filter((r) => r.measure === 'logic threshold').length;
  const marginCaption = [
    `The dashed line is the required margin, ${v(check.requiredMargin)} V. Failing nets come first, then undecided ones, then the rest, each weakest first.`,
    againstThreshold > 0 ? `${plural(againstThreshold, 'net')} that feed${againstThreshold === 1 ? 's' : ''} no grid ${againstThreshold === 1 ? 'is' : 'are'} measured by how far ${againstThreshold === 1 ? 'its' : 'their'} worse level stays on its side of the logic threshold, as noted.` : '',
    rows.some((r) => r.measure === 'none') ? 'A pale band marks a net with no level solved.' : '',
    omitted > 0 ? `${plural(omitted, 'passing net')} with more margin ${omitted === 1 ? 'is' : 'are'} not drawn; the table of nets lists ${omitted === 1 ? 'it' : 'them'}.` : '',
    unchecked > 0 ? `${plural(unchecked, 'net')} driven both by plates and by cathodes ${unchecked === 1 ? 'is' : 'are'} not judged, and not drawn.` : '',
  ]
    .filter(Boolean)
    .join(' ');
  if (rows.length > 0) parts.push(`<section id="margins"><h2>Noise margins</h2>${await plot(marginCaption, marginChart(rows, check.requiredMargin))}</section>`);

  if (check.latches.length > 0) {
    const seen = new Set<string>();
    const kinds = check.latches.filter((l) => {
      const key = `${l.snm.nominal}|${l.snm.worst}`;
      if (seen.has(key)) return false;
      seen.add(key);
      return true;
    });
    const plots: string[] = [];
    for (const l of kinds.slice(0, MAX_PLOTS)) {
      const spec = butterflyChart(l);
      if (spec) plots.push(await plot(`${l.holds ? 'Holds' : l.basis === 'undecided' ? 'Undecided' : 'Does NOT hold'}; the shaded squares are the largest in each lobe (nominal).`, spec));
    }
    const rows = check.latches
      .map((l) => `<tr class="${l.holds ? 'pass' : 'fail'}"><td>${e(l.nets.join(' ↔ '))}</td><td>${l.holds ? 'yes' : l.basis === 'undecided' ? '?' : 'NO'}</td><td>${v(l.snm.worst)}</td><td>${l.holds ? l.inputs.map((i) => `${e(i.input)}: ${i.note ? e(i.note) : i.switches ? e(`switches, margin ${v(i.triggerMargin)} V`) : 'does NOT switch'}`).join('<br>') : '—'}</td></tr>`)
      .join('');
    parts.push(`<section id="latches"><h2>Latches</h2><div class="plots">${plots.join('')}</div><table><thead><tr><th>latch</th><th>holds</th><th>SNM (worst)</th><th>set and reset inputs</th></tr></thead><tbody>${rows}</tbody></table></section>`);
  }

  if (check.stageKinds.length > 0) {
    const plots: string[] = [];
    for (const k of check.stageKinds.slice(0, MAX_PLOTS)) {
      const { low, high } = k.output;
      const collapsed =
        low !== undefined && high !== undefined && low >= high
          ? ` Worst-case VOL (${v(low)} V) lies above worst-case VOH (${v(high)} V): the stage's low and high levels overlap, so its output cannot be read as logic in worst case.`
          : '';
      plots.push(await plot(`Transfer curve at nominal values and at the corners that switch it earliest and latest; the guides are worst-case levels.${collapsed}`, transferChart(k)));
    }
    parts.push(`<section id="stages"><h2>Kinds of stage</h2><div class="plots">${plots.join('')}</div></section>`);
  }

  const mc = input.samples;
  if (mc) {
    const pct = (x: number) => `${(100 * x).toFixed(2)} %`;
    // In the report's order of nets (weakest first, names alike in order), as the table and the margin chart.
    const order = new Map(check.nets.map((n, i) => [n.name, i]));
    const histograms = [...mc.histograms].sort((a, b) => (order.get(a.net) ?? Infinity) - (order.get(b.net) ?? Infinity) || compareNames(a.net, b.net));
    const plots: string[] = [];
    for (const h of histograms) plots.push(await plot('Red bins fall below the required margin.', histogramChart(h, check.requiredMargin)));
    const sampled = new Set(mc.nets.map((n) => n.net));
    const notCounted = check.nets.filter((n) => n.status !== 'unchecked' && !sampled.has(n.name)).map((n) => n.name);
    const counts =
      `The yield counts the samples in which every net that feeds a grid keeps the required ${v(check.requiredMargin)} V of noise margin against its receivers' worst-case thresholds, and every latch keeps the states it holds at nominal values. ` +
      `Each sample draws every part, rail and tube at random over its tolerance band (${mc.distribution}), ` +
      (notCounted.length > 0 ? `and the nets that feed no grid (${notCounted.slice(0, 6).join(', ')}${notCounted.length > 6 ? ` and ${notCounted.length - 6} more` : ''}) are not counted, ` : '') +
      'so it says how many random builds work, not that every build does: the verdict above asks that of every corner of the tolerances at once' +
      (check.verdict === 'pass' ? '.' : ', and a yield near 100 % beside a failing verdict means the corners where it fails are rare among random builds, not absent.');
    parts.push(
      `<section id="samples"><h2>Monte Carlo</h2><p>${e(`${mc.samples.toLocaleString('en')} samples (${mc.distribution}, seed ${mc.seed}): yield `)}<strong>${e(pct(mc.yield))}</strong>${e(`, 95 % interval ${pct(mc.interval[0])} to ${pct(mc.interval[1])}.`)}</p><p id="yield-counts">${e(counts)}</p>${
        mc.correlated.length ? `<p>Parts that go most with failing builds: ${mc.correlated.map((c) => e(`${c.kind} ${c.target} (${c.correlation.toFixed(2)})`)).join(', ')}.</p>` : ''
      }${histograms.length > 0 ? `<p>${e(`The ${plural(histograms.length, 'net')} with the smallest margins over the samples (by their 1st percentile), in the order of the table of nets:`)}</p>` : ''}<div class="plots">${plots.join('')}</div></section>`,
    );
  }

  if (input.sweep) {
    const sw = input.sweep;
    const points = sw.grid.flat();
    const passing = points.filter((p) => p.pass).length;
    const summary =
      passing === 0
        ? `Every one of the ${points.length} points fails: the design fails its worst-case check at every ${sw.axes.length > 1 ? 'pair of rail voltages' : `voltage of ${sw.axes[0]!.rail}`} swept, so no supply setting in this range makes it work.`
        : passing === points.length
          ? `Every one of the ${points.length} points passes.`
          : `${passing} of the ${points.length} points pass.`;
    const windows = sw.window.map((w) => `<li>${e(`${w.rail}: ${w.low === undefined ? 'the nominal point fails' : `${w.low} V to ${w.high} V${w.position === undefined ? '' : `, nominal at ${Math.round(w.position * 100)} %`}`}`)}</li>`).join('');
    parts.push(`<section id="sweep"><h2>Supply window</h2><p id="sweep-summary" class="${passing === 0 ? 'fail' : ''}">${e(summary)}</p>${await plot('Each cell is the worst-case check at those rail voltages; the ring marks the nominal point.', sweepChart(sw))}<ul>${windows}</ul></section>`);
  }

  parts.push(netsTable);
  parts.push(`<section id="facts"><h2>Design facts</h2>${facts(design, input.nominal)}</section>`);
  parts.push(`<section id="definitions"><h2>What the figures mean</h2><dl>${definitionKeys().map((k) => `<dt>${e(DEFINITION_HEADINGS[k].html)}</dt><dd>${e(DEFINITIONS[k])}</dd>`).join('')}</dl></section>`);

  return `${REPORT_MARK}
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1"><title>${escapeHtml(title)} — tubemargin</title><style>${STYLE}</style></head>
<body>${parts.filter(Boolean).join('\n')}<footer>Made by tubemargin. It checks logic margins, not safety.</footer></body></html>
`;
}

export interface PulseReportInput {
  design: Design;
  source: string;
  run: PulseRun;
  /** Each driven input's waveform, as written. */
  inputs: ReadonlyMap<string, string>;
  limit?: ClockLimitResult;
  /** The nets to plot; the watched nets where absent. */
  plotted?: string[];
  /** The levels the waveforms reach, for the safety cautions. */
  applied?: readonly AppliedLevel[];
  /** The states asked for at the end (`--expect`), and those of them not met. */
  expected?: readonly { net: string; high: boolean }[];
  missed?: readonly { net: string; high: boolean }[];
  /** Warnings of the run (a model used outside its trusted range, a hint that did not hold), as `pulse` prints them on stderr. */
  warnings?: readonly Diagnostic[];
}

/**
 * The verdict of a simulation in time, as `pulse` exits: FAIL when the run stopped early,
 * a state asked for at the end is not met, or the clock fails at the given period; PASS
 * when something was asked and all of it holds; DONE when nothing was asked.
 */
export function pulseVerdict(input: Pick<PulseReportInput, 'run' | 'limit' | 'expected' | 'missed'>): { kind: 'pass' | 'fail' | 'done'; text: string } {
  const { run: r, limit: l } = input;
  const si = (x: number | undefined, unit: string) => (x === undefined ? '—' : formatSI(x, unit));
  const expected = input.expected ?? [];
  const missed = input.missed ?? [];
  const wanted = (s: { net: string; high: boolean }) => `${s.net} should be ${s.high ? 1 : 0}`;
  if (!r.run.ok) return { kind: 'fail', text: `FAIL: the run stopped early, at ${si(r.run.times[r.run.times.length - 1], 's')}: ${r.run.diagnostics.find((d) => d.severity === 'error')?.message ?? 'no reason given'}.` };
  const fails: string[] = [];
  if (missed.length > 0) fails.push(`${missed.length} of ${plural(expected.length, 'state')} asked for at the end ${missed.length === 1 ? 'is' : 'are'} not met (${missed.slice(0, 4).map(wanted).join(', ')}${missed.length > 4 ? ', …' : ''})`);
  if (l && l.passing === undefined) fails.push(`the clock fails at the given period, ${si(l.givenPeriod, 's')}${l.failing ? `, in the ${l.failing.corner} corner` : ''}`);
  if (fails.length > 0) return { kind: 'fail', text: `FAIL: ${fails.join('; ')}.` };
  const held: string[] = [];
  if (expected.length > 0) held.push(`every state asked for at the end holds (${plural(expected.length, 'net')})`);
  if (l && l.passing !== undefined) held.push(`a clock period of ${si(l.passing, 's')} (${si(1 / l.passing, 'Hz')}) counts as the given clock does in every corner`);
  if (held.length > 0) return { kind: 'pass', text: `PASS: the run finished; ${held.join('; ')}.` };
  return { kind: 'done', text: 'DONE: the run finished. Nothing was asked of it (--expect, --fastest), so it neither passes nor fails: the states after each pulse are below.' };
}

/**
 * The page of a simulation in time: the verdict, the inputs, the run's warnings (a model
 * outside its trusted range), the cautions, the waveforms as small multiples (one row a
 * net, the driven inputs first, nets of like range on one scale), the state after every
 * pulse and what it flipped, each stage's delay, rise and fall, and the fastest clock when
 * searched. Self-contained like the check report, and marked the same way, so it too
 * overwrites only earlier reports.
 */
export async function renderPulseReport(input: PulseReportInput): Promise<string> {
  const { design, run: r } = input;
  const e = htmlText;
  const title = design.title || '(untitled design)';
  const si = (x: number | undefined, unit: string) => (x === undefined ? '—' : formatSI(x, unit));
  const parts: string[] = [];
  const inputs = [...input.inputs].map(([k, w]) => `<li><code>${escapeHtml(`${k} = ${w}`)}</code></li>`).join('');
  const verdict = pulseVerdict(input);
  const warnings = (input.warnings ?? [])
    .map((d) => (d.code === 'outside-trusted-range' ? `The waveforms rest on a model used outside its trusted range: ${d.message}; ${d.notes.join('; ')}.` : `Warning: ${[d.message, ...d.notes].join('; ')}.`))
    .map((w) => `<p class="model-range">${e(w)}</p>`)
    .join('');
  parts.push(
    `<header><h1>${e(title)}</h1><p class="source">${e(`${input.source} · simulated ${si(r.run.times[r.run.times.length - 1], 's')} in ${r.run.accepted} steps`)}</p><p id="verdict" class="verdict ${verdict.kind}">${e(verdict.text)}</p>${warnings}<ul>${inputs}</ul></header>`,
  );
  parts.push(cautionSection(safetyCautions(design, input.applied)));
  const driven = new Set(design.parts.flatMap((p) => (p.type === 'drive' && input.inputs.has(p.name) ? [p.node] : [])));
  const nets = [...new Set([...driven, ...(input.plotted ?? r.nets)])].slice(0, MAX_WAVE_ROWS * MAX_PLOTS);
  const plots: string[] = [];
  for (let k = 0; k < nets.length; k += MAX_WAVE_ROWS) {
    const group = nets.slice(k, k + MAX_WAVE_ROWS);
    const spec = waveformChart(nets.length > MAX_WAVE_ROWS ? `Waveforms ${k / MAX_WAVE_ROWS + 1} of ${Math.ceil(nets.length / MAX_WAVE_ROWS)}` : undefined, r.run.times, group.map((net) => ({ net, volts: r.run.volts(net)!, driven: driven.has(net), thresholdVolts: logicThreshold(design, net) })));
    plots.push(`<figure class="plot">${await svgOf(spec)}<figcaption>${e('One row a net against time, each on its own voltage scale (nets of like range share one); the dashed line is the net\'s logic threshold, where its scale reaches it. Long runs keep the lowest and highest point of every stretch.')}</figcaption></figure>`);
  }
  parts.push(`<section id="waves"><h2>Waveforms</h2><div class="plots">${plots.join('')}</div></section>`);
  const bits = (s: boolean[]) => s.map((x) => (x ? '1' : '0')).join('');
  parts.push(
    `<section id="pulses"><h2>State after each pulse</h2><p>Watched nets in order: ${e(r.nets.join(', '))}.</p><table><thead><tr><th>pulse</th><th>input</th><th>at</th><th>state after</th><th>latches flipped</th></tr></thead><tbody>${r.pulses
      .map((p, i) => `<tr><td>${i + 1}</td><td>${e(p.input)}</td><td>${e(si(p.at, 's'))}</td><td><code>${bits(p.states)}</code></td><td>${e(p.flipped.join(', ') || 'none')}</td></tr>`)
      .join('')}</tbody></table></section>`,
  );
  parts.push(
    `<section id="timing"><h2>Stages that switched</h2><table><thead><tr><th>stage</th><th>longest delay</th><th>from</th><th>rise</th><th>fall</th><th>transitions</th></tr></thead><tbody>${[...r.stages]
      .sort((a, b) => (b.delay?.seconds ?? 0) - (a.delay?.seconds ?? 0))
      .map((s) => `<tr><td>${e(s.stage)}</td><td>${e(si(s.delay?.seconds, 's'))}</td><td>${e(s.delay?.from ?? '—')}</td><td>${e(si(s.rise, 's'))}</td><td>${e(si(s.fall, 's'))}</td><td>${s.transitions}</td></tr>`)
      .join('')}</tbody></table></section>`,
  );
  const l = input.limit;
  if (l) {
    const corner = (name: string) => TIMING_CORNERS.find((c) => c.name === name)?.description ?? name;
    const f = l.failing;
    const failed = f ? `At ${si(f.period, 's')} it fails in the ${f.corner} corner (${corner(f.corner)})${f.pulse > 0 ? ` after pulse ${f.pulse}: ${f.wrong.slice(0, 6).map((w) => `${w.net} should be ${w.expected ? 1 : 0}`).join(', ')}` : `: ${f.why ?? ''}`}.` : '';
    const found = l.passing === undefined ? `FAILS at the given period, ${si(l.givenPeriod, 's')}.` : `A period of ${si(l.passing, 's')} (${si(1 / l.passing, 'Hz')}) counts as the given clock does in every corner.`;
    const limiting = l.limiting ? `<p>Limiting stage: <strong>${e(l.limiting.stage)}</strong>, ${e(`delay ${si(l.limiting.delay?.seconds, 's')} from ${l.limiting.delay?.from ?? '—'}`)}.</p>` : '';
    parts.push(`<section id="fastest"><h2>Fastest clock in worst case</h2><p id="fastest-found" class="verdict ${l.passing === undefined ? 'fail' : 'pass'}">${e(found)}</p><p>${e(failed)}</p>${limiting}</section>`);
  }
  return `${REPORT_MARK}
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1"><title>${escapeHtml(title)} — tubemargin pulse</title><style>${STYLE}</style></head>
<body>${parts.filter(Boolean).join('\n')}<footer>Made by tubemargin. It checks logic margins, not safety.</footer></body></html>
`;
}

/** Tube count by type, rails and the current drawn from each, and the most loaded sections and resistors against their ratings. */
function facts(design: Design, op: OperatingPoint | undefined): string {
  const e = htmlText;
  const sections = design.parts.filter((p) => p.type === 'tube');
  const byType = new Map<string, number>();
  for (const s of sections) if (s.type === 'tube') byType.set(s.model, (byType.get(s.model) ?? 0) + 1);
  const out: string[] = [];
  out.push(`<p>${e(`${sections.length} tube sections: ${[...byType].map(([m, n]) => `${n} × ${m}`).join(', ') || 'none'}; ${design.parts.filter((p) => p.type === 'resistor').length} resistors.`)}</p>`);
  const drawn = new Map<string, number>();
  if (op) {
    const partOf = new Map(design.parts.map((p) => [p.name, p]));
    for (const r of op.resistors) {
      const p = partOf.get(r.name);
      if (p?.type !== 'resistor') continue;
      // Current leaves a rail at the end it is measured from (a → b positive).
      drawn.set(p.a, (drawn.get(p.a) ?? 0) + r.amps);
      drawn.set(p.b, (drawn.get(p.b) ?? 0) - r.amps);
    }
    for (const t of op.tubes) {
      const p = partOf.get(t.name);
      if (p?.type !== 'tube') continue;
      drawn.set(p.plate, (drawn.get(p.plate) ?? 0) + t.plateAmps);
      if (p.screen) drawn.set(p.screen, (drawn.get(p.screen) ?? 0) + t.screenAmps);
      drawn.set(p.cathode, (drawn.get(p.cathode) ?? 0) - (t.plateAmps + t.gridAmps + t.screenAmps));
    }
  }
  out.push(
    `<table><thead><tr><th>rail</th><th>volts</th><th>tolerance</th><th>current drawn (nominal)</th></tr></thead><tbody>${design.rails
      .map((r) => `<tr><td>${e(r.name)}</td><td>${r.volts}</td><td>${e(`±${(r.tol * 100).toFixed(1)} %`)}</td><td>${op ? e(formatSI(drawn.get(r.name) ?? 0, 'A')) : '—'}</td></tr>`)
      .join('')}</tbody></table>`,
  );
  if (op) {
    const ratingOf = new Map(design.models.map((m) => [m.name, m.library ? findLibraryEntry(m.library)?.ratings.plateWatts : undefined]));
    const modelOf = new Map(sections.map((s) => [s.name, s.type === 'tube' ? s.model : '']));
    const hot = op.tubes
      .map((t) => ({ name: t.name, watts: t.plateWatts, rating: ratingOf.get(modelOf.get(t.name)!) }))
      .sort((a, b) => b.watts - a.watts)
      .slice(0, 5);
    const warm = [...op.resistors].sort((a, b) => b.watts / b.ratingWatts - a.watts / a.ratingWatts).slice(0, 5);
    out.push(
      `<table><thead><tr><th>section</th><th>plate dissipation (nominal)</th><th>rating</th></tr></thead><tbody>${hot.map((t) => `<tr><td>${e(t.name)}</td><td>${e(formatReading(t.watts, 'W'))}</td><td>${t.rating === undefined ? '—' : e(formatSI(t.rating, 'W'))}</td></tr>`).join('')}</tbody></table>`,
    );
    out.push(
      `<table><thead><tr><th>resistor</th><th>power (nominal)</th><th>rating</th><th>share</th></tr></thead><tbody>${warm.map((r) => `<tr><td>${e(r.name)}</td><td>${e(formatSI(r.watts, 'W'))}</td><td>${e(formatSI(r.ratingWatts, 'W'))}</td><td>${e(`${Math.round((100 * r.watts) / r.ratingWatts)} %`)}</td></tr>`).join('')}</tbody></table>`,
    );
  }
  return out.join('');
}

const STYLE = `
body{margin:0 auto;max-width:1100px;padding:24px 32px;background:#fbf8f1;color:${PALETTE.ink};font:15px/1.5 Georgia,serif}
.drawing{overflow:auto;max-height:75vh;background:#fff;border:1px solid #e6e2d8}.drawing svg{display:block}.caption{font-size:13px;color:#444}
h1{font-size:28px;margin:0 0 4px}h2{font-size:20px;border-bottom:2px solid #e6e2d8;padding-bottom:4px;margin-top:32px}
.source{color:#6b6f80;margin:0}.verdict{font-size:20px;font-weight:bold;padding:10px 14px;border-left:8px solid}
.verdict.pass{border-color:${PALETTE.pass};background:#e4f1ec}.verdict.fail{border-color:${PALETTE.fail};background:#f6e3e5}.verdict.undecided{border-color:${PALETTE.undecided};background:#f7f0d9}.verdict.done{border-color:${PALETTE.guide};background:#eef0f3}
.model-range{border-left:4px solid ${PALETTE.undecided};padding-left:10px}#sweep-summary.fail{color:${PALETTE.fail};font-weight:bold}
.caution{border:3px double ${PALETTE.fail};padding:4px 16px;background:#fff4e0}.caution h2{border:none;color:${PALETTE.fail}}
table{border-collapse:collapse;margin:12px 0;font-size:13px}th,td{padding:3px 10px;text-align:left;border-bottom:1px solid #e6e2d8;vertical-align:top}
tr.fail td{color:${PALETTE.fail}}th{background:#efeadf}
.plots{display:flex;flex-wrap:wrap;gap:18px}figure.plot{margin:8px 0}figcaption{font-size:12px;color:#6b6f80;max-width:520px}
h3{font-size:16px;margin-bottom:2px}.alike{margin:0;color:#6b6f80;font-size:13px}dt{font-weight:bold;margin-top:6px}dd{margin-left:18px}footer{margin-top:40px;font-size:12px;color:#6b6f80}
`;
