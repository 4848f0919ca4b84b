import type { TopLevelSpec } from 'vega-lite';
import type { StageKind } from '../analysis/check.js';
import type { LatchResult } from '../analysis/latchCheck.js';
import type { MonteCarloResult } from '../analysis/monteCarlo.js';
import type { TransferCurve } from '../analysis/staticNoiseMargin.js';
import type { RailSweepResult } from '../analysis/sweep.js';
import type { NetCheck } from '../analysis/check.js';
import { estimateTextWidth, spreadLabels, stackLabels } from './labelLayout.js';

/**
 * The report's plots, each a declarative Vega-Lite spec compiled to SVG in Node by Vega
 * (no browser, no script in the page): the library lays out axes, ticks and legends and
 * escapes every label. Our own palette: ink for curves, a green-teal for what passes, a
 * brick red for what fails, a sand tone for the squares of the butterfly.
 */
export const PALETTE = { ink: '#2b2d42', pass: '#2a7f62', fail: '#b23a48', undecided: '#b08a00', guide: '#8d99ae', square: '#e9c46a' } as const;

const FONT = { font: 'Georgia, serif', labelFont: 'Georgia, serif', titleFont: 'Georgia, serif' };

/**
 * Renders a Vega-Lite spec to an SVG string. Vega and Vega-Lite are loaded here, on the
 * first chart, not when the module is: together they take about a quarter of a second to
 * load, which every command paid at start-up when only `report` and `pulse` draw.
 */
export async function svgOf(spec: TopLevelSpec): Promise<string> {
  const [{ parse, View, None }, { compile }] = await Promise.all([import('vega'), import('vega-lite')]);
  const view = new View(parse(compile(spec).spec), { renderer: 'none', logLevel: None });
  const svg = await view.toSVG();
  view.finalize();
  return svg;
}

const base = (title: string, width = 520, height = 300) => ({
  $schema: 'https://vega.github.io/schema/vega-lite/v6.json' as const,
  title: { text: title, anchor: 'start' as const, font: FONT.titleFont, fontSize: 15, color: PALETTE.ink },
  width,
  height,
  config: { font: FONT.font, axis: { labelFont: FONT.labelFont, titleFont: FONT.titleFont, gridColor: '#e6e2d8', domainColor: PALETTE.guide, tickColor: PALETTE.guide }, view: { stroke: null }, background: '#fbf8f1' },
});

// A point the sweep could not solve is left out of the plot: it is no level, and would print as NaN.
const points = (c: TransferCurve, extra: Record<string, string> = {}) =>
  Array.from({ length: c.vin.length }, (_, i) => ({ vin: c.vin[i]!, vout: c.vout[i]!, ...extra })).filter((p) => Number.isFinite(p.vin) && Number.isFinite(p.vout));

/** How many rows the margin chart draws at most: every failing and undecided net, then the weakest passing ones up to this. */
export const MAX_MARGIN_ROWS = 200;

/** One row of the margin chart. */
export interface MarginRow {
  net: string;
  status: 'fails' | 'undecided' | 'passes';
  /**
   * The figure drawn (volts): the smaller of NM_H and NM_L; for a net that feeds no grid
   * (no threshold to hold it against), how far its worse level stays on its side of the
   * logic threshold; undefined when no level of it was solved.
   */
  volts: number | undefined;
  measure: 'noise margin' | 'logic threshold' | 'none';
}

/**
 * The rows of the margin chart: every judged net (not those `check` leaves unchecked),
 * failing first, then undecided, then passing, each group in `check`'s order (weakest
 * first); passing nets beyond `MAX_MARGIN_ROWS` rows are left out (`omitted` counts them).
 *
 * Example: a design with 4 failing nets that feed no grid and 13 passing ones gives 17
 * rows, the 4 first, measured against the logic threshold.
 */
