import { hasErrors, sortDiagnostics, type Diagnostic } from '../source/diagnostic.js';
import { checkDesign } from './checkDesign.js';
import { expandDesign } from './expand.js';
import { designFromJson } from './json.js';
import type { Design } from './model.js';
import { collectSources, type SourceLoader } from './sources.js';
import { validateDesign } from './validate.js';

export interface LoadedDesign {
  /** The flat design; with errors it holds what could be built, and may be absent for broken JSON. */
  design: Design | undefined;
  /** Every problem found, sorted by file and position. */
  diagnostics: Diagnostic[];
  /** The text of every file read, by the name spans use, for rendering diagnostics. */
  sources: Map<string, string>;
  ok: boolean;
}

export interface LoadOptions {
  /** Reads included files; without it an include is a diagnostic. */
  loader?: SourceLoader;
  /** Also run the `checkDesign` invariant pass (tests and `--check-model`). */
  checkModel?: boolean;
}

/** True when `text` is a JSON design rather than design-language text. */
export function looksLikeJson(file: string, text: string): boolean {
  return file.toLowerCase().endsWith('.json') || /^\uFEFF?\s*\{/.test(text);
}

/**
 * Front end of every command: reads a design given as text or as JSON
 * (`tubemargin.design/1`), expands it and checks its wiring.
 *
 * Example: `loadDesign('a.tube', 'rail bp = 24 V').ok` is false, with one `empty-design` error.
 */
export function loadDesign(file: string, text: string, options: LoadOptions = {}): LoadedDesign {
  let design: Design | undefined;
  let diagnostics: Diagnostic[];
  let sources: Map<string, string>;
  if (looksLikeJson(file, text)) {
    const read = designFromJson(text, file);
    design = read.value;
    diagnostics = read.diagnostics;
    sources = new Map([[file, text]]);
  } else {
    const collected = collectSources(file, text, options.loader);
    sources = collected.texts;
    if (hasErrors(collected.diagnostics)) {
      // A file that does not read (a syntax error, an include not found) is not given a
      // meaning: what expanding it would say (a net "unknown" because its stage broke off,
      // a stage "with no input" because its input did not parse) follows from the error.
      design = undefined;
      diagnostics = collected.diagnostics;
    } else {
      const expanded = expandDesign(collected.statements);
      design = expanded.value;
      diagnostics = [...collected.diagnostics, ...expanded.diagnostics];
    }
  }
  // concat, not push(...): a large design can have more warnings than a call takes arguments.
  if (design && !hasErrors(diagnostics)) diagnostics = diagnostics.concat(validateDesign(design, file));
  if (design && options.checkModel) diagnostics = diagnostics.concat(checkDesign(design));
  diagnostics = sortDiagnostics(diagnostics);
  return { design, diagnostics, sources, ok: design !== undefined && !hasErrors(diagnostics) };
}
