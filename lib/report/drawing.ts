import type { ElkNode } from 'elkjs/lib/elk-api.js';
import type { CheckResult, NetCheck } from '../analysis/check.js';
import type { Design, Part } from '../design/model.js';
import type { StageGraph } from '../graph/stageGraph.js';
import { entry } from '../lists.js';
import { escapeHtml } from './format.js';

/**
 * A drawing of a design as SVG: each stage a box with one pin per input (a NOR shows
 * several), each logic net one group of wires from its driver to every input it feeds,
 * coloured by the net's worst-case slack from `check`; the inputs from outside (drives,
 * switches, buttons) down the left edge, the rails in a line along the top, and each latch
 * as its two stages in one unit, their cross-coupling drawn inside it. The layered layout
 * with ports is elkjs's (loaded only here, when a drawing is asked for).
 *
 * Big designs fold: above `FOLD_ABOVE` stages, each block instance becomes one box with
 * its ports, and each array (of instances, or of stages named `q[0]`, `q[1]`, …) one box
 * with a count; a net then is drawn once per name pattern (`q[…]` for every `q[i]`) that
 * crosses between boxes.
 */

/** The first line of every drawing: `show --svg` overwrites a file only when it starts so (its own earlier drawing). */
export const DRAWING_MARK = '<!-- tubemargin drawing -->';

/** Designs with more stages than this are drawn folded unless asked otherwise. */
export const FOLD_ABOVE = 200;

/** Longest name a label shows whole; longer ones end in an ellipsis and are given whole in the tooltip. */
export const LABEL_CHARS = 24;

export interface DrawingOptions {
  /** Fold instances and arrays into boxes (default: when the design has more than `FOLD_ABOVE` stages). */
  fold?: boolean;
  /** `check`'s results, to colour the nets by; without, every net is drawn plain. */
  check?: CheckResult;
  /** Where a click on a net goes (given the net, or a folded pattern's weakest net); none without. */
  link?: (net: string) => string;
}

/** What a drawing holds, for tests and captions. */
export interface Drawing {
  svg: string;
  folded: boolean;
  /** Boxes drawn (stages, inputs, folded groups). */
  boxes: number;
  /** Net groups drawn. */
  nets: number;
}

/** One input pin of a box: the nets that feed it (folded: those of one pattern, from outside the box). */
interface Pin {
  feeders: string[];
}

interface Box {
  id: string;
  kind: 'stage' | 'input' | 'group';
  name: string;
  detail: string;
  title: string;
  pins: Pin[];
  /** The nets (or patterns) this box drives, each leaving it on the east side. */
  outputs: string[];
  /** Outputs that feed no input anywhere: drawn with their name at the end of their stub. */
  ends: string[];
  /** For a group: the stages it holds. */
  members: string[];
  /** For a group: the worst verdict among the nets its stages drive (drawn on its outline). */
  status?: 'fail' | 'undecided';
}

/** What the layout places: one box, or a latch's two stages stacked. */
interface Unit {
  id: string;
  boxes: Box[];
  input: boolean;
}

/** A net as drawn: its name (or pattern) and the nets of the design it stands for. */
interface DrawnNet {
  key: string;
  members: string[];
}

/** Font sizes (px) and the monospace advance (em): box sizes are worked out from them, so labels fit inside. */
const NAME_PX = 12;
const DETAIL_PX = 10;
const ADVANCE = 0.62;
const PIN_STEP = 12;
const PAD = 6;
/** Room left and right of a unit's boxes for wires between its ports and its boxes, and a latch's cross-coupling. */
const LEFT = 16;
const RIGHT = 12;
const LATCH_GAP = 18;
/** Tag font size (px), and the most pins a net is wired to from outside before it is drawn as tags. */
const TAG_PX = 10;
export const TAG_FANOUT = 12;

const textWidth = (text: string, px: number) => Math.ceil(text.length * px * ADVANCE);
export const shorten = (name: string, most = LABEL_CHARS) => (name.length > most ? `${name.slice(0, most - 1)}…` : name);
/** Longest detail line a box shows whole (the type and NOR count, or a folded box's counts). */
const DETAIL_CHARS = 40;
const esc = escapeHtml;

/**
 * Stops of our palette for slack, weakest (darkest) to strongest: violet, plum, rust, ochre,
 * olive, green. Luminance rises all along it (the olive keeps the step from ochre to green
 * from dipping), so the order reads in grey print and to every kind of colour vision; the
 * lightest keeps 2.5:1 contrast on white.
 */
export const SLACK_STOPS = ['#3b0f4f', '#8a1f5c', '#bf4b2c', '#a9791a', '#7c9c3a', '#56ac86'] as const;
/** Colour of a net with no check behind it, and of a net check does not judge; and of an undecided net (dotted). */
const PLAIN = '#8a8a8a';
const UNDECIDED = '#222222';

