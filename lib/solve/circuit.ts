import { GROUND, type Design, type TubeModel } from '../design/model.js';
import { error, type Diagnostic } from '../source/diagnostic.js';
import type { SourceSpan } from '../source/span.js';
import { NOMINAL_VARIATION, P, packSection, type SectionVariation } from '../models/tubeEquations.js';

/**
 * A design compiled for nodal analysis: every net that is not held at a fixed voltage is
 * an unknown; elements refer to terminals by index. A terminal index t ≥ 0 is unknown t; a
 * negative one, −1 − f, is fixed voltage f (ground, a stiff rail, a stiff drive). Nets
 * joined by closed switches are one node.
 *
 * Parameter arrays are plain typed arrays so that the Newton loop reads them without
 * allocating; `fixedVolts` and the section parameters may be rewritten between solves
 * (tolerance corners, Monte Carlo samples) without compiling again.
 */
export interface Circuit {
  /** Unknown node count. */
  n: number;
  /** Names of the unknowns: nets, or internal nodes (`V1:k` behind a cathode interface, `D1:j` behind a diode's series resistance). */
  nodeNames: string[];
  /** Net name → terminal index (unknown or fixed), for every net of the design. */
  terminalOf: Map<string, number>;
  fixedNames: string[];
  /** Nominal voltage of each fixed terminal. */
  fixedNominal: Float64Array;
  /** Voltage in force for each fixed terminal (source stepping and corners rewrite it). */
  fixedVolts: Float64Array;

  /** Conductances: between terminals `gA[i]` and `gB[i]`, `gS[i]` siemens. */
  gA: Int32Array;
  gB: Int32Array;
  gS: Float64Array;
  /** Which resistor each conductance came from (−1 for internal ones: source resistance, cathode interface). */
  gPart: Int32Array;

  /** Tube sections: terminals plate, grid, cathode (the internal cathode when it has an interface layer), screen (or −1 − fixedGround when absent). */
  tA: Int32Array;
  tG: Int32Array;
  tK: Int32Array;
  tS: Int32Array;
  tubeParams: Float64Array;
  tubePart: Int32Array;
  hasScreen: Uint8Array;

  /** Diodes: anode and cathode terminals (the junction node when it has series resistance), Is, n·Vt. */
  dA: Int32Array;
  dK: Int32Array;
  dIs: Float64Array;
  dNVt: Float64Array;
  diodePart: Int32Array;

  /**
   * Capacitors, compiled only for a simulation in time (empty otherwise): terminals and
   * farads, and a name for each (the part, `V1 Cgp` for a section's grid–plate
   * capacitance, `q stray` for a net's stray capacitance to ground).
   */
  cA: Int32Array;
  cB: Int32Array;
  cF: Float64Array;
  capacitorNames: string[];
  /** Fixed terminal index of each drive, by part name: a simulation in time rewrites its voltage. */
  driveFixed: Map<string, number>;

  /** Index in `design.parts` of every part, by name. */
  partIndex: Map<string, number>;
  design: Design;
}

/** Thermal voltage kT/q at 300 K (volts), for the Shockley diode law. */
export const THERMAL_VOLTS = 0.025852;

export interface CompileOptions {
  /** Switches and buttons to treat as closed (pressed), whatever the design says. */
  close?: ReadonlySet<string>;
  /** Per-section variation by section name; nominal where absent. */
  variation?: ReadonlyMap<string, SectionVariation>;
  /**
   * Compile the capacitors too, for a simulation in time: the design's capacitors, each
   * section's interelectrode capacitances (`interelectrode`, by section name) and
   * `strayFarads` from every net to ground.
   */
  dynamic?: { strayFarads: number; interelectrode: (section: string) => { gk: number; gp: number; pk: number } };
}

/** Nets joined by closed switches, and the fixed voltages (ground, stiff rails and drives) they carry. */
interface JoinedNets {
  find: (net: string) => string;
  fixedNames: string[];
  fixedValues: number[];
  /** Fixed voltage index by the root net of its group. */
  fixedOf: Map<string, number>;
  /** Rails and drives with a source resistance: fed through a conductance, not fixed. */
  sources: { net: string; volts: number; ohms: number; drive?: string }[];
  /** Fixed voltage index of each stiff drive, by part name. */
  driveFixed: Map<string, number>;
  /** A short circuit: a closed switch or a shared net joining fixed voltages that differ. */
  diagnostics: Diagnostic[];
}

/**
 * Joins the nets that closed switches connect (union-find) and fixes the groups that hold
 * ground, a stiff rail or a stiff drive; reports two different fixed voltages in one group
 * as a short circuit. The first step of compiling, and on its own the check that a design
 * can be solved at all.
 */
