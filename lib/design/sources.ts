import type { Statement } from '../netlist/ast.js';
import { parseDesignText } from '../netlist/parser.js';
import { error, type Diagnostic } from '../source/diagnostic.js';
import type { SourceSpan } from '../source/span.js';
import { append } from '../lists.js';

/**
 * Reads an included file for the library, which never touches the file system itself.
 * `request` is the path as written in `include "…"`, `from` the name of the including file.
 * Returns the file's canonical name (used in spans and to spot loops) and its text, or a
 * reason it could not be read.
 */
export type SourceLoader = (request: string, from: string) => { file: string; text: string } | { error: string };

/** Largest file the tool reads (bytes of text). */
export const MAX_SOURCE_CHARS = 64 * 1024 * 1024;

/** How deeply includes may nest. */
export const MAX_INCLUDE_DEPTH = 32;

export interface CollectedSources {
  /** Top-level statements of the main file with every include replaced by the included file's statements. */
  statements: Statement[];
  /** Every file read, by canonical name, for rendering diagnostics. */
  texts: Map<string, string>;
  diagnostics: Diagnostic[];
}

/**
 * Parses a design file and, through `loader`, every file it includes (relative to the
 * including file). A file included twice is read once (the second include does nothing); an
 * include that loops back to a file still being read is an `include-cycle`; one the loader
 * cannot read is `include-not-found`.
 */
export function collectSources(file: string, text: string, loader: SourceLoader | undefined): CollectedSources {
  const texts = new Map<string, string>();
  const diagnostics: Diagnostic[] = [];
  const done = new Set<string>();

  const visit = (name: string, body: string, stack: string[]): Statement[] => {
    texts.set(name, body);
    done.add(name);
    if (body.length > MAX_SOURCE_CHARS) {
      diagnostics.push(error('file-too-large', `${name} is larger than ${MAX_SOURCE_CHARS / 1024 / 1024} MiB`, undefined));
      return [];
    }
    const parsed = parseDesignText(body, name);
    append(diagnostics, parsed.diagnostics);
    const out: Statement[] = [];
    for (const st of parsed.value.statements) {
      if (st.kind !== 'include') {
        out.push(st);
        continue;
      }
      append(out, include(st.path, st.pathSpan, name, [...stack, name]));
    }
    return out;
  };

  const include = (request: string, span: SourceSpan, from: string, stack: string[]): Statement[] => {
    if (!loader) {
      diagnostics.push(error('include-not-found', `cannot include "${request}": this design was given without a file system`, span));
      return [];
    }
    if (stack.length > MAX_INCLUDE_DEPTH) {
      diagnostics.push(error('include-cycle', `includes nest deeper than ${MAX_INCLUDE_DEPTH} files`, span));
      return [];
    }
    const got = loader(request, from);
    if ('error' in got) {
      diagnostics.push(error('include-not-found', `cannot include "${request}": ${got.error}`, span));
      return [];
    }
    if (stack.includes(got.file)) {
      const chain = [...stack.slice(stack.indexOf(got.file)), got.file].join(' → ');
      diagnostics.push(error('include-cycle', `including "${request}" loops back to a file that is still being read`, span, [`the loop: ${chain}`]));
      return [];
    }
    if (done.has(got.file)) return [];
    return visit(got.file, got.text, stack);
  };

  const statements = visit(file, text, []);
  return { statements, texts, diagnostics };
}