export function marginRows(nets: readonly NetCheck[]): { rows: MarginRow[]; omitted: number } {
  const rank = { fails: 0, undecided: 1, passes: 2 } as const;
  const rows = nets
    .filter((n) => n.status !== 'unchecked')
    .map((n): MarginRow => {
      const status = n.status === 'fail' ? 'fails' : n.status === 'undecided' ? 'undecided' : 'passes';
      const margins = [n.margin.high, n.margin.low].filter((m): m is number => m !== undefined && Number.isFinite(m));
      if (margins.length > 0) return { net: n.name, status, volts: Math.min(...margins), measure: 'noise margin' };
      const sides = [n.high && n.high.worst - n.thresholdVolts, n.low && n.thresholdVolts - n.low.worst].filter((m): m is number => m !== undefined && Number.isFinite(m));
      return sides.length > 0 ? { net: n.name, status, volts: Math.min(...sides), measure: 'logic threshold' } : { net: n.name, status, volts: undefined, measure: 'none' };
    })
    .map((row, i) => ({ row, i }))
    .sort((a, b) => rank[a.row.status] - rank[b.row.status] || a.i - b.i)
    .map(({ row }) => row);
  const kept = Math.max(MAX_MARGIN_ROWS, rows.filter((r) => r.status !== 'passes').length);
  return { rows: rows.slice(0, kept), omitted: Math.max(0, rows.length - kept) };
}

/** The colour of each status, in the order the legends list them. */
const STATUS_COLOURS: Record<MarginRow['status'], string> = { fails: PALETTE.fail, undecided: PALETTE.undecided, passes: PALETTE.pass };

const statusScale = (present: Iterable<MarginRow['status']>) => {
  const domain = (Object.keys(STATUS_COLOURS) as MarginRow['status'][]).filter((s) => new Set(present).has(s));
  return { domain, range: domain.map((s) => STATUS_COLOURS[s]) };
};

const MARGIN_WIDTH = 520;

/** The margin of every judged net against the required one, failing first (`marginRows`); a net with no level solved gets a pale band across the plot. */
export function marginChart(rows: readonly MarginRow[], required: number): TopLevelSpec {
  const values = rows.map((r) => ({
    net: r.net,
    margin: r.volts ?? null,
    status: r.status,
    note: r.measure === 'logic threshold' ? 'against its logic threshold: it feeds no grid' : r.measure === 'none' ? 'no level solved: see the table' : '',
  }));
  const x = { field: 'margin', type: 'quantitative', title: 'worst-case margin (V): the smaller of NM_H and NM_L, or as noted' } as const;
  const y = { field: 'net', type: 'nominal', sort: null, title: null } as const;
  // Full-strength symbols: the legend would otherwise take the pale bands' opacity.
  const color = { field: 'status', type: 'nominal', scale: statusScale(rows.map((r) => r.status)), legend: { title: null, orient: 'bottom', symbolOpacity: 1 } } as const;
  return {
    ...base('Margin of each net, failing first, then weakest first', MARGIN_WIDTH, Math.max(60, values.length * 16)),
    data: { values },
    layer: [
      { transform: [{ filter: 'datum.margin !== null' }], mark: { type: 'bar', height: 11 }, encoding: { y, x, color } },
      {
        transform: [{ filter: 'datum.margin === null' }],
        mark: { type: 'bar', height: 11, opacity: 0.3 },
        encoding: { y, x: { value: 0 }, x2: { value: 'width' }, color },
      },
      { mark: { type: 'text', align: 'left', baseline: 'middle', fontSize: 10, color: PALETTE.ink }, encoding: { y, x: { value: MARGIN_WIDTH + 6 }, text: { field: 'note' } } },
      { mark: { type: 'rule', color: PALETTE.ink, strokeDash: [4, 3] }, encoding: { x: { datum: required } } },
    ],
  } as TopLevelSpec;
}

/** The ends of a domain holding `lo`…`hi`, rounded out to the steps of about `ticks` ticks (1, 2 or 5 times a power of ten). */
function niceDomain(lo: number, hi: number, ticks = 8): [number, number] {
  if (!(hi > lo)) [lo, hi] = [lo - 1, hi + 1];
  const raw = (hi - lo) / ticks;
  const power = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * power).find((s) => s >= raw * (1 - 1e-9))!;
  return [Math.floor(lo / step + 1e-9) * step, Math.ceil(hi / step - 1e-9) * step];
}

const TRANSFER_WIDTH = 420;
const TRANSFER_HEIGHT = 260;
const GUIDE_FONT = 10;
/** Rows of guide labels are this far apart (pixels): a 10 px face's box is about 12 px tall. */
const GUIDE_ROW = 13;