/** The colour of a point `t` (0–1) along the slack scale, between the stops. */
export function slackColour(t: number): string {
  const x = Math.min(1, Math.max(0, t)) * (SLACK_STOPS.length - 1);
  const i = Math.min(SLACK_STOPS.length - 2, Math.floor(x));
  const f = x - i;
  const rgb = (h: string) => [1, 3, 5].map((k) => parseInt(h.slice(k, k + 2), 16));
  const a = rgb(SLACK_STOPS[i]!);
  const b = rgb(SLACK_STOPS[i + 1]!);
  return `#${a.map((c, k) => Math.round(c + (b[k]! - c) * f).toString(16).padStart(2, '0')).join('')}`;
}

/**
 * Where a stage folds: its top-level block instance (read from its sections' names, since
 * its net takes the outer name of a port), as `cell[]` for an instance array; or, for a stage
 * outside any instance, its own array (`q[]` for `q[3]`) or itself.
 */
function foldOf(stage: { name: string; drivers: string[] }): { group: string; top: string } {
  const source = stage.drivers.find((d) => d.includes('/')) ?? stage.name;
  const top = source.split('/')[0]!;
  const array = /^(.*)\[[^\]]*\]$/.exec(top);
  if (array) return { group: `${array[1]}[]`, top };
  return { group: source.includes('/') ? top : stage.name, top };
}

/** A folded net's pattern: every index replaced, so `q[3]` and `q[4]` are one `q[…]`. */
const patternOf = (net: string) => net.replace(/\[[^\]]*\]/g, '[…]');

/** The model name and the NOR count of a stage, and the source of an input net. */
function stageDetail(sections: Part[]): string {
  const models = [...new Set(sections.map((s) => (s.type === 'tube' ? s.model : s.type)))];
  return `${sections.length > 1 ? `NOR ${sections.length} · ` : ''}${models.join('/')}`;
}

function inputDetail(design: Design, net: string): string {
  for (const p of design.parts) {
    if (p.type === 'drive' && p.node === net) return `drive ${p.name}`;
    if (p.type === 'switch' && (p.a === net || p.b === net)) return `${p.momentary ? 'button' : 'switch'} ${p.name}`;
  }
  return 'input';
}

const volts = (x: number | undefined) => (x === undefined || !Number.isFinite(x) ? '—' : `${x.toFixed(2)} V`);

/**
 * What sets a net's slack (the colour it is drawn in), as check works it out: the smaller
 * noise margin less the required one, each level's distance past the logic threshold less
 * the required margin, or the cutoff margin, whichever is least.
 */
export function slackSource(n: NetCheck, required: number): string | undefined {
  const less = `less the required ${volts(required)}`;
  const limits: [string, number | undefined][] = [
    [`NM_H ${less}`, n.margin.high === undefined ? undefined : n.margin.high - required],
    [`NM_L ${less}`, n.margin.low === undefined ? undefined : n.margin.low - required],
    [`its worst high above the logic threshold, ${less}`, n.high ? n.high.worst - n.thresholdVolts - required : undefined],
    [`its worst low below the logic threshold, ${less}`, n.low ? n.thresholdVolts - n.low.worst - required : undefined],
    ['its cutoff margin', n.cutoffMargin?.volts],
  ];
  let best: [string, number] | undefined;
  for (const [what, v] of limits) if (v !== undefined && (best === undefined || v < best[1])) best = [what, v];
  return best?.[0];
}

/** A net's tooltip: its verdict, its slack and what sets it, its levels and margins, and why it fails. */
function netTitle(name: string, count: number, check: NetCheck | undefined, required: number | undefined): string {
  const head = count > 1 ? `${name} (${count} nets)` : name;
  if (!check) return head;
  const which = count > 1 ? `; weakest ${check.name}` : '';
  const status = check.status === 'fail' ? 'FAILS' : check.status === 'undecided' ? 'UNDECIDED' : check.status === 'unchecked' ? 'not judged' : 'passes';
  const source = required === undefined ? undefined : slackSource(check, required);
  const slack = Number.isFinite(check.slack) && source ? `; slack ${volts(check.slack)}: ${source}` : '';
  const cutoff = check.cutoffMargin ? `, cutoff margin ${volts(check.cutoffMargin.volts)}` : '';
  const why = check.status === 'fail' || check.status === 'undecided' ? (check.reasons[0] ? `; ${check.reasons[0]}` : '') : '';
  return `${head}${which}: ${status}${slack}; worst high ${volts(check.high?.worst)}, worst low ${volts(check.low?.worst)}; NM_H ${volts(check.margin.high)}, NM_L ${volts(check.margin.low)}${cutoff}; fan-out ${check.fanout}${why}`;
}

