import { describe, expect, it } from 'vitest';
import { parseDesignText, type Expr, type Statement } from '../../lib/index.js';
import { where } from '../helpers.js';

const parse = (text: string) => parseDesignText(text, 'p.tube');
const first = (text: string): Statement => {
  const r = parse(text);
  expect(r.diagnostics).toEqual([]);
  return r.value.statements[0] as Statement;
};
const value = (text: string): number => {
  const st = first(`let x = ${text}`);
  if (st.kind !== 'let' || st.value.kind !== 'number') throw new Error('not a number literal');
  return st.value.value;
};

describe('the design-language parser', () => {
  it('gives every statement the exact span of its text', () => {
    const r = parse('rail bp = 24 V tol 5 %\n\nrail bias = -12 V\n');
    expect(r.diagnostics).toEqual([]);
    const [a, b] = r.value.statements as [Statement, Statement];
    expect(a.span).toEqual({ file: 'p.tube', start: { line: 1, col: 1, offset: 0 }, end: { line: 1, col: 23, offset: 22 } });
    expect(b.span.start).toEqual({ line: 3, col: 1, offset: 24 });
    expect(b.span.end).toEqual({ line: 3, col: 18, offset: 41 });
  });

  it('reads SI multipliers and units written against the number or apart from it', () => {
    expect(value('33k')).toBe(33000);
    expect(value('33 k')).toBe(33000);
    expect(value('4.7 kΩ')).toBeCloseTo(4700, 9);
    expect(value('2.2M')).toBeCloseTo(2.2e6, 6);
    expect(value('100 pF')).toBeCloseTo(1e-10, 20);
    expect(value('10 µF')).toBeCloseTo(1e-5, 15);
    expect(value('10uF')).toBeCloseTo(1e-5, 15);
    expect(value('5 %')).toBeCloseTo(0.05, 15);
    expect(value('5%')).toBeCloseTo(0.05, 15);
    expect(value('1e3')).toBe(1000);
    expect(value('15 mA')).toBeCloseTo(0.015, 15);
    expect(value('220 ohm')).toBe(220);
  });

  it('reads the resistor code of IEC 60062 (4k7 is 4.7 kΩ, 2M2 is 2.2 MΩ, 4R7 is 4.7 Ω)', () => {
    expect(value('4k7')).toBeCloseTo(4700, 9);
    expect(value('2M2')).toBeCloseTo(2.2e6, 6);
    expect(value('4R7')).toBeCloseTo(4.7, 12);
  });

  it('parses arithmetic with the usual precedence and mod', () => {
    const st = first('let x = 1 + 2 * 3 mod 4 - -5');
    const show = (e: Expr): string =>
      e.kind === 'number' ? String(e.value) : e.kind === 'name' ? e.name : e.kind === 'unary' ? `(${e.op}${show(e.operand)})` : `(${show(e.left)} ${e.op} ${show(e.right)})`;
    if (st.kind !== 'let') throw new Error();
    expect(show(st.value)).toBe('((1 + ((2 * 3) mod 4)) - (-5))');
  });

  it('reports an unknown unit, and suggests quotes for what looks like a tube designation', () => {
    const r = parse('let x = 12furlongs\nstage q { tube 12AU7 }\n');
    expect(where(r.diagnostics)).toEqual(['1:9-1:19 unknown-unit', '2:16-2:21 unexpected-token']);
    expect(r.diagnostics[1]?.notes).toEqual(['a library type designation goes in quotes: "12AU7"']);
  });

  it('reports every syntax error in a file, not only the first, and keeps the good statements', () => {
    const r = parse('rail bp = \nrail ok = 1 V\nstag q { }\nlet y = (1 + 2\nlet z = 3\n');
    expect(where(r.diagnostics)).toEqual(['1:11-2:1 unexpected-token', '3:1-3:5 unexpected-token', '4:15-5:1 unexpected-token']);
    expect(r.diagnostics[1]?.notes).toEqual(["did you mean 'stage'?"]);
    expect(r.value.statements.map((s) => s.kind)).toEqual(['rail', 'let']);
  });

  it('reads a stage with a plate load, a screen and several inputs', () => {
    const st = first('stage q {\n  tube LP\n  load 33 k to bp tol 1 %\n  screen bp\n  input nq series 220 k pulldown 220 k to bias\n  input s direct\n}');
    if (st.kind !== 'stage') throw new Error();
    expect(st.items.map((i) => i.kind)).toEqual(['tube', 'load', 'screen', 'input', 'input']);
    const [, , , a, b] = st.items;
    expect(a?.kind === 'input' && a.pulldown?.to.name.text).toBe('bias');
    expect(b?.kind === 'input' && b.series).toBeUndefined();
  });

  it('reads raw parts with positional and named connections over several lines', () => {
    const st = first('section V1 "6DJ8" (\n  plate: p,\n  grid: g,\n  cathode: gnd\n)');
    if (st.kind !== 'part') throw new Error();
    expect(st.pins.map((p) => `${p.pin?.text}=${p.net.name.text}`)).toEqual(['plate=p', 'grid=g', 'cathode=gnd']);
    expect(st.type).toMatchObject({ quoted: true, name: { text: '6DJ8' } });
  });

  it('reads blocks, params and instance arrays with index arithmetic', () => {
    const r = parse('block b (x, y) {\n  param r = 1 k\n  resistor R (x, y) r\n}\ninstance u[i in 0..9] of b (x: n[i], y: n[(i + 1) mod 10]) with (r = 2 k)\n');
    expect(r.diagnostics).toEqual([]);
    const inst = r.value.statements[1];
    if (inst?.kind !== 'instance') throw new Error();
    expect(inst.array?.variable.text).toBe('i');
    expect(inst.overrides.map((o) => o.name.text)).toEqual(['r']);
  });

  it('rejects statements in the wrong place with a reason', () => {
    const r = parse('param x = 1\nblock b () { rail r = 1 V }\n');
    expect(r.diagnostics.map((d) => d.message)).toEqual([
      "'param' belongs inside a block; at the top of a file use 'let'",
      "'rail' belongs at the top of a file, not inside a block",
    ]);
  });

  it('reads comments, semicolons and a byte-order mark as nothing at all', () => {
    const r = parse('\uFEFF# a comment\nlet a = 1; let b = 2 # trailing\n');
    expect(r.diagnostics).toEqual([]);
    expect(r.value.statements).toHaveLength(2);
  });

  it('reports a string left open and a character the language does not use', () => {
    const r = parse('title "open\nlet x = 1 $ 2\n');
    expect(where(r.diagnostics)).toEqual(['1:7-1:12 unterminated-string', '2:11-2:12 bad-character', '2:13-2:14 unexpected-token']);
  });
});
