import type { Diagnostic } from './diagnostic.js';
import { LineIndex, formatLocation } from './span.js';

/** The texts of the files a run read, by the name spans use. */
export type SourceTexts = ReadonlyMap<string, string>;

/**
 * Renders one diagnostic for a terminal or a log, without colour: the location, severity,
 * message and code on one line (the `file:line:col: severity: message` form compilers and
 * editors read), then the line quoted under a `line N:` label with carets under the span,
 * then each note on a line of its own after an arrow:
 *
 * ```
 * demo.tube:4:9: error: unknown net 'nqq' [unknown-net]
 *   line 4:   input nqq series 220 k pulldown 220 k to bias
 *                   ^^^
 *   → did you mean 'nq'?
 * ```
 *
 * A span whose file is not in `sources` prints the first line and the notes only. Tabs in
 * the source line are shown as single spaces so the caret run lines up.
 */
export function renderDiagnostic(d: Diagnostic, sources: SourceTexts, indexCache = new Map<string, LineIndex>()): string {
  const head = `${d.span ? formatLocation(d.span) + ': ' : ''}${d.severity}: ${d.message} [${d.code}]`;
  const lines = [head];
  const text = d.span ? sources.get(d.span.file) : undefined;
  if (d.span && text !== undefined) {
    let index = indexCache.get(d.span.file);
    if (!index) {
      index = new LineIndex(text);
      indexCache.set(d.span.file, index);
    }
    const lineNo = d.span.start.line;
    const raw = index.lineText(lineNo).replace(/\t/g, ' ');
    const shown = raw.length > 200 ? raw.slice(0, 200) + '…' : raw;
    const label = `  line ${lineNo}: `;
    lines.push(`${label}${shown}`);
    const startCol = Math.min(d.span.start.col, shown.length + 1);
    const endCol = d.span.end.line === lineNo ? d.span.end.col : raw.length + 1;
    const width = Math.max(1, Math.min(endCol, shown.length + 1) - startCol);
    lines.push(`${' '.repeat(label.length + startCol - 1)}${'^'.repeat(width)}`);
  }
  for (const note of d.notes) lines.push(`  → ${note}`);
  return lines.join('\n');
}

/** Renders many diagnostics, one block each, and a closing count line. */
export function renderDiagnostics(diagnostics: readonly Diagnostic[], sources: SourceTexts): string {
  const cache = new Map<string, LineIndex>();
  const blocks = diagnostics.map((d) => renderDiagnostic(d, sources, cache));
  const errors = diagnostics.filter((d) => d.severity === 'error').length;
  const warnings = diagnostics.length - errors;
  const plural = (n: number, w: string) => `${n} ${w}${n === 1 ? '' : 's'}`;
  if (diagnostics.length > 0) blocks.push(`${plural(errors, 'error')}, ${plural(warnings, 'warning')}`);
  return blocks.join('\n');
}