/** How a net is stroked: colour along the slack scale, and a pattern for failing and undecided nets. */
function netStroke(check: NetCheck | undefined, top: number): { kind: string; colour: string; attrs: string } {
  const stroke = (kind: string, colour: string, rest: string) => ({ kind, colour, attrs: `stroke="${colour}" ${rest}` });
  if (!check || check.status === 'unchecked') return stroke('', PLAIN, 'stroke-width="1.2"');
  if (check.status === 'fail') return stroke(' fails', SLACK_STOPS[0], 'stroke-width="3.2" stroke-dasharray="9 3"');
  if (check.status === 'undecided') return stroke(' undecided', UNDECIDED, 'stroke-width="2.4" stroke-dasharray="1.5 3"');
  return stroke('', slackColour(check.slack / top), 'stroke-width="1.6"');
}

type Point = [number, number];

const pathData = (points: Point[]) => `M${points.map(([x, y]) => `${x.toFixed(1)} ${y.toFixed(1)}`).join('L')}`;

/**
 * Where a net's wires branch: the points where its segments leave in three or four
 * directions. Two wires that only cross meet in four directions too, but never two of one
 * net, whose wires the layout merges where they run together; so a dot marks a branch,
 * and a crossing without a dot is two nets passing.
 */
export function junctions(paths: Point[][]): Point[] {
  if (paths.length < 2) return [];
  const near = (a: number, b: number) => Math.abs(a - b) < 0.5;
  const segments: [Point, Point][] = paths.flatMap((p) => p.slice(1).map((q, k): [Point, Point] => [p[k]!, q]));
  const found: Point[] = [];
  for (const point of paths.flat()) {
    if (found.some((f) => near(f[0], point[0]) && near(f[1], point[1]))) continue;
    const ways = new Set<string>();
    const way = (from: Point, to: Point) => ways.add(Math.abs(to[0] - from[0]) > Math.abs(to[1] - from[1]) ? (to[0] > from[0] ? 'E' : 'W') : to[1] > from[1] ? 'S' : 'N');
    for (const [a, b] of segments) {
      if (near(a[0], b[0]) && near(a[1], b[1])) continue;
      if (near(point[0], a[0]) && near(point[1], a[1])) way(a, b);
      else if (near(point[0], b[0]) && near(point[1], b[1])) way(b, a);
      else if (onSegment(point, a, b)) {
        way(point, a);
        way(point, b);
      }
    }
    if (ways.size >= 3) found.push(point);
  }
  return found;
}

/** True when `p` lies strictly inside the axis-parallel segment a–b (within half a pixel). */
function onSegment(p: Point, a: Point, b: Point): boolean {
  if (Math.abs(a[0] - b[0]) < 0.5) return Math.abs(p[0] - a[0]) < 0.5 && p[1] > Math.min(a[1], b[1]) && p[1] < Math.max(a[1], b[1]);
  if (Math.abs(a[1] - b[1]) < 0.5) return Math.abs(p[1] - a[1]) < 0.5 && p[0] > Math.min(a[0], b[0]) && p[0] < Math.max(a[0], b[0]);
  return false;
}

