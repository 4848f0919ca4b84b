import type { TopLevelSpec } from 'vega-lite';
import type { StageKind } from '../analysis/check.js';
import type { LatchResult } from '../analysis/latchCheck.js';
import type { MonteCarloResult } from '../analysis/monteCarlo.js';
import type { TransferCurve } from '../analysis/staticNoiseMargin.js';
import type { RailSweepResult } from '../analysis/sweep.js';
import type { NetCheck } from '../analysis/check.js';

/**
 * The report's plots, each a declarative Vega-Lite spec compiled to SVG in Node by Vega
 * (no browser, no script in the page): the library lays out axes, ticks and legends and
 * escapes every label. Our own palette: ink for curves, a green-teal for what passes, a
 * brick red for what fails, a sand tone for the squares of the butterfly.
 */
export const PALETTE = { ink: '#2b2d42', pass: '#2a7f62', fail: '#b23a48', guide: '#8d99ae', square: '#e9c46a' } as const;

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

/** Every net's smaller noise margin against the required one, weakest first (at most 40 nets). */
export function marginChart(nets: readonly NetCheck[], required: number): TopLevelSpec {
  const values = nets
    .filter((n) => n.margin.high !== undefined || n.margin.low !== undefined)
    .slice(0, 40)
    .map((n) => ({ net: n.name, margin: Math.min(n.margin.high ?? Infinity, n.margin.low ?? Infinity), status: n.status === 'fail' ? 'fails' : 'passes' }));
  return {
    ...base('Noise margin of each net, weakest first', 520, Math.max(60, values.length * 16)),
    data: { values },
    layer: [
      {
        mark: { type: 'bar', height: 11 },
        encoding: {
          y: { field: 'net', type: 'nominal', sort: null, title: null },
          x: { field: 'margin', type: 'quantitative', title: 'smaller of NM_H and NM_L, worst case (V)' },
          color: { field: 'status', type: 'nominal', scale: { domain: ['passes', 'fails'], range: [PALETTE.pass, PALETTE.fail] }, legend: { title: null, orient: 'bottom' } },
        },
      },
      { mark: { type: 'rule', color: PALETTE.ink, strokeDash: [4, 3] }, encoding: { x: { datum: required } } },
    ],
  } as TopLevelSpec;
}