/** The levels a stage kind's transfer chart marks: VIL and VIH and the driving net's levels on the input axis, the stage's own levels on the output axis. */
export function transferGuides(kind: StageKind): { at: number; axis: 'x' | 'y'; label: string }[] {
  const guides: { at: number | undefined; axis: 'x' | 'y'; label: string }[] = [
    { at: kind.input.low, axis: 'x', label: 'VOL in' },
    { at: kind.vil.worst, axis: 'x', label: 'VIL' },
    { at: kind.vih.worst, axis: 'x', label: 'VIH' },
    { at: kind.input.high, axis: 'x', label: 'VOH in' },
    { at: kind.output.low, axis: 'y', label: 'VOL' },
    { at: kind.output.high, axis: 'y', label: 'VOH' },
  ];
  return guides.flatMap((g) => (g.at !== undefined && Number.isFinite(g.at) ? [{ at: g.at, axis: g.axis, label: g.label }] : []));
}

/**
 * A stage kind's transfer curve (nominal, and at the corners that switch it early and
 * late) with VIL, VIH, VOL and VOH marked. Each guide's label carries its value and sits
 * outside the plot: those of the input axis above it, in rows so that none overlaps
 * another, those of the output axis to its right, pushed apart where they would touch.
 * When worst-case VOL lies above VOH, both are drawn in the failing colour.
 */
export function transferChart(kind: StageKind): TopLevelSpec {
  const values = [...points(kind.curves.nominal, { curve: 'nominal' }), ...points(kind.curves.early, { curve: 'switches earliest' }), ...points(kind.curves.late, { curve: 'switches latest' })];
  const guides = transferGuides(kind);
  // reduce, not spread: a long curve holds more points than a call takes arguments; no point at all gives 0–1.
  const extent = (xs: number[]): [number, number] => {
    const finite = xs.filter(Number.isFinite);
    return finite.length === 0 ? [0, 1] : niceDomain(finite.reduce((a, b) => Math.min(a, b)), finite.reduce((a, b) => Math.max(a, b)));
  };
  const xDomain = extent([...values.map((p) => p.vin), ...guides.filter((g) => g.axis === 'x').map((g) => g.at)]);
  const yDomain = extent([...values.map((p) => p.vout), ...guides.filter((g) => g.axis === 'y').map((g) => g.at)]);
  const px = (v: number) => ((v - xDomain[0]) / (xDomain[1] - xDomain[0])) * TRANSFER_WIDTH;
  const py = (v: number) => TRANSFER_HEIGHT - ((v - yDomain[0]) / (yDomain[1] - yDomain[0])) * TRANSFER_HEIGHT;
  const collapsed = kind.output.low !== undefined && kind.output.high !== undefined && kind.output.low >= kind.output.high;
  // A typographic minus, as the axes print it.
  const text = (g: { at: number; label: string }) => `${g.label} ${g.at.toFixed(2).replace('-', '−')} V`;
  const xGuides = guides.filter((g) => g.axis === 'x');
  // A label starts just right of its line, or ends just left of it where it would run far past the plot.
  const xLabels = xGuides.map((g) => {
    const width = estimateTextWidth(text(g), GUIDE_FONT);
    const at = px(g.at) + width + 3 > TRANSFER_WIDTH + 30 ? px(g.at) - width - 3 : px(g.at) + 3;
    return { ...g, text: text(g), x: at, width };
  });
  const rows = stackLabels(xLabels.map((l) => ({ at: l.x, width: l.width })));
  const yGuides = guides.filter((g) => g.axis === 'y');
  const ys = spreadLabels(yGuides.map((g) => py(g.at)), GUIDE_ROW, 0, TRANSFER_HEIGHT);
  const xScale = { domain: xDomain, nice: false, zero: false };
  const yScale = { domain: yDomain, nice: false, zero: false };
  return {
    ...base(`${kind.stage} from ${kind.driving}${kind.count > 1 ? ` (and ${kind.count - 1} more input${kind.count === 2 ? '' : 's'} alike)` : ''}`, TRANSFER_WIDTH, TRANSFER_HEIGHT),
    layer: [
      {
        data: { values },
        mark: { type: 'line', strokeWidth: 1.6 },
        encoding: {
          x: { field: 'vin', type: 'quantitative', title: `${kind.driving} (V)`, scale: xScale },
          y: { field: 'vout', type: 'quantitative', title: `${kind.stage} (V)`, scale: yScale },
          color: { field: 'curve', type: 'nominal', scale: { domain: ['nominal', 'switches earliest', 'switches latest'], range: [PALETTE.ink, PALETTE.pass, PALETTE.fail] }, legend: { title: null, orient: 'bottom' } },
        },
      },
      { data: { values: xGuides }, mark: { type: 'rule', strokeDash: [3, 3], color: PALETTE.guide }, encoding: { x: { field: 'at', type: 'quantitative', scale: xScale } } },
      { data: { values: yGuides }, mark: { type: 'rule', strokeDash: [3, 3], color: PALETTE.guide }, encoding: { y: { field: 'at', type: 'quantitative', scale: yScale } } },
      {
        data: { values: xLabels.map((l, i) => ({ text: l.text, x: l.x, y: -4 - rows[i]! * GUIDE_ROW })) },
        mark: { type: 'text', align: 'left', baseline: 'bottom', color: PALETTE.ink, fontSize: GUIDE_FONT },
        encoding: { x: { field: 'x', type: 'quantitative', scale: null }, y: { field: 'y', type: 'quantitative', scale: null }, text: { field: 'text' } },
      },
      {
        data: { values: yGuides.map((g, i) => ({ text: text(g), y: ys[i]! })) },
        mark: { type: 'text', align: 'left', baseline: 'middle', color: collapsed ? PALETTE.fail : PALETTE.ink, fontSize: GUIDE_FONT },
        encoding: { x: { value: TRANSFER_WIDTH + 5 }, y: { field: 'y', type: 'quantitative', scale: null }, text: { field: 'text' } },
      },
    ],
  } as TopLevelSpec;
}

