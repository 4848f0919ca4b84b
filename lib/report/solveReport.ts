import { isGeneratedName, type Design } from '../design/model.js';
import { compareNames } from '../graph/stageGraph.js';
import type { OperatingPoint } from '../solve/operatingPoint.js';
import { logicThreshold } from '../solve/operatingPoint.js';
import { formatReading, formatSI, table, wrap } from './format.js';
import { figure } from './figure.js';
import { safetyCautions } from './safety.js';
import { REPORT_COLUMNS } from './showText.js';
import { append } from '../lists.js';

/** The JSON form of an operating point, `tubemargin.solve/1`: its own type, not the solver's. */
export interface SolveJson {
  schema: 'tubemargin.solve/1';
  title: string;
  converged: boolean;
  method: string;
  iterations: number;
  residualAmps: number | null;
  residualAmpsWhy?: string;
  /** Net voltages; a net whose voltage a failed solve left undefined is null, with `nodesWhy`. */
  nodes: Record<string, number | null>;
  nodesWhy?: string;
  tubes: Record<string, { vak: number; vgk: number; vg2k: number | null; vg2kWhy?: string; plateAmps: number; gridAmps: number; screenAmps: number; plateWatts: number; screenWatts: number }>;
  resistors: Record<string, { amps: number; watts: number; ratingWatts: number }>;
  hints: { net: string; state: 0 | 1; assumed: boolean; volts: number; held: boolean }[];
  /** Latches whose inputs hold both nets at one level (a stable state, not the metastable point). */
  forcedLatches: { nets: [string, string]; volts: [number, number]; /** The logic level both nets sit at: 0 (set and clear at once) or 1. */ level: 0 | 1 }[];
  warnings: { code: string; message: string }[];
  cautions: string[];
}

export function solveToJson(design: Design, op: OperatingPoint): SolveJson {
  const nodes: Record<string, number | null> = {};
  const finite = (x: number) => (Number.isFinite(x) ? x : 0);
  for (const net of [...op.nodes.keys()].sort(compareNames)) nodes[net] = Number.isFinite(op.nodes.get(net)!) ? op.nodes.get(net)! : null;
  const undefinedNodes = Object.values(nodes).some((v) => v === null);
  const tubes: SolveJson['tubes'] = {};
  for (const t of op.tubes) {
    // A failed solve may leave a section's figures undefined; they read 0 then, and `converged` says to trust none of them.
    tubes[t.name] = { vak: finite(t.vak), vgk: finite(t.vgk), ...figure('vg2k', t.vg2k, 'a triode: no screen'), plateAmps: finite(t.plateAmps), gridAmps: finite(t.gridAmps), screenAmps: finite(t.screenAmps), plateWatts: finite(t.plateWatts), screenWatts: finite(t.screenWatts) };
  }
  const resistors: SolveJson['resistors'] = {};
  for (const r of op.resistors) resistors[r.name] = { amps: finite(r.amps), watts: finite(r.watts), ratingWatts: r.ratingWatts };
  return {
    schema: 'tubemargin.solve/1',
    title: design.title,
    converged: op.converged,
    method: op.method,
    iterations: op.iterations,
    ...figure('residualAmps', op.residualAmps, 'the solve broke down before a residual could be measured'),
    nodes,
    ...(undefinedNodes ? { nodesWhy: 'the solve broke down: the nets at null have no defined voltage (see warnings)' } : {}),
    tubes,
    resistors,
    hints: op.hints.map((h) => ({ net: h.net, state: h.high ? 1 : 0, assumed: h.assumed, volts: h.volts, held: h.held })),
    forcedLatches: op.forcedLatches.map((l) => ({ nets: l.nets, volts: l.volts, level: l.high ? 1 : 0 })),
    warnings: op.diagnostics.map((d) => ({ code: d.code, message: d.message })),
    cautions: safetyCautions(design),
  };
}

const v2 = (x: number) => (Number.isFinite(x) ? x.toFixed(2) : '—');

/**
 * The text of `tubemargin solve`: how the solution was reached and how well it satisfies
 * KCL, the state of every latch, every net's voltage (and whether it reads high or low),
 * every section's electrode voltages, currents and dissipation, and every resistor's
 * current and power against its rating. Lines fit 80 columns.
 */