export function joinNets(design: Design, close: ReadonlySet<string> = new Set<string>()): JoinedNets {
  const diagnostics: Diagnostic[] = [];
  const parent = new Map<string, string>();
  const find = (x: string): string => {
    let r = x;
    while (parent.has(r)) r = parent.get(r)!;
    return r;
  };
  for (const p of design.parts) {
    if (p.type === 'switch' && (p.closed || close.has(p.name))) {
      const a = find(p.a);
      const b = find(p.b);
      if (a !== b) parent.set(a, b);
    }
  }
  // Fixed voltages: ground, stiff rails, stiff drives.
  const fixedNames: string[] = [];
  const fixedValues: number[] = [];
  const fixedOf = new Map<string, number>();
  const where = new Map<string, string>();
  const fix = (net: string, volts: number, what: string, span?: SourceSpan): number | undefined => {
    const root = find(net);
    const have = fixedOf.get(root);
    if (have !== undefined) {
      if (fixedValues[have] !== volts) {
        diagnostics.push(error('short-circuit', `short circuit: ${what} and ${where.get(root)} hold net '${net}' at different voltages`, span, ['a closed switch or a shared net joins them']));
        return undefined;
      }
      return have;
    }
    fixedOf.set(root, fixedNames.length);
    where.set(root, what);
    fixedNames.push(net);
    fixedValues.push(volts);
    return fixedNames.length - 1;
  };
  fix(GROUND, 0, 'ground');
  const sources: JoinedNets['sources'] = [];
  for (const r of design.rails) {
    if (r.sourceOhms > 0) sources.push({ net: r.name, volts: r.volts, ohms: r.sourceOhms });
    else fix(r.name, r.volts, `rail '${r.name}'`, r.span);
  }
  const driveFixed = new Map<string, number>();
  for (const p of design.parts) {
    if (p.type === 'drive') {
      if (p.sourceOhms > 0) sources.push({ net: p.node, volts: p.volts, ohms: p.sourceOhms, drive: p.name });
      else {
        const before = fixedNames.length;
        const f = fix(p.node, p.volts, `drive '${p.name}'`, p.span);
        // Only a fixed voltage of its own: one it shares (a rail's, ground's) no waveform may move.
        if (f !== undefined && f === before) driveFixed.set(p.name, f);
      }
    }
  }
  return { find, fixedNames, fixedValues, fixedOf, sources, driveFixed, diagnostics };
}

/**
 * Compiles a flat design for the solver. Reports a short circuit (a closed switch joining
 * two fixed voltages that differ) as a diagnostic.
 */