/** A latch's butterfly: its two nominal transfer curves in one plane, with the largest square of each lobe. */
export function butterflyChart(latch: LatchResult): TopLevelSpec | undefined {
  const b = latch.butterfly;
  if (!b) return undefined;
  const [a, c] = latch.nets;
  const [f1, f2] = b.curves;
  const values = [...points(f1, { curve: `${c} from ${a}` }), ...Array.from({ length: f2.vin.length }, (_, i) => ({ vin: f2.vout[i]!, vout: f2.vin[i]!, curve: `${a} from ${c}` })).filter((p) => Number.isFinite(p.vin) && Number.isFinite(p.vout))];
  const squares = b.nominal.bistable ? b.nominal.squares.map((q) => ({ x: q.x, y: q.y, x2: q.x + q.side, y2: q.y + q.side })) : [];
  return {
    ...base(`Latch ${a} ↔ ${c}: SNM ${latch.snm.nominal.toFixed(2)} V nominal, ${latch.snm.worst.toFixed(2)} V worst`, 320, 320),
    layer: [
      { data: { values: squares }, mark: { type: 'rect', color: PALETTE.square, opacity: 0.55, stroke: PALETTE.ink, strokeWidth: 0.8 }, encoding: { x: { field: 'x', type: 'quantitative' }, x2: { field: 'x2' }, y: { field: 'y', type: 'quantitative' }, y2: { field: 'y2' } } },
      {
        data: { values },
        mark: { type: 'line', strokeWidth: 1.6, order: false },
        encoding: {
          x: { field: 'vin', type: 'quantitative', title: `${a} (V)` },
          y: { field: 'vout', type: 'quantitative', title: `${c} (V)` },
          color: { field: 'curve', type: 'nominal', scale: { range: [PALETTE.ink, PALETTE.fail] }, legend: { title: null, orient: 'bottom', labelLimit: 400 } },
        },
      },
    ],
  } as TopLevelSpec;
}

/** The Monte Carlo distribution of one net's margin, with the required margin marked. */
export function histogramChart(h: MonteCarloResult['histograms'][number], required: number): TopLevelSpec {
  const width = (h.to - h.from) / h.counts.length || 1;
  const values = h.counts.map((count, i) => ({ from: h.from + i * width, to: h.from + (i + 1) * width, count, status: h.from + (i + 0.5) * width < required ? 'fails' : 'passes' }));
  return {
    ...base(`${h.net}: noise margin over the samples`, 360, 180),
    layer: [
      {
        data: { values },
        mark: { type: 'rect' },
        encoding: {
          x: { field: 'from', type: 'quantitative', title: 'noise margin (V)' },
          x2: { field: 'to' },
          y: { field: 'count', type: 'quantitative', title: 'samples' },
          color: { field: 'status', type: 'nominal', scale: { domain: ['passes', 'fails'], range: [PALETTE.pass, PALETTE.fail] }, legend: null },
        },
      },
      { data: { values: [{}] }, mark: { type: 'rule', color: PALETTE.ink, strokeDash: [4, 3] }, encoding: { x: { datum: required } } },
    ],
  } as TopLevelSpec;
}

