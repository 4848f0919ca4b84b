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
  /** For a group: the stages it holds. */
  members: string[];
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
export const shorten = (name: string) => (name.length > LABEL_CHARS ? `${name.slice(0, LABEL_CHARS - 1)}…` : name);
const esc = escapeHtml;

/**
 * Stops of our palette for slack, weakest (darkest) to strongest: violet, plum, rust, ochre,
 * olive, green. Luminance rises all along it (the olive keeps the step from ochre to green
 * from dipping), so the order reads in grey print and to every kind of colour vision; the
 * lightest keeps 2.5:1 contrast on white.
 */
export const SLACK_STOPS = ['#3b0f4f', '#8a1f5c', '#bf4b2c', '#a9791a', '#7c9c3a', '#56ac86'] as const;
/** Colour of a net with no check behind it, and of a net check does not judge. */
const PLAIN = '#555555';

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

/** A net's tooltip: its levels, margins and verdict. */
function netTitle(name: string, count: number, check: NetCheck | undefined, required: number | undefined): string {
  const head = count > 1 ? `${name} (${count} nets)` : name;
  if (!check) return head;
  const which = count > 1 ? `; weakest ${check.name}` : '';
  const status = check.status === 'fail' ? 'FAILS' : check.status === 'undecided' ? 'UNDECIDED' : check.status === 'unchecked' ? 'not judged' : 'passes';
  return `${head}${which}: ${status}; worst high ${volts(check.high?.worst)}, worst low ${volts(check.low?.worst)}; NM_H ${volts(check.margin.high)}, NM_L ${volts(check.margin.low)}${required === undefined ? '' : ` (required ${volts(required)})`}; fan-out ${check.fanout}`;
}

