import { describe, expect, it } from 'vitest';
import { renderDiagnostic, renderDiagnostics, type Diagnostic } from '../../lib/index.js';

const span = (line: number, col: number, endCol: number, offset: number) => ({
  file: 'x.tube',
  start: { line, col, offset },
  end: { line, col: endCol, offset: offset + endCol - col },
});

describe('rendering a diagnostic', () => {
  it('leads with file:line:col, shows the source line and a caret run under the span', () => {
    const text = 'rail bp = 24 V\nstage q {\n  input nqq series 1 k\n}\n';
    const d: Diagnostic = { code: 'unknown-net', severity: 'error', message: "unknown net 'nqq'", span: span(3, 9, 12, 33), notes: ["did you mean 'nq'?"] };
    expect(renderDiagnostic(d, new Map([['x.tube', text]]))).toBe(
      ["x.tube:3:9: error: unknown net 'nqq' [unknown-net]", '  line 3:   input nqq series 1 k', '                  ^^^', "  → did you mean 'nq'?"].join('\n'),
    );
  });

  it('keeps the head line in the file:line:col: severity: message form editors and compilers parse (common practice, no source), with no numbered gutter or "= note" lines', () => {
    const text = 'rail bp = 24 V\nstage q {\n  input nqq series 1 k\n}\n';
    const d: Diagnostic = { code: 'unknown-net', severity: 'error', message: "unknown net 'nqq'", span: span(3, 9, 12, 33), notes: ["did you mean 'nq'?"] };
    const out = renderDiagnostic(d, new Map([['x.tube', text]]));
    expect(out.split('\n')[0]).toMatch(/^[^:]+:\d+:\d+: (error|warning): .+ \[[a-z-]+\]$/);
    for (const line of out.split('\n').slice(1)) {
      expect(line).not.toMatch(/^\s*\d*\s*\|/);
      expect(line).not.toMatch(/^\s*= /);
    }
    // The caret run sits under the span's own characters in the quoted line.
    const [, quoted, carets] = out.split('\n') as [string, string, string];
    expect(quoted.slice(carets.indexOf('^'), carets.lastIndexOf('^') + 1)).toBe('nqq');
  });

  it('prints only the head line when the source text is not at hand, and counts what it printed', () => {
    const d: Diagnostic = { code: 'port-unused', severity: 'warning', message: 'm', span: span(1, 1, 2, 0), notes: [] };
    expect(renderDiagnostics([d], new Map())).toBe('x.tube:1:1: warning: m [port-unused]\n0 errors, 1 warning');
  });
});
