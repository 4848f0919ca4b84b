import { GROUND, isGeneratedName, type Design, type Resistor } from '../design/model.js';
import { compareNames, type StageGraph } from '../graph/stageGraph.js';
import { cutList, formatSI, formatTolerance, table, wrap } from './format.js';
import { safetyCautions } from './safety.js';
import { append } from '../lists.js';

/** Width the terminal report is laid out for. */
export const REPORT_COLUMNS = 80;

/**
 * The text of `tubemargin show`: the expanded design as a builder checks it against the
 * schematic. Rails, tube types, stages (net, tube, sections, plate load, inputs), nets with
 * their drivers, fan-out and receivers, the loops found, and a part count; then the safety
 * cautions when a rail exceeds 60 V. Lines fit 80 columns.
 */
export function renderShow(design: Design, graph: StageGraph, source: string): string {
  const out: string[] = [];
  out.push(`${design.title || '(untitled design)'} — ${source}`);
  out.push('');
  out.push(`Rails (${design.rails.length + 1})`);
  const railRows = [
    [GROUND, '0 V', '', 'ground'],
    ...design.rails.map((r) => [r.name, formatSI(r.volts, 'V'), r.tol > 0 ? formatTolerance(r.tol) : 'exact', r.sourceOhms > 0 ? `source ${formatSI(r.sourceOhms, 'Ω')}` : 'stiff']),
  ];
  append(out, table(['  rail', 'volts', 'tol', 'source'], railRows.map((r) => ['  ' + r[0], ...r.slice(1)])));
  out.push('');

  out.push(`Tube types (${design.models.length})`);
  for (const m of design.models) {
    const params =
      m.kind === 'child-langmuir'
        ? `mu ${m.mu}, k ${m.k}`
        : m.kind === 'koren-triode'
          ? `mu ${m.mu}, ex ${m.ex}, kg1 ${m.kg1}, kp ${m.kp}, kvb ${m.kvb}`
          : `mu ${m.mu}, ex ${m.ex}, kg1 ${m.kg1}, kg2 ${m.kg2}, kp ${m.kp}, kvb ${m.kvb}`;
    const from = m.library ? `, library "${m.library}"` : '';
    out.push(`  ${m.name}: ${m.kind}${from}, spread ${formatTolerance(m.spread)}`);
    append(out, wrap(`${params}, rgi ${formatSI(m.rgi, 'Ω')}, vgamma ${m.vgamma} V`, REPORT_COLUMNS - 4, '    ').map((l) => '    ' + l.trimStart()));
  }
  out.push('');

  const loads = new Map<string, Resistor[]>();
  const fixed = new Set([GROUND, ...design.rails.map((r) => r.name)]);
  const models = new Map<string, string>();
  for (const p of design.parts) {
    if (p.type === 'resistor') {
      for (const [net, other] of [
        [p.a, p.b],
        [p.b, p.a],
      ] as const) {
        if (fixed.has(other) && !fixed.has(net)) (loads.get(net) ?? loads.set(net, []).get(net)!).push(p);
      }
    }
    if (p.type === 'tube') models.set(p.name, p.model);
  }
  const stages = graph.nets.filter((n) => n.kind === 'stage');
  out.push(`Stages (${stages.length})`);
  const stageRows = stages.map((n) => {
    const types = [...new Set(n.drivers.map((s) => models.get(s) ?? '?'))].join('/');
    const candidates = loads.get(n.name) ?? [];
    const load = candidates.find((r) => r.role === 'load') ?? candidates[0];
    const loadText = load ? `${formatSI(load.ohms, 'Ω')}→${load.a === n.name ? load.b : load.a}` : '—';
    const inputs = graph.graph.predecessors(n.name) ?? [];
    return ['  ' + n.name, types, String(n.drivers.length), loadText, [...inputs].sort(compareNames)];
  });
  append(out, table(['  net', 'tube', 'sections', 'load', 'inputs from'], stageRows, [20, 14, 8, 12]));
  out.push('');

  out.push(`Nets (${graph.nets.length})`);
  const netRows = graph.nets.map((n) => {
    const receivers = [...new Set(n.receivers.map((r) => r.output ?? r.section))].sort(compareNames);
    const driver = n.kind === 'input' ? 'input' : n.drivers.length === 1 ? n.drivers[0]! : `${n.drivers.length} sections`;
    return ['  ' + n.name, driver, String(n.fanout), receivers];
  });
  append(out, table(['  net', 'driver', 'fan-out', 'feeds'], netRows, [20, 16, 7]));
  out.push('');

  out.push(`Loops (${graph.loops.length})`);
  if (graph.loops.length === 0) out.push('  none: every signal path runs one way');
  for (const loop of graph.loops) {
    const head = `  ${loop.kind === 'latch' ? 'latch' : 'loop '}  `;
    const body = loop.kind === 'latch' ? loop.nets.join(' ↔ ') : `${loop.nets.length} nets: `;
    out.push(head + body + (loop.kind === 'loop' ? cutList(loop.nets, REPORT_COLUMNS - head.length - body.length) : ''));
  }
  out.push('');

  const counts = new Map<string, number>();
  for (const p of design.parts) {
    const key = p.type === 'switch' ? (p.momentary ? 'button' : 'switch') : p.type === 'tube' ? 'section' : p.type;
    counts.set(key, (counts.get(key) ?? 0) + 1);
  }
  const generated = design.parts.filter((p) => isGeneratedName(p.name)).length;
  const parts = [...counts].map(([k, n]) => `${n} ${k}${n === 1 ? '' : k === 'switch' ? 'es' : 's'}`).join(', ');
  append(out, wrap(`Parts: ${design.parts.length} (${parts || 'none'}); ${generated} named by the tool`, REPORT_COLUMNS));
  const cautions = safetyCautions(design);
  if (cautions.length > 0) out.push('', ...cautions.flatMap((c) => wrap(c, REPORT_COLUMNS)));
  return out.join('\n') + '\n';
}
