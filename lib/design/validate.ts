import { error, warning, type Diagnostic } from '../source/diagnostic.js';
import type { SourceSpan } from '../source/span.js';
import { GROUND, partPins, type Design, type Part } from './model.js';
import { append } from '../lists.js';

/**
 * Checks a flat design for wiring a builder would want to hear about before any analysis:
 * a net only one part touches (`net-single-connection`, a warning: usually a typo), a tube
 * grid with no DC path to a rail (`grid-no-dc-path`, an error: it would float), any other
 * node with no DC path (`node-no-dc-path`, a warning), pentode sections without a screen
 * and triodes given one, and a design with no parts (`empty-design`, an error: there is
 * nothing to solve, and a verdict on nothing would read as a pass).
 *
 * DC paths run through resistors, diodes and closed switches (a push button counts as
 * released); rails and driven inputs are fixed. Capacitors and tube sections carry no DC
 * path of their own for this purpose: a grid held only through a capacitor floats.
 */
export function validateDesign(design: Design, file: string): Diagnostic[] {
  const out: Diagnostic[] = [];
  if (design.parts.length === 0) {
    const at: SourceSpan = { file, start: { line: 1, col: 1, offset: 0 }, end: { line: 1, col: 1, offset: 0 } };
    out.push(error('empty-design', 'the design has no parts: nothing to solve or check', at, ['a file of types and blocks only is read by `include` from a design that places them']));
    return out;
  }
  const fixed = new Set<string>([GROUND, ...design.rails.map((r) => r.name)]);

  // Connections per net, and the first part touching each.
  const count = new Map<string, number>();
  const firstPart = new Map<string, Part>();
  for (const p of design.parts) {
    for (const [, net] of partPins(p)) {
      count.set(net, (count.get(net) ?? 0) + 1);
      if (!firstPart.has(net)) firstPart.set(net, p);
    }
  }
  for (const [net, n] of count) {
    if (n === 1 && !fixed.has(net)) {
      const p = firstPart.get(net)!;
      out.push(warning('net-single-connection', `net '${net}' has a single connection (${describePart(p)}); is a name misspelt?`, p.span));
    }
  }

  // DC paths: union-find over nets.
  const parent = new Map<string, string>();
  const find = (x: string): string => {
    let r = x;
    while (parent.has(r) && parent.get(r) !== r) r = parent.get(r)!;
    let y = x;
    while (y !== r) {
      const next = parent.get(y)!;
      parent.set(y, r);
      y = next;
    }
    return r;
  };
  const union = (a: string, b: string) => {
    const ra = find(a);
    const rb = find(b);
    if (ra !== rb) parent.set(ra, rb);
  };
  for (const net of fixed) union(net, GROUND);
  for (const p of design.parts) {
    if (p.type === 'resistor') union(p.a, p.b);
    else if (p.type === 'diode') union(p.anode, p.cathode);
    else if (p.type === 'switch' && p.closed) union(p.a, p.b);
    else if (p.type === 'drive') union(p.node, GROUND);
  }
  const ground = () => find(GROUND);
  const reportedNets = new Set<string>();
  for (const p of design.parts) {
    if (p.type !== 'tube') continue;
    if (find(p.grid) !== ground()) {
      reportedNets.add(find(p.grid));
      out.push(error('grid-no-dc-path', `the grid of section '${p.name}' (net '${p.grid}') has no DC path to a rail: it would float`, p.span, ['give the grid a resistor to a bias rail, or drive it through a series resistor']));
    }
  }
  for (const p of design.parts) {
    for (const [pin, net] of partPins(p)) {
      const root = find(net);
      if (root === ground() || reportedNets.has(root)) continue;
      reportedNets.add(root);
      out.push(warning('node-no-dc-path', `net '${net}' (${pin} of ${describePart(p)}) has no DC path to a rail`, p.span));
    }
  }

  append(out, switchShorts(design));

  // Screens.
  const models = new Map(design.models.map((m) => [m.name, m]));
  for (const p of design.parts) {
    if (p.type !== 'tube') continue;
    const m = models.get(p.model);
    if (!m) continue;
    if (m.kind === 'koren-pentode' && p.screen === undefined) {
      out.push(error('missing-field', `section '${p.name}' is a pentode (${m.name}) but its screen is not connected`, p.span, ["in a stage: 'screen RAIL' or 'screen 10 k to RAIL'"]));
    }
    if (m.kind !== 'koren-pentode' && p.screen !== undefined) {
      if (p.screenSpan) out.push(error('unknown-port', `stage '${p.stage}' connects a screen, but its tube, ${m.name}, is a triode and has none`, p.screenSpan, ['remove the screen item, or choose a pentode type']));
      else out.push(error('unknown-port', `section '${p.name}' is a triode (${m.name}) and has no screen`, p.span));
    }
  }
  return out;
}

/**
 * Switches and buttons that, closed on their own, join two stiff sources at different
 * voltages (a button from a stiff drive's net to ground, a switch across two rails): the
 * contact would carry unbounded current, so no solve of that position exists. It is a
 * wiring error, usually a drive or rail that lacks its source resistance. Switches the
 * design already closes are judged with the others closed, as the solver joins them.
 */
function switchShorts(design: Design): Diagnostic[] {
  const parent = new Map<string, string>();
  const find = (x: string): string => {
    let r = x;
    while (parent.has(r)) r = parent.get(r)!;
    return r;
  };
  const switches = design.parts.filter((p): p is Extract<Part, { type: 'switch' }> => p.type === 'switch');
  for (const p of switches) if (p.closed && find(p.a) !== find(p.b)) parent.set(find(p.a), find(p.b));
  // The stiff source on each group of joined nets: what holds it, and at what level.
  const held = new Map<string, { volts: number; what: string }>();
  const out: Diagnostic[] = [];
  const hold = (net: string, volts: number, what: string, span?: SourceSpan) => {
    const have = held.get(find(net));
    if (!have) held.set(find(net), { volts, what });
    else if (have.volts !== volts) out.push(error('short-circuit', `short circuit: ${what} (${volts} V) and ${have.what} (${have.volts} V) hold net '${net}' at different voltages`, span, ['a closed switch or a shared net joins them; give one a source resistance']));
  };
  hold(GROUND, 0, 'ground');
  for (const r of design.rails) if (r.sourceOhms === 0) hold(r.name, r.volts, `rail ${r.name}`, r.span);
  for (const p of design.parts) if (p.type === 'drive' && p.sourceOhms === 0) hold(p.node, p.volts, `drive '${p.name}'`, p.span);
  for (const p of switches) {
    if (p.closed) continue;
    const a = held.get(find(p.a));
    const b = held.get(find(p.b));
    if (!a || !b || a.volts === b.volts) continue;
    out.push(
      error('short-circuit', `${p.momentary ? 'pressing' : 'closing'} ${p.momentary ? 'button' : 'switch'} '${p.name}' would short ${a.what} (${a.volts} V) to ${b.what} (${b.volts} V)`, p.span, [
        'give the drive or rail a source resistance (`source 4.7 k`), or put a resistor in series with the contact',
      ]),
    );
  }
  return out;
}

function describePart(p: Part): string {
  return `${p.type === 'tube' ? 'section' : p.type} '${p.name}'`;
}