/** The boxes and nets of a drawing, before layout. */
function drawingModel(design: Design, graph: StageGraph, fold: boolean): { units: Unit[]; nets: DrawnNet[]; boxOfNet: Map<string, string> } {
  const parts = new Map(design.parts.map((p) => [p.name, p]));
  const feedersOf = new Map<string, string[]>();
  for (const n of graph.nets) for (const r of n.receivers) entry(feedersOf, r.section, () => []).push(n.name);
  const stages = graph.nets.filter((n) => n.kind === 'stage');
  const inputs = graph.nets.filter((n) => n.kind === 'input');
  const key = fold ? patternOf : (n: string) => n;
  const boxOfNet = new Map<string, string>();
  const boxes: Box[] = [];
  const netMembers = new Map<string, string[]>();
  for (const n of graph.nets) entry(netMembers, key(n.name), () => []).push(n.name);

  for (const n of inputs) {
    const detail = inputDetail(design, n.name);
    boxes.push({ id: `in:${n.name}`, kind: 'input', name: n.name, detail, title: `${n.name}: ${detail}`, pins: [], outputs: [key(n.name)], ends: n.receivers.length === 0 ? [key(n.name)] : [], members: [] });
    boxOfNet.set(n.name, `in:${n.name}`);
  }
  if (!fold) {
    for (const n of stages) {
      const sections = n.drivers.map((d) => parts.get(d)!).filter(Boolean);
      const pins = n.drivers.map((d) => ({ feeders: feedersOf.get(d) ?? [] }));
      const detail = stageDetail(sections);
      boxes.push({ id: `st:${n.name}`, kind: 'stage', name: n.name, detail, title: `stage ${n.name}: ${detail}; inputs ${pins.map((p) => p.feeders.join(' + ') || '(none)').join(', ')}`, pins, outputs: [n.name], ends: n.receivers.length === 0 ? [n.name] : [], members: [n.name] });
      boxOfNet.set(n.name, `st:${n.name}`);
    }
  } else {
    const groups = new Map<string, string[]>();
    const tops = new Map<string, Set<string>>();
    for (const n of stages) {
      const { group, top } = foldOf(n);
      entry(groups, group, () => []).push(n.name);
      entry(tops, group, () => new Set()).add(top);
    }
    for (const [g, members] of groups) for (const m of members) boxOfNet.set(m, `gr:${g}`);
    const nodes = new Map(stages.map((x) => [x.name, x]));
    for (const [g, members] of groups) {
      const id = `gr:${g}`;
      const pinNets = new Map<string, Set<string>>();
      const outputs = new Set<string>();
      for (const m of members) {
        for (const d of nodes.get(m)!.drivers)
          for (const f of feedersOf.get(d) ?? []) if (boxOfNet.get(f) !== id) entry(pinNets, key(f), () => new Set()).add(f);
        const node = nodes.get(m)!;
        if (node.receivers.length === 0 || node.receivers.some((r) => r.output === undefined || boxOfNet.get(r.output) !== id)) outputs.add(key(m));
      }
      const array = g.endsWith('[]');
      const name = array ? `${g.slice(0, -2)}[…] ×${tops.get(g)!.size}` : g;
      const single = members.length === 1 && !array && g === members[0];
      const detail = single ? stageDetail(nodes.get(members[0]!)!.drivers.map((d) => parts.get(d)!)) : `${members.length} stages`;
      const pins = [...pinNets.keys()].sort().map((k) => ({ feeders: [...pinNets.get(k)!] }));
      const ends = single && nodes.get(members[0]!)!.receivers.length === 0 ? [key(members[0]!)] : [];
      boxes.push({ id, kind: single ? 'stage' : 'group', name, detail, title: `${name}: ${members.length === 1 ? `stage ${members[0]}, ${detail}` : `${members.length} stages (${members.slice(0, 6).join(', ')}${members.length > 6 ? ', …' : ''})`}`, pins, outputs: [...outputs].sort(), ends, members });
    }
  }

  // Latches as one unit of two stages (unfolded only: folded, a latch lives inside its box).
  const byId = new Map(boxes.map((b) => [b.id, b]));
  const paired = new Set<string>();
  const units: Unit[] = [];
  if (!fold) {
    for (const loop of graph.loops) {
      if (loop.kind !== 'latch' || loop.nets.length !== 2) continue;
      const [a, b] = loop.nets.map((n) => byId.get(`st:${n}`));
      if (!a || !b || paired.has(a.id) || paired.has(b.id)) continue;
      paired.add(a.id).add(b.id);
      units.push({ id: `u:${a.id}`, boxes: [a, b], input: false });
    }
  }
  for (const b of boxes) if (!paired.has(b.id)) units.push({ id: `u:${b.id}`, boxes: [b], input: b.kind === 'input' });
  const nets = [...netMembers].map(([k, members]) => ({ key: k, members }));
  return { units, nets, boxOfNet };
}

interface Placed {
  box: Box;
  x: number;
  y: number;
  w: number;
  h: number;
}

/** Height of a box's name and detail lines. */
const HEAD = NAME_PX + DETAIL_PX + 3 * PAD;
/** Font size (px) of a folded box's port names. */
const PORT_PX = 9;

/** The label of a folded box's pin: the net pattern (or patterns) it takes. */
const pinLabel = (b: Box, k: number) => shorten([...new Set(b.pins[k]!.feeders.map(patternOf))].join(', '));

/**
 * A box's size, from its labels and its pins. A folded box lists its ports below its
 * name, inputs on the left and outputs on the right, one row each; a stage spreads its
 * pins down its side.
 */
function boxSize(b: Box): { w: number; h: number } {
  const head = Math.max(textWidth(shorten(b.name), NAME_PX), textWidth(shorten(b.detail, DETAIL_CHARS), DETAIL_PX), 40);
  if (b.kind === 'group') {
    const left = Math.max(0, ...b.pins.map((_, k) => textWidth(pinLabel(b, k), PORT_PX)));
    const right = Math.max(0, ...b.outputs.map((o) => textWidth(shorten(o), PORT_PX)));
    return { w: Math.max(head, left + right + 16) + 2 * PAD, h: HEAD + Math.max(b.pins.length, b.outputs.length, 1) * PIN_STEP };
  }
  return { w: head + 2 * PAD, h: Math.max(HEAD, (b.pins.length + 1) * PIN_STEP) };
}

