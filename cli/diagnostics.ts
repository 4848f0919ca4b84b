import type { ChalkInstance } from 'chalk';
import { renderDiagnostics, type Diagnostic } from '../lib/index.js';

/** Renders diagnostics, colouring the severity words when `chalk` has colour. */
export function formatDiagnostics(diagnostics: readonly Diagnostic[], sources: ReadonlyMap<string, string>, chalk: ChalkInstance): string {
  const text = renderDiagnostics(diagnostics, sources);
  if (chalk.level === 0) return text;
  return text
    .replace(/: error: /g, `: ${chalk.red.bold('error')}: `)
    .replace(/: warning: /g, `: ${chalk.yellow.bold('warning')}: `)
    .replace(/^( +\| +)(\^+)$/gm, (_m, a: string, b: string) => a + chalk.red(b));
}