/**
 * The supply sweep's map: each grid point a cell, passing or failing, the nominal point
 * ringed. The cells tile the plot from edge to edge, so the first column and row meet the
 * axes rather than straddle them.
 */
export function sweepChart(sweep: RailSweepResult): TopLevelSpec {
  const [a1, a2] = sweep.axes;
  // Half a step either side of each value (a single value gets ±0.5 V).
  const cells = (values: number[]) => {
    const half = values.length > 1 ? Math.abs(values[1]! - values[0]!) / 2 : 0.5;
    return values.map((v) => [v - half, v + half] as const);
  };
  const xs = cells(a1!.values);
  const ys = a2 ? cells(a2.values) : [[-0.5, 0.5] as const];
  const values = sweep.grid.flatMap((row, j) => row.map((p, i) => ({ x: xs[i]![0], x2: xs[i]![1], y: ys[j]![0], y2: ys[j]![1], status: p.pass ? 'passes' : 'fails' })));
  const nominal = [{ x: a1!.values[sweep.nominalPoint[0]!]!, y: a2 ? a2.values[sweep.nominalPoint[1]!]! : 0 }];
  const span = (c: (readonly [number, number])[]) => [Math.min(...c.map((e) => e[0])), Math.max(...c.map((e) => e[1]))];
  const xScale = { domain: span(xs), nice: false, zero: false };
  const yScale = { domain: span(ys), nice: false, zero: false };
  return {
    ...base(`Supply window, heaters at ${Math.round(sweep.heater * 100)} %`, 420, a2 ? 300 : 40),
    layer: [
      {
        data: { values },
        mark: { type: 'rect', stroke: '#fbf8f1', strokeWidth: 1 },
        encoding: {
          x: { field: 'x', type: 'quantitative', title: `${a1!.rail} (V)`, scale: xScale },
          x2: { field: 'x2' },
          y: { field: 'y', type: 'quantitative', title: a2 ? `${a2.rail} (V)` : null, scale: yScale, axis: a2 ? {} : null },
          y2: { field: 'y2' },
          color: { field: 'status', type: 'nominal', scale: statusScale(values.map((p) => p.status as 'passes' | 'fails')), legend: { title: null, orient: 'bottom' } },
        },
      },
      { data: { values: nominal }, mark: { type: 'point', size: 160, color: PALETTE.ink, strokeWidth: 2 }, encoding: { x: { field: 'x', type: 'quantitative', scale: xScale }, y: { field: 'y', type: 'quantitative', scale: yScale } } },
    ],
  } as TopLevelSpec;
}

/** Most points drawn per trace; longer runs keep each bucket's lowest and highest point, so no spike is lost. */
const MAX_TRACE_POINTS = 1200;

/** Most rows of waveforms in one plot: longer lists go on in further plots. */
export const MAX_WAVE_ROWS = 12;

/** One net's waveform for `waveformChart`: a driven input is drawn in another colour than a net of the circuit. */
export interface Trace {
  net: string;
  volts: Float64Array;
  driven: boolean;
  /** The voltage the net reads as high from; drawn dashed where it falls within the row's scale. */
  thresholdVolts?: number;
}

/**
 * The voltage range each trace is drawn over: nets whose lowest and highest points lie
 * within a fifth of their swing (and at least a volt) of each other's share one range,
 * the union of theirs rounded out to whole ticks; a net that hardly moves gets at least a
 * volt either side. So two nets of like swing can be compared, and a 16–26 V net is not
 * drawn flat on the scale of a 0–150 V input.
 *
 * Example: nets swinging 16–26 V, 16.2–26.1 V and 0–150 V give 16–28 V twice (the union,
 * 16–26.1 V, rounded out to steps of 2 V) and 0–160 V.
 */