/** A stage kind's transfer curve (nominal, and at the corners that switch it early and late) with VIL, VIH, VOL and VOH marked. */
export function transferChart(kind: StageKind): TopLevelSpec {
  const values = [...points(kind.curves.nominal, { curve: 'nominal' }), ...points(kind.curves.early, { curve: 'switches earliest' }), ...points(kind.curves.late, { curve: 'switches latest' })];
  const marks: { at: number; axis: 'x' | 'y'; label: string }[] = [];
  if (kind.vil.worst !== undefined) marks.push({ at: kind.vil.worst, axis: 'x', label: 'VIL' });
  if (kind.vih.worst !== undefined) marks.push({ at: kind.vih.worst, axis: 'x', label: 'VIH' });
  if (kind.input.low !== undefined) marks.push({ at: kind.input.low, axis: 'x', label: 'VOL in' });
  if (kind.input.high !== undefined) marks.push({ at: kind.input.high, axis: 'x', label: 'VOH in' });
  if (kind.output.low !== undefined) marks.push({ at: kind.output.low, axis: 'y', label: 'VOL' });
  if (kind.output.high !== undefined) marks.push({ at: kind.output.high, axis: 'y', label: 'VOH' });
  return {
    ...base(`${kind.stage} from ${kind.driving}${kind.count > 1 ? ` (and ${kind.count - 1} more input${kind.count === 2 ? '' : 's'} alike)` : ''}`, 420, 260),
    layer: [
      {
        data: { values },
        mark: { type: 'line', strokeWidth: 1.6 },
        encoding: {
          x: { field: 'vin', type: 'quantitative', title: `${kind.driving} (V)` },
          y: { field: 'vout', type: 'quantitative', title: `${kind.stage} (V)` },
          color: { field: 'curve', type: 'nominal', scale: { domain: ['nominal', 'switches earliest', 'switches latest'], range: [PALETTE.ink, PALETTE.pass, PALETTE.fail] }, legend: { title: null, orient: 'bottom' } },
        },
      },
      {
        data: { values: marks.filter((m) => m.axis === 'x') },
        layer: [
          { mark: { type: 'rule', strokeDash: [3, 3], color: PALETTE.guide }, encoding: { x: { field: 'at', type: 'quantitative' } } },
          { mark: { type: 'text', align: 'left', dx: 3, dy: -4, color: PALETTE.ink, fontSize: 10 }, encoding: { x: { field: 'at', type: 'quantitative' }, y: { value: 8 }, text: { field: 'label' } } },
        ],
      },
      {
        data: { values: marks.filter((m) => m.axis === 'y') },
        layer: [
          { mark: { type: 'rule', strokeDash: [3, 3], color: PALETTE.guide }, encoding: { y: { field: 'at', type: 'quantitative' } } },
          { mark: { type: 'text', align: 'right', dy: -4, color: PALETTE.ink, fontSize: 10 }, encoding: { y: { field: 'at', type: 'quantitative' }, x: { value: 415 }, text: { field: 'label' } } },
        ],
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

/** The supply sweep's map: each grid point passing or failing, the nominal point ringed. */
export function sweepChart(sweep: RailSweepResult): TopLevelSpec {
  const [a1, a2] = sweep.axes;
  const values = sweep.grid.flatMap((row, j) => row.map((p, i) => ({ x: a1!.values[i]!, y: a2 ? a2.values[j]! : 0, status: p.pass ? 'passes' : 'fails' })));
  const nominal = [{ x: a1!.values[sweep.nominalPoint[0]!]!, y: a2 ? a2.values[sweep.nominalPoint[1]!]! : 0 }];
  return {
    ...base(`Supply window, heaters at ${Math.round(sweep.heater * 100)} %`, 420, a2 ? 300 : 60),
    layer: [
      {
        data: { values },
        mark: { type: 'square', size: 90 },
        encoding: {
          x: { field: 'x', type: 'quantitative', title: `${a1!.rail} (V)`, scale: { zero: false } },
          y: { field: 'y', type: 'quantitative', title: a2 ? `${a2.rail} (V)` : null, scale: { zero: false } },
          color: { field: 'status', type: 'nominal', scale: { domain: ['passes', 'fails'], range: [PALETTE.pass, PALETTE.fail] }, legend: { title: null, orient: 'bottom' } },
        },
      },
      { data: { values: nominal }, mark: { type: 'point', size: 260, color: PALETTE.ink, strokeWidth: 2 }, encoding: { x: { field: 'x', type: 'quantitative' }, y: { field: 'y', type: 'quantitative' } } },
    ],
  } as TopLevelSpec;
}

/** Line colours for up to eight nets on one plot: our own, dark enough on the page's cream. */
const TRACE_COLOURS = [PALETTE.ink, PALETTE.fail, PALETTE.pass, '#3d5a80', '#c77d2e', '#7b4b94', '#5c6f2a', PALETTE.guide];

/** Most points drawn per trace; longer runs keep each bucket's lowest and highest point, so no spike is lost. */
const MAX_TRACE_POINTS = 1200;

/** Voltages of up to eight nets over time, from a simulation. */
export function waveformChart(title: string, times: readonly number[], traces: readonly { net: string; volts: Float64Array }[]): TopLevelSpec {
  const end = times[times.length - 1] ?? 0;
  const [scale, unit] = end < 1e-3 ? [1e6, 'µs'] : end < 1 ? [1e3, 'ms'] : [1, 's'];
  const buckets = Math.max(1, Math.ceil(times.length / (MAX_TRACE_POINTS / 2)));
  const values = traces.slice(0, TRACE_COLOURS.length).flatMap(({ net, volts }) => {
    const out: { t: number; v: number; net: string }[] = [];
    for (let i = 0; i < times.length; i += buckets) {
      let lo = i;
      let hi = i;
      for (let j = i; j < Math.min(times.length, i + buckets); j++) {
        if (volts[j]! < volts[lo]!) lo = j;
        if (volts[j]! > volts[hi]!) hi = j;
      }
      for (const k of lo <= hi ? [lo, hi] : [hi, lo]) out.push({ t: times[k]! * scale, v: volts[k]!, net });
    }
    return out;
  });
  const nets = traces.slice(0, TRACE_COLOURS.length).map((t) => t.net);
  return {
    ...base(title, 620, 300),
    data: { values },
    mark: { type: 'line', strokeWidth: 1.4, interpolate: 'linear' },
    encoding: {
      x: { field: 't', type: 'quantitative', title: `time (${unit})` },
      y: { field: 'v', type: 'quantitative', title: 'volts' },
      color: { field: 'net', type: 'nominal', scale: { domain: nets, range: TRACE_COLOURS.slice(0, nets.length) }, legend: { title: null, orient: 'bottom' } },
    },
  } as TopLevelSpec;
}
