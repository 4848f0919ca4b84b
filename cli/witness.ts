import type { Witness } from '../lib/index.js';
import type { CliIo } from './io.js';
import { usageError } from './load.js';

/**
 * Reads the witness `solve --at FILE` re-solves: a witness object itself (`values`,
 * `positions`, `states`), or a whole `check --json` report, from which `--at-net NAME`
 * picks the witness of net NAME or of the latch NAME belongs to (needed only when the
 * report holds more than one). Returns the witness and what it is the witness of, or the
 * exit code of a usage error (printed).
 */
export function readWitness(file: string, atNet: string | undefined, io: CliIo): { witness: Witness; of: string } | number {
  let text: string;
  try {
    text = io.readFile(file);
  } catch (e) {
    return usageError(io, `cannot read the witness file '${file}': ${(e as Error).message}`);
  }
  let data: unknown;
  try {
    data = JSON.parse(text);
  } catch (e) {
    return usageError(io, `the witness file '${file}' is not JSON: ${(e as Error).message}`);
  }
  if (isWitness(data)) return { witness: data, of: file };
  const found: { name: string; nets: string[]; witness: Witness }[] = [];
  if (data && typeof data === 'object') {
    const r = data as { nets?: unknown; latches?: unknown };
    for (const n of Array.isArray(r.nets) ? r.nets : []) if (n && isWitness(n.witness) && typeof n.name === 'string') found.push({ name: `net ${n.name}`, nets: [n.name], witness: n.witness });
    for (const l of Array.isArray(r.latches) ? r.latches : []) if (l && isWitness(l.witness) && Array.isArray(l.nets)) found.push({ name: `latch ${l.nets.join(' ↔ ')}`, nets: l.nets, witness: l.witness });
  }
  if (found.length === 0) return usageError(io, `'${file}' holds no witness: give a witness object, or a check --json report in which a net or latch fails`);
  const picked = atNet === undefined ? (found.length === 1 ? found : []) : found.filter((f) => f.nets.includes(atNet));
  if (picked.length === 0) {
    const names = found.map((f) => f.nets[0]).join(', ');
    return usageError(io, atNet === undefined ? `'${file}' holds ${found.length} witnesses: pick one with --at-net (one of ${names})` : `'${file}' holds no witness for '${atNet}' (witnesses: ${names})`);
  }
  // A net's own witness before its latch's.
  const best = picked.find((f) => f.name.startsWith('net')) ?? picked[0]!;
  return { witness: best.witness, of: best.name };
}

function isWitness(x: unknown): x is Witness {
  if (!x || typeof x !== 'object') return false;
  const w = x as Record<string, unknown>;
  const record = (v: unknown, ok: (e: unknown) => boolean) => !!v && typeof v === 'object' && !Array.isArray(v) && Object.values(v).every(ok);
  return record(w.values, (e) => typeof e === 'number' && Number.isFinite(e)) && record(w.positions, (e) => e === 'closed' || e === 'open') && record(w.states, (e) => e === 'high' || e === 'low');
  // `key` and `shows` are for reading; a witness written by hand may leave them out.
}