/** How a net is stroked: colour along the slack scale, and a pattern for failing and undecided nets. */
function netStroke(check: NetCheck | undefined, top: number): { kind: string; attrs: string } {
  if (!check || check.status === 'unchecked') return { kind: '', attrs: `stroke="${PLAIN}" stroke-width="1.2"` };
  if (check.status === 'fail') return { kind: ' fails', attrs: `stroke="${SLACK_STOPS[0]}" stroke-width="3.2" stroke-dasharray="9 3"` };
  if (check.status === 'undecided') return { kind: ' undecided', attrs: `stroke="#222222" stroke-width="2.4" stroke-dasharray="1.5 3"` };
  return { kind: '', attrs: `stroke="${slackColour(check.slack / top)}" stroke-width="1.6"` };
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
    boxes.push({ id: `in:${n.name}`, kind: 'input', name: n.name, detail, title: `${n.name}: ${detail}`, pins: [], outputs: [key(n.name)], members: [] });
    boxOfNet.set(n.name, `in:${n.name}`);
  }
  if (!fold) {
    for (const n of stages) {
      const sections = n.drivers.map((d) => parts.get(d)!).filter(Boolean);
      const pins = n.drivers.map((d) => ({ feeders: feedersOf.get(d) ?? [] }));
      const detail = stageDetail(sections);
      boxes.push({ id: `st:${n.name}`, kind: 'stage', name: n.name, detail, title: `stage ${n.name}: ${detail}; inputs ${pins.map((p) => p.feeders.join(' + ') || '(none)').join(', ')}`, pins, outputs: [n.name], members: [n.name] });
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
      boxes.push({ id, kind: single ? 'stage' : 'group', name, detail, title: `${name}: ${members.length === 1 ? `stage ${members[0]}, ${detail}` : `${members.length} stages (${members.slice(0, 6).join(', ')}${members.length > 6 ? ', …' : ''})`}`, pins, outputs: [...outputs].sort(), members });
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

/** A box's size, from its label and its pins. */
function boxSize(b: Box): { w: number; h: number } {
  const w = Math.max(textWidth(shorten(b.name), NAME_PX), textWidth(shorten(b.detail), DETAIL_PX), 40) + 2 * PAD;
  const h = Math.max(NAME_PX + DETAIL_PX + 3 * PAD, (b.pins.length + 1) * PIN_STEP);
  return { w, h };
}

/** Where each box of a unit sits in it, and where its pins and outputs are (unit coordinates). */
function unitShape(u: Unit, tagRoom: number): Shape {
  const sizes = u.boxes.map(boxSize);
  const w = Math.max(...sizes.map((s) => s.w));
  let y = 0;
  const placed = u.boxes.map((box, k) => {
    const p = { box, x: tagRoom + LEFT, y, w, h: sizes[k]!.h };
    y += sizes[k]!.h + LATCH_GAP;
    return p;
  });
  return { w: tagRoom + LEFT + w + RIGHT, h: y - LATCH_GAP, boxes: placed, tagRoom };
}

interface Shape {
  w: number;
  h: number;
  boxes: Placed[];
  /** Room on the left for the tags of widely fed nets. */
  tagRoom: number;
}

const pinY = (p: Placed, k: number) => p.y + (k + 1) * (p.h / (p.box.pins.length + 1));
const outY = (p: Placed, k: number) => p.y + (k + 1) * (p.h / (p.box.outputs.length + 1));

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
  const tagText = (nets: string[]) => nets.map(shorten).join(', ');
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
  const paths = new Map<string, string[]>();
  const addPath = (net: string, d: string) => entry(paths, net, () => []).push(d);
  const pt = (x: number, y: number) => `${x.toFixed(1)} ${y.toFixed(1)}`;
  for (const e of laid.edges ?? []) {
    const net = edges[Number(e.id.slice(1))]!.net;
    for (const s of e.sections ?? []) addPath(net, `M${[s.startPoint, ...(s.bendPoints ?? []), s.endPoint].map((p) => pt(p.x, p.y)).join('L')}`);
  }
  const portsOf = new Map(children.map((c) => [c.id, new Map(c.ports.map((q) => [q.id, q]))]));
  const tagSvg = new Map<string, string[]>();
  const boxesSvg: string[] = [];
  for (const u of units) {
    const o = at.get(u.id)!;
    const shape = shapes.get(u.id)!;
    for (const p of shape.boxes) {
      const x = o.x + p.x;
      const y = o.y + p.y;
      // Stubs: each output from the box's edge to the unit's east side, each outside-fed pin from the west side.
      p.box.outputs.forEach((net, k) => addPath(net, `M${pt(x + p.w, o.y + outY(p, k))}L${pt(o.x + shape.w, o.y + outY(p, k))}`));
      p.box.pins.forEach((_, k) => {
        const port = portsOf.get(u.id)!.get(`i|${p.box.id}|${k}`);
        if (port) boxesSvg.push(`<path class="stub" d="M${pt(o.x, o.y + port.y)}L${pt(x, o.y + port.y)}"/>`);
      });
      boxesSvg.push(
        `<g class="box ${p.box.kind}" data-box="${esc(p.box.id.slice(3))}"><title>${esc(p.box.title)}</title><rect x="${x}" y="${y}" width="${p.w}" height="${p.h}" rx="${p.box.kind === 'input' ? 10 : 2}"/>` +
          `<text class="name" x="${x + PAD}" y="${y + PAD + NAME_PX * 0.85}">${esc(shorten(p.box.name))}</text><text class="detail" x="${x + PAD}" y="${y + 2 * PAD + NAME_PX + DETAIL_PX * 0.85}">${esc(shorten(p.box.detail))}</text>` +
          p.box.pins.map((_, k) => `<circle class="pin" cx="${x}" cy="${(o.y + pinY(p, k)).toFixed(1)}" r="2"/>`).join('') +
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
      addPath(l.net, `M${pt(sx, sy)}L${pt(sx, gapY)}L${pt(lx, gapY)}L${pt(lx, py)}L${pt(o.x + dst.x, py)}`);
    });
    // Tags: the net's name at the pin, right-aligned against a short wire to it.
    for (const t of tags.get(u.id)?.values() ?? []) {
      const dst = placedOf(u, t.box);
      const py = o.y + pinY(dst, t.pin);
      const end = o.x + shape.tagRoom;
      for (const net of t.nets) addPath(net, `M${pt(end - 2, py)}L${pt(o.x + dst.x, py)}`);
      entry(tagSvg, t.nets[0]!, () => []).push(`<text class="tag" x="${(end - 4).toFixed(1)}" y="${(py + TAG_PX * 0.35).toFixed(1)}" text-anchor="end">${esc(tagText(t.nets))}</text>`);
    }
  }

  // The nets, each one group however many wires it has; only those drawn at all.
  const checks = new Map((options.check?.nets ?? []).map((n) => [n.name, n]));
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
    const group = `<g class="net${stroke.kind}" data-net="${esc(n.key)}" ${stroke.attrs}><title>${esc(netTitle(n.key, n.members.length, weakest, required))}</title>${d.map((p) => `<path d="${p}"/>`).join('')}${(tagSvg.get(n.key) ?? []).join('')}</g>`;
    netSvg.push(options.link ? `<a href="${esc(options.link(weakest?.name ?? n.members[0]!))}">${group}</a>` : group);
  }

  // Above the layout: the rails, then the legend, each on its own line.
  const width = Math.max(laid.width ?? 0, 560);
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
      `<text class="legend" x="${barX}" y="${y}">slack above the required margin</text>`,
      `<rect x="${barX}" y="${y + 6}" width="${barW}" height="8" fill="url(#slack-scale)"/>`,
      `<text class="legend" x="${barX}" y="${y + 28}">0 V</text><text class="legend" x="${barX + barW}" y="${y + 28}" text-anchor="end">≥ ${top.toFixed(1)} V</text>`,
      `<path class="fails" d="M${failX} ${y + 10}h40" stroke="${SLACK_STOPS[0]}" stroke-width="3.2" stroke-dasharray="9 3"/><text class="legend" x="${failX + 46}" y="${y + 14}">fails</text>`,
      `<path class="undecided" d="M${failX + 100} ${y + 10}h40" stroke="#222222" stroke-width="2.4" stroke-dasharray="1.5 3"/><text class="legend" x="${failX + 146}" y="${y + 14}">undecided</text>`,
    );
    headH += 40;
  }
  const height = (laid.height ?? 0) + headH;
  const svgWidth = Math.max(width, textWidth(railLine, 12) + 16);
  const svg =
    `${DRAWING_MARK}\n<svg xmlns="http://www.w3.org/2000/svg" class="tubemargin-drawing" width="${Math.ceil(svgWidth)}" height="${Math.ceil(height)}" viewBox="0 0 ${Math.ceil(svgWidth)} ${Math.ceil(height)}" font-family="DejaVu Sans Mono, Menlo, Consolas, monospace">` +
    `<title>${esc(`${design.title || 'design'}: ${fold ? 'folded drawing' : 'drawing'}`)}</title>` +
    `<style>.box rect{fill:#fff;stroke:#222;stroke-width:1.2}.box.input rect{fill:#eeeeee}.box.group rect{stroke-width:2.4}.name{font-size:${NAME_PX}px;font-weight:bold;fill:#111}.detail{font-size:${DETAIL_PX}px;fill:#333}.rails,.legend{font-size:11px;fill:#111}.net{fill:none}.net text{stroke:none;fill:#111;font-size:${TAG_PX}px}.stub{stroke:#888;stroke-width:1;fill:none}.pin{fill:#222}</style>` +
    head.join('') +
    `<g transform="translate(0 ${headH})">${netSvg.join('')}${boxesSvg.join('')}</g></svg>\n`;
  return { svg, folded: fold, boxes: units.reduce((s, u) => s + u.boxes.length, 0), nets: netSvg.length };
}
