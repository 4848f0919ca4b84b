import { readFileSync, readdirSync } from 'node:fs';
import { dirname, join, normalize } from 'node:path';
import { fileURLToPath } from 'node:url';
import { checkMargins, loadDesign, type CheckOptions, type CheckResult, type Design, type Diagnostic, type LoadedDesign, type SourceLoader } from '../lib/index.js';

export const ROOT = normalize(join(dirname(fileURLToPath(import.meta.url)), '..'));
export const NETS = join(ROOT, 'nets');

/** A loader over in-memory files, resolving includes relative to the including file like the CLI does. */
export function memoryLoader(files: Record<string, string>): SourceLoader {
  return (request, from) => {
    const file = normalize(join(dirname(from), request));
    const text = files[file];
    return text === undefined ? { error: 'no such file' } : { file, text };
  };
}

/** Loads design text (named `main.tube`) with optional extra in-memory files, running the model check too. */
export function load(text: string, files: Record<string, string> = {}, file = 'main.tube'): LoadedDesign {
  return loadDesign(file, text, { loader: memoryLoader({ ...files, [file]: text }), checkModel: true });
}

/** Loads text that must be free of errors and returns its design. */
export function design(text: string, files: Record<string, string> = {}): Design {
  const r = load(text, files);
  const errors = r.diagnostics.filter((d) => d.severity === 'error');
  if (errors.length > 0 || !r.design) throw new Error('unexpected errors: ' + errors.map((d) => `${d.span?.start.line}:${d.span?.start.col} ${d.code} ${d.message}`).join('; '));
  return r.design;
}

export function codes(diagnostics: readonly Diagnostic[]): string[] {
  return diagnostics.map((d) => d.code);
}

/** `line:col-line:col code` of each diagnostic, the form parser tests compare exactly. */
export function where(diagnostics: readonly Diagnostic[]): string[] {
  return diagnostics.map((d) => `${d.span?.start.line}:${d.span?.start.col}-${d.span?.end.line}:${d.span?.end.col} ${d.code}`);
}

/** Every file under nets/ (recursively) by path relative to the repository root. */
export function netsFiles(): Record<string, string> {
  const out: Record<string, string> = {};
  const walk = (dir: string) => {
    for (const e of readdirSync(dir, { withFileTypes: true })) {
      const p = join(dir, e.name);
      if (e.isDirectory()) walk(p);
      else if (e.name.endsWith('.tube')) out[normalize(p.slice(ROOT.length + 1))] = readFileSync(p, 'utf8');
    }
  };
  walk(NETS);
  return out;
}

/** The top-level demo designs (nets/*.tube, not the included files in nets/lib). */
export function demoDesigns(): string[] {
  return Object.keys(netsFiles())
    .filter((f) => !f.includes('/lib/'))
    .sort();
}

/** A design without source spans, for comparing models read from different sources. */
export function withoutSpans<T>(value: T): T {
  return JSON.parse(JSON.stringify(value, (k, v) => (k === 'span' || k === 'screenSpan' ? undefined : v)));
}

/** `checkMargins` on a design that must compile: its result, or the test fails. */
export function checkOf(d: Design, options: CheckOptions = {}): CheckResult {
  const r = checkMargins(d, options);
  if (!('verdict' in r)) throw new Error('the design does not compile: ' + r.diagnostics.map((x) => x.message).join('; '));
  return r;
}