export function traceRanges(traces: readonly { volts: Float64Array }[]): [number, number][] {
  const extents = traces.map(({ volts }) => {
    let lo = Infinity;
    let hi = -Infinity;
    for (const v of volts) if (Number.isFinite(v)) [lo, hi] = [Math.min(lo, v), Math.max(hi, v)];
    return [lo, hi] as const;
  });
  const groups: { lo: number; hi: number }[] = [];
  const groupOf = extents.map(([lo, hi]) => {
    if (!Number.isFinite(lo)) return -1;
    const like = groups.findIndex((g) => {
      const room = Math.max(1, 0.2 * Math.max(hi - lo, g.hi - g.lo));
      return Math.abs(g.lo - lo) <= room && Math.abs(g.hi - hi) <= room;
    });
    if (like >= 0) {
      groups[like] = { lo: Math.min(groups[like]!.lo, lo), hi: Math.max(groups[like]!.hi, hi) };
      return like;
    }
    return groups.push({ lo, hi }) - 1;
  });
  return groupOf.map((k) => {
    if (k < 0) return [-1, 1];
    const { lo, hi } = groups[k]!;
    return hi - lo < 2 ? niceDomain((lo + hi) / 2 - 1, (lo + hi) / 2 + 1) : niceDomain(lo, hi);
  });
}

const WAVE_WIDTH = 620;
const WAVE_ROW_HEIGHT = 46;

/**
 * Voltages of nets over time, from a simulation, as small multiples: one row per net on
 * a common time axis, each on its own voltage scale shared with the nets of like range
 * (`traceRanges`), so that no trace hides another and a small swing is not drawn flat;
 * the net's logic threshold dashed where the scale reaches it. `title` is left out where
 * the page's heading says it.
 */
export function waveformChart(title: string | undefined, times: readonly number[], traces: readonly Trace[]): TopLevelSpec {
  const end = times[times.length - 1] ?? 0;
  const [scale, unit] = end < 1e-3 ? [1e6, 'µs'] : end < 1 ? [1e3, 'ms'] : [1, 's'];
  const buckets = Math.max(1, Math.ceil(times.length / (MAX_TRACE_POINTS / 2)));
  const ranges = traceRanges(traces);
  // The frame's schema, look and title; each row has its own size.
  const frame = base(title ?? '', WAVE_WIDTH, WAVE_ROW_HEIGHT);
  return {
    $schema: frame.$schema,
    config: frame.config,
    ...(title === undefined ? {} : { title: frame.title }),
    spacing: 8,
    vconcat: traces.map(({ net, volts, driven, thresholdVolts }, row) => {
      const values: { t: number; v: number }[] = [];
      for (let i = 0; i < times.length; i += buckets) {
        let lo = i;
        let hi = i;
        for (let j = i; j < Math.min(times.length, i + buckets); j++) {
          if (volts[j]! < volts[lo]!) lo = j;
          if (volts[j]! > volts[hi]!) hi = j;
        }
        for (const k of lo <= hi ? [lo, hi] : [hi, lo]) if (Number.isFinite(volts[k]!)) values.push({ t: times[k]! * scale, v: volts[k]! });
      }
      const last = row === traces.length - 1;
      const [lo, hi] = ranges[row]!;
      const x = { field: 't', type: 'quantitative', scale: { domain: [0, end * scale], nice: false }, axis: last ? { title: `time (${unit})` } : { title: null, labels: false, ticks: false } };
      const y = { field: 'v', type: 'quantitative', scale: { domain: [lo, hi], nice: false, zero: false }, axis: { title: 'V', titleAngle: 0, titleAlign: 'right', titleBaseline: 'middle', tickCount: 3 } };
      const threshold = thresholdVolts !== undefined && thresholdVolts > lo && thresholdVolts < hi ? [{ v: thresholdVolts }] : [];
      return {
        title: { text: `${net}${driven ? ' (driven)' : ''}`, anchor: 'start', frame: 'group', fontSize: 12, offset: 4, font: FONT.titleFont, color: PALETTE.ink },
        width: WAVE_WIDTH,
        height: WAVE_ROW_HEIGHT,
        layer: [
          { data: { values: threshold }, mark: { type: 'rule', strokeDash: [3, 3], color: PALETTE.guide }, encoding: { y } },
          { data: { values }, mark: { type: 'line', strokeWidth: 1.4, interpolate: 'linear', color: driven ? '#3d5a80' : PALETTE.ink }, encoding: { x, y } },
        ],
      };
    }),
  } as TopLevelSpec;
}
