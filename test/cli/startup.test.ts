import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';

/**
 * Start-up (issue #16): every command loads `cli/main.ts` and, through it, every command's
 * module; a package imported at the top of any of them is paid for by `--version` too.
 * The packages below take tens to hundreds of milliseconds to load (measured by
 * `npm run bench`, docs/PERFORMANCE.md, start-up section) and are used by one or two
 * commands, so they may be loaded only by a dynamic `import()` where they are used.
 * Type-only imports cost nothing at run time and are allowed.
 */
const HEAVY = ['vega', 'vega-lite', 'cli-progress', 'elkjs'];

function sources(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true, recursive: true })
    .filter((e) => e.isFile() && e.name.endsWith('.ts'))
    .map((e) => join(e.parentPath, e.name));
}

/** The packages a file imports at its top (not `import type`), with their line numbers. */
export function staticImports(text: string): { from: string; line: number }[] {
  const found: { from: string; line: number }[] = [];
  const re = /^import\s+(?!type\b)[^;]*?from\s+'([^']+)'/gms;
  for (const m of text.matchAll(re)) found.push({ from: m[1]!, line: text.slice(0, m.index).split('\n').length });
  return found;
}

describe('start-up: heavy packages are loaded where they are used', () => {
  it('the import scanner sees value imports and ignores type-only ones', () => {
    const text = "import type { TopLevelSpec } from 'vega-lite';\nimport {\n  parse,\n  View } from 'vega';\n";
    expect(staticImports(text)).toEqual([{ from: 'vega', line: 2 }]);
  });

  it('no file in lib/ or cli/ imports vega, vega-lite or cli-progress at its top', () => {
    const offending: string[] = [];
    for (const file of [...sources('lib'), ...sources('cli')]) {
      for (const { from, line } of staticImports(readFileSync(file, 'utf8'))) if (HEAVY.some((h) => from === h || from.startsWith(`${h}/`))) offending.push(`${file}:${line} ${from}`);
    }
    expect(offending).toEqual([]);
  });
});