export function compileCircuit(design: Design, options: CompileOptions = {}): { circuit: Circuit | undefined; diagnostics: Diagnostic[] } {
  const joined = joinNets(design, options.close);
  const { diagnostics, find, fixedNames, fixedValues, fixedOf } = joined;
  if (diagnostics.length > 0) return { circuit: undefined, diagnostics };
  const railSources = joined.sources;

  const nodeNames: string[] = [];
  const unknownOf = new Map<string, number>();
  const terminal = (net: string): number => {
    const root = find(net);
    const f = fixedOf.get(root);
    if (f !== undefined) return -1 - f;
    let u = unknownOf.get(root);
    if (u === undefined) {
      u = nodeNames.length;
      unknownOf.set(root, u);
      nodeNames.push(root);
    }
    return u;
  };
  const internal = (name: string): number => {
    nodeNames.push(name);
    return nodeNames.length - 1;
  };

  const gA: number[] = [];
  const gB: number[] = [];
  const gS: number[] = [];
  const gPart: number[] = [];
  const conductance = (a: number, b: number, siemens: number, part: number) => {
    gA.push(a);
    gB.push(b);
    gS.push(siemens);
    gPart.push(part);
  };
  const driveFixed = new Map(joined.driveFixed);
  for (const s of railSources) {
    const f = fixedNames.length;
    if (s.drive !== undefined) driveFixed.set(s.drive, f);
    fixedNames.push(`${s.net}:source`);
    fixedValues.push(s.volts);
    conductance(terminal(s.net), -1 - f, 1 / s.ohms, -1);
  }

  const models = new Map<string, TubeModel>(design.models.map((m) => [m.name, m]));
  const tubes: { a: number; g: number; k: number; s: number; screen: boolean; part: number; model: TubeModel; variation: SectionVariation }[] = [];
  const diodes: { a: number; k: number; is: number; nvt: number; part: number }[] = [];
  const partIndex = new Map<string, number>();
  design.parts.forEach((p, index) => {
    partIndex.set(p.name, index);
    switch (p.type) {
      case 'resistor':
        conductance(terminal(p.a), terminal(p.b), 1 / p.ohms, index);
        break;
      case 'tube': {
        const model = models.get(p.model)!;
        const variation = options.variation?.get(p.name) ?? NOMINAL_VARIATION;
        let k = terminal(p.cathode);
        if (variation.cathodeOhms > 0) {
          const inner = internal(`${p.name}:k`);
          conductance(inner, k, 1 / variation.cathodeOhms, -1);
          k = inner;
        }
        const screen = p.screen !== undefined;
        tubes.push({ a: terminal(p.plate), g: terminal(p.grid), k, s: screen ? terminal(p.screen!) : -1, screen, part: index, model, variation });
        break;
      }
      case 'diode': {
        let k = terminal(p.cathode);
        if (p.rs > 0) {
          const j = internal(`${p.name}:j`);
          conductance(j, k, 1 / p.rs, -1);
          k = j;
        }
        diodes.push({ a: terminal(p.anode), k, is: p.is, nvt: p.n * THERMAL_VOLTS, part: index });
        break;
      }
      default:
        for (const net of p.type === 'drive' ? [p.node] : [p.a, p.b]) terminal(net);
    }
  });
  const terminalOf = new Map<string, number>();
  for (const r of design.rails) terminalOf.set(r.name, terminal(r.name));
  terminalOf.set(GROUND, terminal(GROUND));
  for (const p of design.parts) {
    const nets = p.type === 'tube' ? [p.plate, p.grid, p.cathode, ...(p.screen ? [p.screen] : [])] : p.type === 'diode' ? [p.anode, p.cathode] : p.type === 'drive' ? [p.node] : [p.a, p.b];
    for (const net of nets) terminalOf.set(net, terminal(net));
  }

  const caps: { a: number; b: number; farads: number; name: string }[] = [];
  const dynamic = options.dynamic;
  if (dynamic) {
    const capacitor = (a: number, b: number, farads: number, name: string) => {
      // Across one node, or between two fixed voltages, a capacitor carries nothing that matters.
      if (a !== b && (a >= 0 || b >= 0) && farads > 0) caps.push({ a, b, farads, name });
    };
    for (const p of design.parts) if (p.type === 'capacitor') capacitor(terminal(p.a), terminal(p.b), p.farads, p.name);
    for (const t of tubes) {
      const name = design.parts[t.part]!.name;
      const c = dynamic.interelectrode(name);
      capacitor(t.g, t.k, c.gk, `${name} Cgk`);
      capacitor(t.g, t.a, c.gp, `${name} Cgp`);
      capacitor(t.a, t.k, c.pk, `${name} Cpk`);
    }
    const strayDone = new Set<number>();
    for (const t of terminalOf.values()) {
      if (t < 0 || strayDone.has(t)) continue;
      strayDone.add(t);
      capacitor(t, terminal(GROUND), dynamic.strayFarads, `${nodeNames[t]} stray`);
    }
  }

  const tubeParams = new Float64Array(tubes.length * P.size);
  tubes.forEach((t, i) => packSection(t.model, t.variation, tubeParams, i * P.size));
  const circuit: Circuit = {
    n: nodeNames.length,
    nodeNames,
    terminalOf,
    fixedNames,
    fixedNominal: Float64Array.from(fixedValues),
    fixedVolts: Float64Array.from(fixedValues),
    gA: Int32Array.from(gA),
    gB: Int32Array.from(gB),
    gS: Float64Array.from(gS),
    gPart: Int32Array.from(gPart),
    tA: Int32Array.from(tubes.map((t) => t.a)),
    tG: Int32Array.from(tubes.map((t) => t.g)),
    tK: Int32Array.from(tubes.map((t) => t.k)),
    tS: Int32Array.from(tubes.map((t) => (t.screen ? t.s : -1))),
    hasScreen: Uint8Array.from(tubes.map((t) => (t.screen ? 1 : 0))),
    tubeParams,
    tubePart: Int32Array.from(tubes.map((t) => t.part)),
    dA: Int32Array.from(diodes.map((d) => d.a)),
    dK: Int32Array.from(diodes.map((d) => d.k)),
    dIs: Float64Array.from(diodes.map((d) => d.is)),
    dNVt: Float64Array.from(diodes.map((d) => d.nvt)),
    diodePart: Int32Array.from(diodes.map((d) => d.part)),
    cA: Int32Array.from(caps.map((c) => c.a)),
    cB: Int32Array.from(caps.map((c) => c.b)),
    cF: Float64Array.from(caps.map((c) => c.farads)),
    capacitorNames: caps.map((c) => c.name),
    driveFixed,
    partIndex,
    design,
  };
  return { circuit, diagnostics };
}
