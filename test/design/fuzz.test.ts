import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { checkMargins, DIAGNOSTIC_CODES, designFromJson, designToJson, loadDesign, renderDiagnostics, solveOperatingPoint } from '../../lib/index.js';
import { memoryLoader, netsFiles } from '../helpers.js';

const FILES = netsFiles();
const NAMES = Object.keys(FILES).sort();
const TOKENS = [
  'stage', 'block', 'instance', 'rail', 'type', 'let', 'param', 'include', 'defaults', 'resistor', 'section', 'switch',
  'button', 'drive', 'diode', 'capacitor', 'input', 'load', 'screen', 'series', 'pulldown', 'to', 'tol', 'of', 'with',
  'in', 'mod', 'direct', 'like', '{', '}', '(', ')', '[', ']', ',', ';', ':', '=', '..', '-', '*', '/', '"', '#', '\n',
  '0', '-1', '1e999', '4k7', '33 k', '5 %', '12AU7', '"12AU7"', 'gnd', 'bp', 'q[i]', 'µ', 'Ω', '\u0000', '±', '"lib/latch.tube"',
];

type Mutation =
  | { op: 'drop'; at: number; len: number }
  | { op: 'dup'; at: number; len: number }
  | { op: 'swap'; a: number; b: number; len: number }
  | { op: 'token'; at: number; len: number; token: number };

const mutation: fc.Arbitrary<Mutation> = fc.oneof(
  fc.record({ op: fc.constant('drop' as const), at: fc.nat(), len: fc.integer({ min: 1, max: 40 }) }),
  fc.record({ op: fc.constant('dup' as const), at: fc.nat(), len: fc.integer({ min: 1, max: 200 }) }),
  fc.record({ op: fc.constant('swap' as const), a: fc.nat(), b: fc.nat(), len: fc.integer({ min: 1, max: 30 }) }),
  fc.record({ op: fc.constant('token' as const), at: fc.nat(), len: fc.integer({ min: 0, max: 12 }), token: fc.nat({ max: TOKENS.length - 1 }) }),
);

function apply(text: string, m: Mutation): string {
  const n = Math.max(1, text.length);
  switch (m.op) {
    case 'drop': {
      const at = m.at % n;
      return text.slice(0, at) + text.slice(at + m.len);
    }
    case 'dup': {
      const at = m.at % n;
      return text.slice(0, at) + text.slice(at, at + m.len) + text.slice(at);
    }
    case 'swap': {
      const [a, b] = [m.a % n, m.b % n].sort((x, y) => x - y) as [number, number];
      if (b < a + m.len) return text;
      return text.slice(0, a) + text.slice(b, b + m.len) + text.slice(a + m.len, b) + text.slice(a, a + m.len) + text.slice(b + m.len);
    }
    case 'token': {
      const at = m.at % n;
      return text.slice(0, at) + TOKENS[m.token] + text.slice(at + m.len);
    }
  }
}

const KNOWN = new Set<string>(DIAGNOSTIC_CODES);

/** Loads the demo file `which` with `mutations` applied (an included file's mutant through a design that includes it). */
function loadMutant(which: number, mutations: Parameters<typeof apply>[1][]) {
  const name = NAMES[which] as string;
  const files = { ...FILES, [name]: mutations.reduce(apply, FILES[name] as string) };
  const main = name.includes('/lib/') ? 'nets/nor-adder.tube' : name;
  return loadDesign(main, files[main] as string, { loader: memoryLoader(files) });
}

describe('fuzzing the front end with mutants of the nets/ files', () => {
  it('gives diagnostics only, never an exception or a hang, for 10,000 mutants', () => {
    let slowest = 0;
    let withErrors = 0;
    fc.assert(
      fc.property(fc.nat({ max: NAMES.length - 1 }), fc.array(mutation, { minLength: 1, maxLength: 4 }), (which, mutations) => {
        const name = NAMES[which] as string;
        const text = mutations.reduce(apply, FILES[name] as string);
        // The mutant replaces its original, so includes of a mutated library file read the mutant.
        const files = { ...FILES, [name]: text };
        const main = name.includes('/lib/') ? 'nets/irrigation-sequencer.tube' : name;
        const start = performance.now();
        const r = loadDesign(main, files[main] as string, { loader: memoryLoader(files), checkModel: true });
        renderDiagnostics(r.diagnostics, r.sources);
        slowest = Math.max(slowest, performance.now() - start);
        for (const d of r.diagnostics) {
          expect(KNOWN.has(d.code)).toBe(true);
          expect(d.code).not.toBe('model-inconsistent');
          if (d.span) expect(r.sources.has(d.span.file)).toBe(true);
        }
        if (!r.ok) withErrors++;
      }),
      { numRuns: 10_000, seed: 424242 },
    );
    // Most mutants must actually be broken, or the fuzzer is not reaching the diagnostics.
    expect(withErrors).toBeGreaterThan(3000);
    expect(slowest).toBeLessThan(2000);
  });

  it('gives diagnostics only for mutated JSON designs', () => {
    const files = netsFiles();
    const base = loadDesign('nets/nor-adder.tube', files['nets/nor-adder.tube']!, { loader: memoryLoader(files) });
    const json = JSON.stringify(designToJson(base.design!), null, 1);
    fc.assert(
      fc.property(fc.array(mutation, { minLength: 1, maxLength: 3 }), (mutations) => {
        const text = mutations.reduce(apply, json);
        const r = designFromJson(text, 'm.json');
        for (const d of r.diagnostics) expect(KNOWN.has(d.code)).toBe(true);
      }),
      { numRuns: 2000, seed: 99 },
    );
  });

  it('solves every mutant that loads without errors, never throwing, within bounded time', () => {
    let solved = 0;
    fc.assert(
      fc.property(fc.nat({ max: NAMES.length - 1 }), fc.array(mutation, { minLength: 1, maxLength: 2 }), (which, mutations) => {
        const r = loadMutant(which, mutations);
        if (!r.ok || !r.design || r.design.parts.length > 2000) return;
        const start = performance.now();
        const op = solveOperatingPoint(r.design);
        expect(performance.now() - start).toBeLessThan(20_000);
        for (const d of 'nodes' in op ? op.diagnostics : op.diagnostics) expect(KNOWN.has(d.code)).toBe(true);
        solved++;
      }),
      { numRuns: 300, seed: 777 },
    );
    expect(solved).toBeGreaterThan(20);
  });

  it('checks every small mutant that loads without errors, never throwing: a verdict or diagnostics', () => {
    let checked = 0;
    fc.assert(
      fc.property(fc.nat({ max: NAMES.length - 1 }), fc.array(mutation, { minLength: 1, maxLength: 2 }), (which, mutations) => {
        const r = loadMutant(which, mutations);
        if (!r.ok || !r.design || r.design.parts.length > 300) return;
        const result = checkMargins(r.design);
        if ('verdict' in result) expect(['pass', 'fail', 'undecided']).toContain(result.verdict);
        else for (const d of result.diagnostics) expect(KNOWN.has(d.code)).toBe(true);
        checked++;
      }),
      { numRuns: 120, seed: 4242 },
    );
    expect(checked).toBeGreaterThan(10);
  });
});
