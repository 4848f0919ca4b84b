import type { SourceSpan } from './span.js';

/**
 * Every kind of problem tubemargin reports, one literal per kind, so that code and tests
 * can switch on it. The meaning of each is in docs/LANGUAGE.md ("Diagnostics").
 */
export const DIAGNOSTIC_CODES = [
  // reading text
  'bad-character',
  'unterminated-string',
  'bad-number',
  'unknown-unit',
  'unexpected-token',
  'nesting-too-deep',
  'file-too-large',
  'file-unreadable',
  // includes
  'include-not-found',
  'include-cycle',
  // names
  'duplicate-name',
  'unknown-name',
  'unknown-net',
  'unknown-part',
  'unknown-type',
  'unknown-block',
  'unknown-port',
  'unknown-field',
  'unknown-kind',
  'reserved-name',
  // values
  'unit-mismatch',
  'value-not-positive',
  'value-not-finite',
  'value-out-of-range',
  'tolerance-range',
  'index-not-integer',
  'empty-range',
  'missing-field',
  // structure
  'block-cycle',
  'block-too-deep',
  'expansion-too-large',
  'port-unconnected',
  'port-unused',
  'stage-no-input',
  'net-single-connection',
  'grid-no-dc-path',
  'node-no-dc-path',
  'empty-design',
  'nothing-to-check',
  // solving
  'short-circuit',
  'no-convergence',
  'hint-not-held',
  'state-undecided',
  'latch-no-state',
  'outside-trusted-range',
  // supply sweeps
  'sweep-range',
  // bench readings (fit)
  'csv-syntax',
  'csv-column',
  'csv-value',
  'fit-refused',
  // resistor choice (tune)
  'tune-stage',
  // input sequences (step)
  'sequence-syntax',
  'no-clock',
  // JSON designs
  'json-syntax',
  'json-schema',
  'schema-version',
  // internal consistency (checkDesign); never expected from valid input
  'model-inconsistent',
] as const;

export type DiagnosticCode = (typeof DIAGNOSTIC_CODES)[number];

export type Severity = 'error' | 'warning';

export interface Diagnostic {
  code: DiagnosticCode;
  severity: Severity;
  message: string;
  /** Where the problem is; absent only for problems of a whole run (an unreadable file given on the command line). */
  span: SourceSpan | undefined;
  /** Extra lines: "did you mean", where a name was first defined, … */
  notes: string[];
}

export function error(code: DiagnosticCode, message: string, span: SourceSpan | undefined, notes: string[] = []): Diagnostic {
  return { code, severity: 'error', message, span, notes };
}

export function warning(code: DiagnosticCode, message: string, span: SourceSpan | undefined, notes: string[] = []): Diagnostic {
  return { code, severity: 'warning', message, span, notes };
}

export function hasErrors(diagnostics: readonly Diagnostic[]): boolean {
  return diagnostics.some((d) => d.severity === 'error');
}

/** A value together with every problem found while computing it. */
export interface Checked<T> {
  value: T;
  diagnostics: Diagnostic[];
}

/** Orders diagnostics by file, then position, errors before warnings at the same place. */
export function sortDiagnostics(diagnostics: readonly Diagnostic[]): Diagnostic[] {
  return [...diagnostics].sort((a, b) => {
    const fa = a.span?.file ?? '';
    const fb = b.span?.file ?? '';
    if (fa !== fb) return fa < fb ? -1 : 1;
    const oa = a.span?.start.offset ?? -1;
    const ob = b.span?.start.offset ?? -1;
    if (oa !== ob) return oa - ob;
    if (a.severity !== b.severity) return a.severity === 'error' ? -1 : 1;
    return 0;
  });
}
