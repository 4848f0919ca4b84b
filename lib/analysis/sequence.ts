import { error, type Checked, type Diagnostic } from '../source/diagnostic.js';
import type { SourceSpan } from '../source/span.js';
import { LineIndex } from '../source/span.js';

/** One step of an input sequence, or an expectation about the state after the step before it. */
export type SequenceAction =
  | { kind: 'press' | 'release' | 'close' | 'open' | 'pulse'; part: string; span: SourceSpan }
  | { kind: 'set'; part: string; volts: number; span: SourceSpan }
  | { kind: 'expect'; states: { net: string; high: boolean }[]; span: SourceSpan };

/**
 * Reads an input sequence, our own small format: one action a line or between `;`,
 * `#` to the end of a line a comment.
 *
 * - `press NAME`, `release NAME`: a button held down, let go;
 * - `close NAME`, `open NAME`: a switch;
 * - `pulse NAME`: a button pressed and let go (two steps: one clock phase);
 * - `set NAME = 12 V`: a drive's level;
 * - `expect NET=1 OTHER=0 …`: the logic state after the step before, asserted.
 *
 * Never throws: every malformed action is a diagnostic at its place.
 *
 * Example: `press START; expect on=1; release START; expect on=1`.
 */
export function parseSequence(file: string, text: string): Checked<SequenceAction[]> {
  const lines = new LineIndex(text);
  const actions: SequenceAction[] = [];
  const diagnostics: Diagnostic[] = [];
  const re = /[^;\n]+/g;
  for (let m = re.exec(text); m; m = re.exec(text)) {
    const raw = m[0].replace(/#.*$/, '');
    const trimmed = raw.trim();
    if (trimmed === '') continue;
    const start = m.index + raw.indexOf(trimmed);
    const span = lines.span(file, start, start + trimmed.length);
    const words = trimmed.split(/\s+/);
    const verb = words[0]!.toLowerCase();
    if (['press', 'release', 'close', 'open', 'pulse'].includes(verb) && words.length === 2) {
      actions.push({ kind: verb as 'press', part: words[1]!, span });
      continue;
    }
    const set = /^set\s+(\S+)\s*=\s*(-?\d+(?:\.\d+)?)\s*V?$/i.exec(trimmed);
    if (set) {
      actions.push({ kind: 'set', part: set[1]!, volts: Number(set[2]), span });
      continue;
    }
    if (verb === 'expect' && words.length > 1) {
      const states = words.slice(1).map((w) => /^([^=\s]+)=([01])$/.exec(w));
      if (states.every(Boolean)) {
        actions.push({ kind: 'expect', states: states.map((s) => ({ net: s![1]!, high: s![2] === '1' })), span });
        continue;
      }
    }
    diagnostics.push(
      error('sequence-syntax', `not an action: '${trimmed}'`, span, ['actions: press NAME, release NAME, close NAME, open NAME, pulse NAME, set NAME = 12 V, expect NET=1 OTHER=0']),
    );
  }
  return { value: actions, diagnostics };
}