/** Where each box of a unit sits in it, and where its pins and outputs are (unit coordinates). */
function unitShape(u: Unit, tagRoom: number): Shape {
  const sizes = u.boxes.map(boxSize);
  const w = Math.max(...sizes.map((s) => s.w));
  const endRoom = Math.max(0, ...u.boxes.flatMap((b) => b.ends.map((n) => textWidth(shorten(n), TAG_PX) + 6)));
  let y = 0;
  const placed = u.boxes.map((box, k) => {
    const p = { box, x: tagRoom + LEFT, y, w, h: sizes[k]!.h };
    y += sizes[k]!.h + LATCH_GAP;
    return p;
  });
  return { w: tagRoom + LEFT + w + RIGHT + endRoom, h: y - LATCH_GAP, boxes: placed, tagRoom };
}

interface Shape {
  w: number;
  h: number;
  boxes: Placed[];
  /** Room on the left for the tags of widely fed nets. */
  tagRoom: number;
}

const pinY = (p: Placed, k: number) => (p.box.kind === 'group' ? p.y + HEAD + (k + 0.5) * PIN_STEP : p.y + (k + 1) * (p.h / (p.box.pins.length + 1)));
const outY = (p: Placed, k: number) => (p.box.kind === 'group' ? p.y + HEAD + (k + 0.5) * PIN_STEP : p.y + (k + 1) * (p.h / (p.box.outputs.length + 1)));

/**
 * Lays out and draws a design. Async: the layout library runs its own event-driven
 * interface. Example: `await drawDesign(design, buildStageGraph(design), { check })`
 * gives an SVG with one box per stage of a demo and one `<g data-net>` per logic net.
 */
