import { describe, expect, it } from 'vitest';
import { MAX_ARRAY_LENGTH, MAX_BLOCK_DEPTH, MAX_PARTS, MAX_SOURCE_CHARS, designFromJson, loadDesign } from '../../lib/index.js';
import { MAX_JSON_DEPTH } from '../../lib/design/jsonText.js';
import { MAX_INCLUDE_DEPTH } from '../../lib/design/sources.js';
import { MAX_EXPRESSION_DEPTH } from '../../lib/netlist/parser.js';
import { codes, load } from '../helpers.js';

const errorCodes = (text: string, files: Record<string, string> = {}) => codes(load(text, files).diagnostics.filter((d) => d.severity === 'error'));

describe('limits, at their edge and one step past it', () => {
  it('refuses an empty file: a design with nothing in it has nothing to pass', () => {
    const r = load('');
    expect(r.ok).toBe(false);
    expect(codes(r.diagnostics)).toEqual(['empty-design']);
  });

  it('reads a 10 MB design', () => {
    const line = (i: number) => `resistor R${i} (n${i}, n${i + 1}) 4k7 tol 1 %   # a chain of resistors\n`;
    const parts: string[] = ['rail bp = 24 V\nresistor RTOP (bp, n0) 1 k\n'];
    let size = parts[0]!.length;
    let i = 0;
    while (size < 10_000_000) {
      const l = line(i++);
      parts.push(l);
      size += l.length;
    }
    parts.push(`resistor RBOT (n${i}, gnd) 1 k\n`);
    const r = loadDesign('big.tube', parts.join(''));
    expect(r.diagnostics).toEqual([]);
    expect(r.design?.parts.length).toBe(i + 2);
  });

  it(`refuses text longer than ${MAX_SOURCE_CHARS} characters before parsing it`, () => {
    const text = '#'.repeat(MAX_SOURCE_CHARS + 1);
    expect(codes(loadDesign('huge.tube', text).diagnostics)).toEqual(['file-too-large']);
  });

  const chain = (depth: number) => {
    const lines = [];
    for (let k = 1; k < depth; k++) lines.push(`block b${k} (x) { instance i of b${k + 1} (x: x) }`);
    lines.push(`block b${depth} (x) { resistor R (x, gnd) 1 k }`);
    lines.push('instance top of b1 (x: n)\nresistor RN (n, gnd) 1 k');
    return lines.join('\n');
  };

  it(`expands blocks nested ${MAX_BLOCK_DEPTH} deep, and refuses ${MAX_BLOCK_DEPTH + 1}`, () => {
    const ok = load(chain(MAX_BLOCK_DEPTH));
    expect(ok.ok).toBe(true);
    expect(ok.design?.parts.map((p) => p.name)).toContain(`top/${Array.from({ length: MAX_BLOCK_DEPTH - 1 }, () => 'i').join('/')}/R`);
    expect(errorCodes(chain(MAX_BLOCK_DEPTH + 1))).toEqual(['block-too-deep']);
  });

  it(`parses ${MAX_EXPRESSION_DEPTH} nested parentheses, and refuses ${MAX_EXPRESSION_DEPTH + 1}`, () => {
    const nested = (n: number) => `let x = ${'('.repeat(n)}1${')'.repeat(n)}\nresistor R (x, gnd) 1 k`;
    expect(load(nested(MAX_EXPRESSION_DEPTH)).ok).toBe(true);
    expect(errorCodes(nested(MAX_EXPRESSION_DEPTH + 1))).toEqual(['nesting-too-deep']);
    expect(errorCodes(`let x = ${'-'.repeat(100_000)}1`)).toEqual(['nesting-too-deep']);
  });

  it(`follows includes ${MAX_INCLUDE_DEPTH} files deep, and refuses one more`, () => {
    const files = (n: number) => {
      const f: Record<string, string> = {};
      for (let k = 1; k < n; k++) f[`f${k}.tube`] = `include "f${k + 1}.tube"`;
      f[`f${n}.tube`] = 'rail bp = 24 V\nresistor R (bp, gnd) 1 k';
      return f;
    };
    expect(load('include "f1.tube"', files(MAX_INCLUDE_DEPTH)).ok).toBe(true);
    expect(errorCodes('include "f1.tube"', files(MAX_INCLUDE_DEPTH + 1))).toEqual(['include-cycle']);
  });

  it(`expands an instance array of ${MAX_ARRAY_LENGTH} elements, and refuses one more`, () => {
    const text = (n: number) => `block one (x) { resistor R (x, gnd) 1 k }\ninstance u[i in 1..${n}] of one (x: n[i])`;
    const ok = load(text(MAX_ARRAY_LENGTH));
    expect(ok.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
    expect(ok.design?.parts).toHaveLength(MAX_ARRAY_LENGTH);
    expect(errorCodes(text(MAX_ARRAY_LENGTH + 1))).toEqual(['expansion-too-large']);
  });

  it(`expands a design of ${MAX_PARTS.toLocaleString('en')} parts, and refuses one more`, () => {
    const text = (extra: number) => {
      const arrays = MAX_PARTS / MAX_ARRAY_LENGTH;
      const lines = ['block one (x) { resistor R (x, gnd) 1 k }'];
      for (let a = 0; a < arrays; a++) lines.push(`instance u${a}[i in 1..${MAX_ARRAY_LENGTH}] of one (x: gnd)`);
      for (let e = 0; e < extra; e++) lines.push(`resistor X${e} (gnd, gnd) 1 k`);
      return lines.join('\n');
    };
    const ok = loadDesign('many.tube', text(0));
    expect(ok.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
    expect(ok.design?.parts).toHaveLength(MAX_PARTS);
    expect(codes(loadDesign('many.tube', text(1)).diagnostics)).toEqual(['expansion-too-large']);
  });

  it(`reads JSON nested ${MAX_JSON_DEPTH} deep, and refuses one more`, () => {
    const nested = (n: number) => `{"schema": "tubemargin.design/1", "parts": [], "title": ${'['.repeat(n - 1)}${']'.repeat(n - 1)}}`;
    expect(codes(designFromJson(nested(MAX_JSON_DEPTH), 'j.json').diagnostics)).toEqual(['json-schema']);
    expect(codes(designFromJson(nested(MAX_JSON_DEPTH + 1), 'j.json').diagnostics)).toEqual(['json-syntax']);
  });
});