export function renderSolve(design: Design, op: OperatingPoint, source: string): string {
  const out: string[] = [];
  out.push(`${design.title || '(untitled design)'} — ${source}`);
  append(out, wrap(
      `${op.converged ? 'Solved' : 'NOT CONVERGED'} by ${op.method === 'newton' ? "Newton's method" : op.method} in ${op.iterations} iterations; largest KCL residual ${Number.isFinite(op.residualAmps) ? `${op.residualAmps.toExponential(1)} A` : 'not measurable (the solve broke down)'} (limit 1 nA).`,
      REPORT_COLUMNS,
    ));
  if (op.hints.length > 0) {
    out.push('');
    out.push('Started from');
    // An item of the list, indented, its continuation lines under its text.
    const item = (text: string) => append(out, wrap(text, REPORT_COLUMNS - 2).map((l, i) => (i === 0 ? `  ${l}` : l)));
    for (const h of op.hints) {
      const state = `${h.net}=${h.high ? 1 : 0}`;
      if (!h.assumed) out.push(`  ${state}: ${h.held ? 'held' : 'NOT HELD'} at ${v2(h.volts)} V`);
      else if (h.stateless) item(`${state} (chosen by the tool): the latch has no states here (see the warning below); settled at ${v2(h.volts)} V`);
      else if (h.held) out.push(`  ${state} (chosen by the tool; --hint picks another state): held at ${v2(h.volts)} V`);
      else item(`${state} (chosen by the tool): that state does not exist here; settled in ${h.net}=${h.high ? 0 : 1} at ${v2(h.volts)} V`);
    }
  }
  for (const l of op.forcedLatches) {
    append(out, wrap(
        `latch ${l.nets[0]} ↔ ${l.nets[1]} is held with both nets ${l.high ? 'high' : 'low'} (${v2(l.volts[0])} V, ${v2(l.volts[1])} V) by its inputs${l.high ? '' : ', its set and clear acting at once'}: a stable state while they act, not the metastable point.`,
        REPORT_COLUMNS,
      ));
  }
  for (const d of op.diagnostics) append(out, wrap(`${d.severity}: ${d.message}`, REPORT_COLUMNS));
  out.push('');
  const nets = [...op.nodes.keys()].sort(compareNames);
  const rails = new Set(['gnd', ...design.rails.map((r) => r.name)]);
  out.push(`Nets (${nets.length})`);
  append(out, table(
      ['  net', 'volts', 'reads'],
      nets.map((n) => {
        const volts = op.nodes.get(n)!;
        const reads = rails.has(n) ? 'rail' : isGeneratedName(n) && /\.(g\d+|sg)$/.test(n) ? 'grid node' : volts > logicThreshold(design, n) ? 'high' : 'low';
        return ['  ' + n, v2(volts).padStart(8), reads];
      }),
      [30, 8],
    ));
  out.push('');
  out.push(`Sections (${op.tubes.length})`);
  append(out, table(
      ['  section', 'Vak', 'Vgk', 'Vg2k', 'Ia', 'Ig', 'Ig2', 'Pa'],
      op.tubes.map((t) => [
        '  ' + t.name,
        v2(t.vak),
        v2(t.vgk),
        t.vg2k === undefined ? '—' : v2(t.vg2k),
        formatReading(t.plateAmps, 'A'),
        formatReading(t.gridAmps, 'A'),
        t.vg2k === undefined ? '—' : formatReading(t.screenAmps, 'A'),
        formatReading(t.plateWatts, 'W'),
      ]),
      [18, 7, 6, 6, 9, 9, 9],
    ));
  out.push('');
  out.push(`Resistors (${op.resistors.length})`);
  append(out, table(
      ['  resistor', 'current', 'power', 'rating', 'of rating'],
      op.resistors.map((r) => ['  ' + r.name, formatSI(Math.abs(r.amps), 'A'), formatSI(r.watts, 'W'), formatSI(r.ratingWatts, 'W'), `${Math.round((100 * r.watts) / r.ratingWatts)} %`]),
      [20, 9, 9, 8],
    ));
  const cautions = safetyCautions(design);
  if (cautions.length > 0) out.push('', ...cautions.flatMap((c) => wrap(c, REPORT_COLUMNS)));
  return out.join('\n') + '\n';
}