export async function drawDesign(design: Design, graph: StageGraph, options: DrawingOptions = {}): Promise<Drawing> {
  const stageCount = graph.nets.filter((n) => n.kind === 'stage').length;
  const fold = options.fold ?? stageCount > FOLD_ABOVE;
  const { units, nets, boxOfNet } = drawingModel(design, graph, fold);
  const key = fold ? patternOf : (n: string) => n;
  const checks = new Map((options.check?.nets ?? []).map((n) => [n.name, n]));
  // A folded box says how many of the nets inside it fail or are undecided, and its outline shows the worst.
  for (const u of units)
    for (const b of u.boxes) {
      if (b.kind !== 'group') continue;
      const count = (status: string) => b.members.filter((m) => checks.get(m)?.status === status).length;
      const [failing, undecided] = [count('fail'), count('undecided')];
      b.status = failing > 0 ? 'fail' : undecided > 0 ? 'undecided' : undefined;
      b.detail += `${failing > 0 ? ` · ${failing} fail` : ''}${undecided > 0 ? ` · ${undecided} undecided` : ''}`;
      b.title += failing + undecided > 0 ? `; ${failing} failing and ${undecided} undecided nets inside` : '';
    }

  // Every pin's feeders, each from a box and net once: inside its unit (a latch's
  // cross-coupling, drawn here) or from outside (a wire the layout routes). A net that feeds
  // more than `TAG_FANOUT` pins from outside (a clock line, a reset) is drawn as a tag at
  // each pin, as a drawing office would draw a bus, not as hundreds of wires across the page.
  type Link = { unit: Unit; box: Box; pin: number; from: string; net: string };
  const inside = new Map<Unit, Link[]>();
  const outside: Link[] = [];
  for (const u of units) {
    const inUnit = new Set(u.boxes.map((b) => b.id));
    for (const box of u.boxes)
      box.pins.forEach((pin, k) => {
        const seen = new Set<string>();
        for (const f of pin.feeders) {
          const from = boxOfNet.get(f);
          const net = key(f);
          if (from === undefined || seen.has(`${from}|${net}`)) continue;
          seen.add(`${from}|${net}`);
          (inUnit.has(from) ? entry(inside, u, () => []) : outside).push({ unit: u, box, pin: k, from, net });
        }
      });
  }
  const reach = new Map<string, number>();
  for (const l of outside) reach.set(l.net, (reach.get(l.net) ?? 0) + 1);
  const tagged = (net: string) => reach.get(net)! > TAG_FANOUT;
  /** The tag text of each pin fed by tagged nets, by unit. */
  const tags = new Map<string, Map<string, { box: Box; pin: number; nets: string[] }>>();
  for (const l of outside.filter((l) => tagged(l.net))) {
    entry(entry(tags, l.unit.id, () => new Map()), `${l.box.id}|${l.pin}`, () => ({ box: l.box, pin: l.pin, nets: [] as string[] })).nets.push(l.net);
  }
  const tagText = (nets: string[]) => nets.map((n) => shorten(n)).join(', ');
  const shapes = new Map(units.map((u) => [u.id, unitShape(u, Math.max(0, ...[...(tags.get(u.id)?.values() ?? [])].map((t) => textWidth(tagText(t.nets), TAG_PX) + 8)))]));

  // The layout graph: a node per unit, a west port per pin wired from outside the unit, an east port per output.
  const outPort = (boxId: string, net: string) => `o|${boxId}|${net}`;
  const inPort = (boxId: string, pin: number) => `i|${boxId}|${pin}`;
  const placedOf = (u: Unit, box: Box) => shapes.get(u.id)!.boxes.find((p) => p.box === box)!;
  type Edge = { id: string; sources: string[]; targets: string[]; net: string };
  const edges: Edge[] = [];
  const wired = new Map<string, Set<string>>();
  for (const l of outside) {
    if (tagged(l.net)) continue;
    edges.push({ id: `e${edges.length}`, sources: [outPort(l.from, l.net)], targets: [inPort(l.box.id, l.pin)], net: l.net });
    entry(wired, l.unit.id, () => new Set()).add(inPort(l.box.id, l.pin));
  }
  const children = units.map((u) => {
    const shape = shapes.get(u.id)!;
    const ports: { id: string; x: number; y: number; width: number; height: number }[] = [];
    for (const p of shape.boxes) {
      p.box.outputs.forEach((net, k) => ports.push({ id: outPort(p.box.id, net), x: shape.w, y: outY(p, k), width: 0, height: 0 }));
      p.box.pins.forEach((_, k) => {
        if (wired.get(u.id)?.has(inPort(p.box.id, k))) ports.push({ id: inPort(p.box.id, k), x: 0, y: pinY(p, k), width: 0, height: 0 });
      });
    }
    return {
      id: u.id,
      width: shape.w,
      height: shape.h,
      ports,
      layoutOptions: { 'elk.portConstraints': 'FIXED_POS', ...(u.input ? { 'elk.layered.layering.layerConstraint': 'FIRST' } : {}) },
    };
  });
  // A CommonJS module: its constructor is the default export's `default` (also the default export itself at run time).
  const elk = (await import('elkjs/lib/elk.bundled.js')).default;
  const laid: ElkNode = await new elk.default().layout({
    id: 'root',
    layoutOptions: {
      'elk.algorithm': 'layered',
      'elk.direction': 'RIGHT',
      'elk.edgeRouting': 'ORTHOGONAL',
      'elk.spacing.nodeNode': '18',
      'elk.layered.spacing.nodeNodeBetweenLayers': '36',
      'elk.spacing.edgeEdge': '4',
      'elk.layered.thoroughness': '1',
      'elk.padding': '[top=8,left=8,bottom=8,right=8]',
    },
    children,
    edges: edges.map(({ id, sources, targets }) => ({ id, sources, targets })),
  });

  // Where each unit landed.
  const at = new Map((laid.children ?? []).map((c) => [c.id, { x: c.x ?? 0, y: c.y ?? 0 }]));
  const paths = new Map<string, Point[][]>();
  const addPath = (net: string, ...points: Point[]) => entry(paths, net, () => []).push(points);
  for (const e of laid.edges ?? []) {
    const net = edges[Number(e.id.slice(1))]!.net;
    for (const s of e.sections ?? []) addPath(net, ...[s.startPoint, ...(s.bendPoints ?? []), s.endPoint].map((p): Point => [p.x, p.y]));
  }
  const portsOf = new Map(children.map((c) => [c.id, new Map(c.ports.map((q) => [q.id, q]))]));
  const leaving = new Set(edges.flatMap((e) => e.sources));
  const tagSvg = new Map<string, string[]>();
  const boxesSvg: string[] = [];
  for (const u of units) {
    const o = at.get(u.id)!;
    const shape = shapes.get(u.id)!;
    for (const p of shape.boxes) {
      const x = o.x + p.x;
      const y = o.y + p.y;
      // Stubs: each output from the box's edge to the unit's east side, each outside-fed pin from the west side.
      p.box.outputs.forEach((net, k) => {
        const sy = o.y + outY(p, k);
        if (!p.box.ends.includes(net)) {
          // Only to where a wire leaves: a latch net that feeds only its partner has its wire inside the unit.
          if (leaving.has(outPort(p.box.id, net)) || (reach.has(net) && tagged(net))) addPath(net, [x + p.w, sy], [o.x + shape.w, sy]);
          return;
        }
        // A net that feeds nothing: a short stub and its name, so that it shows (an output to the world, or a net left over).
        addPath(net, [x + p.w, sy], [x + p.w + RIGHT - 2, sy]);
        entry(tagSvg, net, () => []).push(`<text class="end" x="${(x + p.w + RIGHT).toFixed(1)}" y="${(sy + TAG_PX * 0.35).toFixed(1)}">${esc(shorten(net))}</text>`);
      });
      p.box.pins.forEach((_, k) => {
        const port = portsOf.get(u.id)!.get(`i|${p.box.id}|${k}`);
        if (port) boxesSvg.push(`<path class="stub" d="${pathData([[o.x, o.y + port.y], [x, o.y + port.y]])}"/>`);
      });
      boxesSvg.push(
        `<g class="box ${p.box.kind}${p.box.status ? ` ${p.box.status}` : ''}" data-box="${esc(p.box.id.slice(3))}"><title>${esc(p.box.title)}</title><rect x="${x}" y="${y}" width="${p.w}" height="${p.h}" rx="${p.box.kind === 'input' ? 10 : 2}"/>` +
          `<text class="name" x="${x + PAD}" y="${y + PAD + NAME_PX * 0.85}">${esc(shorten(p.box.name))}</text><text class="detail" x="${x + PAD}" y="${y + 2 * PAD + NAME_PX + DETAIL_PX * 0.85}">${esc(shorten(p.box.detail, DETAIL_CHARS))}</text>` +
          p.box.pins.map((_, k) => `<circle class="pin" cx="${x}" cy="${(o.y + pinY(p, k)).toFixed(1)}" r="2"/>`).join('') +
          (p.box.kind === 'group'
            ? p.box.pins.map((_, k) => `<text class="port" x="${x + PAD}" y="${(o.y + pinY(p, k) + PORT_PX * 0.35).toFixed(1)}">${esc(pinLabel(p.box, k))}</text>`).join('') +
              p.box.outputs.map((net, k) => `<text class="port" x="${x + p.w - PAD}" y="${(o.y + outY(p, k) + PORT_PX * 0.35).toFixed(1)}" text-anchor="end">${esc(shorten(net))}</text>`).join('')
            : '') +
          `</g>`,
      );
    }
    // A latch's cross-coupling: from the output stub down (or up) into the gap between the boxes, back along it and round to the pin.
    (inside.get(u) ?? []).forEach((l, lane) => {
      const src = shape.boxes.find((q) => q.box.id === l.from)!;
      const dst = placedOf(u, l.box);
      const sx = o.x + src.x + src.w + 3 + 4 * (lane % 2);
      const sy = o.y + outY(src, src.box.outputs.indexOf(l.net));
      const gapY = o.y + Math.min(src.y, dst.y) + Math.min(src.h, dst.h) + 5 + 7 * (lane % 2);
      const lx = o.x + shape.tagRoom + 4 + 5 * (lane % 2);
      const py = o.y + pinY(dst, l.pin);
      addPath(l.net, [o.x + src.x + src.w, sy], [sx, sy], [sx, gapY], [lx, gapY], [lx, py], [o.x + dst.x, py]);
    });
    // Tags: the net's name at the pin, right-aligned against a short wire to it.
    for (const t of tags.get(u.id)?.values() ?? []) {
      const dst = placedOf(u, t.box);
      const py = o.y + pinY(dst, t.pin);
      const end = o.x + shape.tagRoom;
      for (const net of t.nets) addPath(net, [end - 2, py], [o.x + dst.x, py]);
      entry(tagSvg, t.nets[0]!, () => []).push(`<text class="tag" x="${(end - 4).toFixed(1)}" y="${(py + TAG_PX * 0.35).toFixed(1)}" text-anchor="end">${esc(tagText(t.nets))}</text>`);
    }
  }

  // The nets, each one group however many wires it has; only those drawn at all.
  const required = options.check?.requiredMargin;
  const top = Math.max(2 * (required ?? 1), 1);
  const netSvg: string[] = [];
  for (const n of nets) {
    const d = paths.get(n.key);
    if (!d) continue;
    // The weakest member stands for a folded pattern.
    const judged = n.members.map((m) => checks.get(m)).filter((c): c is NetCheck => c !== undefined);
    const rank = (c: NetCheck) => (c.status === 'fail' ? 0 : c.status === 'undecided' ? 1 : c.status === 'unchecked' ? 3 : 2);
    const weakest = judged.sort((a, b) => rank(a) - rank(b) || a.slack - b.slack)[0];
    const stroke = netStroke(weakest, top);
    // A net drawn as tags has disjoint stubs only: nothing branches (and its hundreds of stubs would make the search slow).
    const dots = (tags.size > 0 && tagSvg.has(n.key) && d.length > TAG_FANOUT ? [] : junctions(d)).map(([x, y]) => `<circle class="junction" cx="${x.toFixed(1)}" cy="${y.toFixed(1)}" r="${stroke.kind ? 3.4 : 2.6}" fill="${stroke.colour}"/>`);
    const group = `<g class="net${stroke.kind}" data-net="${esc(n.key)}" ${stroke.attrs}><title>${esc(netTitle(n.key, n.members.length, weakest, required))}</title>${d.map((p) => `<path d="${pathData(p)}"/>`).join('')}${dots.join('')}${(tagSvg.get(n.key) ?? []).join('')}</g>`;
    netSvg.push(options.link ? `<a href="${esc(options.link(weakest?.name ?? n.members[0]!))}">${group}</a>` : group);
  }

  // Above the layout: the rails, then the legend, each on its own line.
  const width = Math.max(laid.width ?? 0, options.check ? 720 : 320);
  const railLine = `Rails: ${design.rails.map((r) => `${r.name} ${+r.volts.toFixed(3)} V ±${+(100 * r.tol).toFixed(2)} %`).join(', ') || 'none'}`;
  const head: string[] = [`<text class="rails" x="8" y="16">${esc(railLine)}</text>`];
  let headH = 24;
  if (options.check) {
    const barX = 8;
    const barW = 200;
    const y = headH + 6;
    const stops = SLACK_STOPS.map((c, k) => `<stop offset="${(100 * k) / (SLACK_STOPS.length - 1)}%" stop-color="${c}"/>`).join('');
    const failX = barX + barW + 70;
    head.push(
      `<defs><linearGradient id="slack-scale">${stops}</linearGradient></defs>`,
      `<text class="legend" x="${barX}" y="${y}">${esc(`slack above the required ${volts(required)} margin`)}</text>`,
      `<rect x="${barX}" y="${y + 6}" width="${barW}" height="8" fill="url(#slack-scale)"/>`,
      `<text class="legend" x="${barX}" y="${y + 28}">0 V</text><text class="legend" x="${barX + barW}" y="${y + 28}" text-anchor="end">≥ ${top.toFixed(1)} V</text>`,
      `<path class="fails" d="M${failX} ${y + 10}h40" stroke="${SLACK_STOPS[0]}" stroke-width="3.2" stroke-dasharray="9 3"/><text class="legend" x="${failX + 46}" y="${y + 14}">fails</text>`,
      `<path class="undecided" d="M${failX + 100} ${y + 10}h40" stroke="${UNDECIDED}" stroke-width="2.4" stroke-dasharray="1.5 3"/><text class="legend" x="${failX + 146}" y="${y + 14}">undecided</text>`,
      `<path d="M${failX + 240} ${y + 10}h40" stroke="${PLAIN}" stroke-width="1.2"/><text class="legend" x="${failX + 286}" y="${y + 14}">not judged</text>`,
    );
    headH += 40;
  }
  const height = (laid.height ?? 0) + headH;
  const svgWidth = Math.max(width, textWidth(railLine, 12) + 16);
  const svg =
    `${DRAWING_MARK}\n<svg xmlns="http://www.w3.org/2000/svg" class="tubemargin-drawing" width="${Math.ceil(svgWidth)}" height="${Math.ceil(height)}" viewBox="0 0 ${Math.ceil(svgWidth)} ${Math.ceil(height)}" font-family="DejaVu Sans Mono, Menlo, Consolas, monospace">` +
    `<title>${esc(`${design.title || 'design'}: ${fold ? 'folded drawing' : 'drawing'}`)}</title>` +
    `<style>.box rect{fill:#fff;stroke:#222;stroke-width:1.2}.box.input rect{fill:#eeeeee}.box.group rect{stroke-width:2.4}.name{font-size:${NAME_PX}px;font-weight:bold;fill:#111}.detail{font-size:${DETAIL_PX}px;fill:#333}.rails,.legend{font-size:11px;fill:#111}.net{fill:none}.net text{stroke:none;fill:#111;font-size:${TAG_PX}px}.stub{stroke:#888;stroke-width:1;fill:none}.pin{fill:#222}.port{font-size:${PORT_PX}px;fill:#333}.box.fail rect{stroke:${SLACK_STOPS[0]};stroke-width:3.2;stroke-dasharray:9 3}.box.undecided rect{stroke:${UNDECIDED};stroke-dasharray:1.5 3}.net circle{stroke:none}</style>` +
    head.join('') +
    `<g transform="translate(0 ${headH})">${netSvg.join('')}${boxesSvg.join('')}</g></svg>\n`;
  return { svg, folded: fold, boxes: units.reduce((s, u) => s + u.boxes.length, 0), nets: netSvg.length };
}
