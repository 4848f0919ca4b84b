import { describe, expect, it } from 'vitest';
import { GROUND, isGeneratedName, type Part, type Resistor, type TubeSection } from '../../lib/index.js';
import { codes, design, load, where } from '../helpers.js';

const HEADER = `
rail bp = 24 V tol 5 %
rail bias = -12 V tol 5 %
type LT koren-triode { mu = 21.5, ex = 1.3, kg1 = 1180, kp = 84, kvb = 300 }
`;

const part = (parts: Part[], name: string) => {
  const p = parts.find((x) => x.name === name);
  if (!p) throw new Error(`no part ${name}; have ${parts.map((x) => x.name).join(', ')}`);
  return p;
};

describe('expanding a stage', () => {
  it('makes a plate load, and per input a series resistor, a pull-down and a section on a grid node of its own', () => {
    const d = design(`${HEADER}
stage q { tube LT; load 33 k to bp; input a series 220 k pulldown 150 k to bias tol 1 %; input b series 100 k }
drive DA (a) 0 V
drive DB (b) 0 V`);
    expect(d.parts.filter((p) => p.stage === 'q').map((p) => `${p.name}:${p.role}`)).toEqual([
      'q.load:load',
      'q.s1:series',
      'q.p1:pulldown',
      'q.v1:section',
      'q.s2:series',
      'q.v2:section',
    ]);
    expect(part(d.parts, 'q.load')).toMatchObject({ type: 'resistor', a: 'q', b: 'bp', ohms: 33000, tol: 0.05, watts: 0.5 });
    expect(part(d.parts, 'q.p1')).toMatchObject({ a: 'q.g1', b: 'bias', ohms: 150000, tol: 0.01 });
    expect(part(d.parts, 'q.v2')).toMatchObject({ type: 'tube', model: 'LT', plate: 'q', grid: 'q.g2', cathode: GROUND });
  });

  it('ties a grid straight to its net with `direct`, and joins screens through one screen resistor', () => {
    const d = design(`${HEADER}
type LP koren-pentode { mu = 30, ex = 1.35, kg1 = 900, kg2 = 4000, kp = 40, kvb = 20 }
stage q { tube LP; load 10 k to bp; screen 4.7 k to bp; input a direct; input b direct }
resistor RA (a, bias) 100 k
resistor RB (b, bias) 100 k`);
    const v1 = part(d.parts, 'q.v1') as TubeSection;
    expect(v1.grid).toBe('a');
    expect(v1.screen).toBe('q.sg');
    expect((part(d.parts, 'q.v2') as TubeSection).screen).toBe('q.sg');
    expect(part(d.parts, 'q.screen')).toMatchObject({ a: 'q.sg', b: 'bp', ohms: 4700 });
  });

  it('puts a speed-up capacitor across the series resistor when an input names one', () => {
    const d = design(`${HEADER}
stage q { tube LT; load 33 k to bp; input a series 220 k speedup 47 pF pulldown 220 k to bias; input b series 220 k pulldown 220 k to bias }
resistor RA (a, bias) 100 k
resistor RB (b, bias) 100 k`);
    expect(part(d.parts, 'q.c1')).toMatchObject({ type: 'capacitor', a: 'a', b: 'q.g1', farads: 47e-12, tol: 0.1, stage: 'q', role: 'speedup' });
    expect(d.parts.some((p) => p.name === 'q.c2')).toBe(false);
    const bad = load(`${HEADER}
stage q { tube LT; load 33 k to bp; input a series 220 k speedup 47 kΩ pulldown 220 k to bias }
resistor RA (a, bias) 100 k`);
    expect(codes(bad.diagnostics)).toContain('unit-mismatch');
  });

  it('applies the design defaults: tolerance, rating, margin, stray capacitance and tube', () => {
    const d = design(`${HEADER}
defaults { tolerance = 10 %, rating = 0.25 W, margin = 2 V, stray = 22 pF, tube = LT }
stage q { load 33 k to bp; input q series 1 M pulldown 1 M to bias }`);
    expect(d.settings).toEqual({ requiredMargin: 2, resistorTol: 0.1, resistorWatts: 0.25, strayFarads: 22 * 1e-12 });
    expect(part(d.parts, 'q.load')).toMatchObject({ tol: 0.1, watts: 0.25 });
    expect((part(d.parts, 'q.v1') as TubeSection).model).toBe('LT');
  });

  it('copies a library type into the design, by quoted designation or through `like`', () => {
    const d = design(`rail bp = 24 V
rail bias = -12 V
type WIDE like "12AU7" { spread = 40 % }
stage q { tube "12AT7"; load 33 k to bp; input q series 1 M pulldown 1 M to bias }
stage r { tube WIDE; load 33 k to bp; input q series 1 M pulldown 1 M to bias }`);
    expect(d.models.map((m) => [m.name, m.library, m.spread])).toEqual([
      ['12AT7', '12AT7', 0.25],
      ['WIDE', '12AU7', 0.4],
    ]);
  });
});

describe('expanding blocks', () => {
  const LATCH = `${HEADER}
block latch (s, r, q, nq) {
  param rl = 33 k
  let rs = 2 * 110 k
  stage q  { tube LT; load rl to bp; input nq series rs pulldown rs to bias; input r series rs pulldown rs to bias }
  stage nq { tube LT; load rl to bp; input q  series rs pulldown rs to bias; input s series rs pulldown rs to bias }
}
drive S (set) -12 V
drive R (clr) -12 V
`;

  it('names what an instance makes `instance/name`, and what a stage makes `stage.role`, so no user name can collide', () => {
    const d = design(`${LATCH}instance L of latch (s: set, r: clr, q: out, nq: outbar)`);
    const names = d.parts.map((p) => p.name);
    expect(names).toContain('L/q.load');
    expect(names).toContain('L/nq.v2');
    expect(part(d.parts, 'L/q.v1')).toMatchObject({ plate: 'out', grid: 'L/q.g1' });
    expect(part(d.parts, 'L/q.s1')).toMatchObject({ a: 'outbar', b: 'L/q.g1', ohms: 220000 });
    for (const n of names) expect(isGeneratedName(n) || /^[A-Za-z_][A-Za-z0-9_]*$/.test(n)).toBe(true);
    expect(names.filter((n) => !isGeneratedName(n))).toEqual(['S', 'R']);
  });

  it('expands an instance array, binding the index in connections and overrides', () => {
    const d = design(`${LATCH}instance bit[i in 0..7] of latch (s: set, r: clr, q: q[i], nq: nq[i]) with (rl = 10 k * (i + 1))`);
    expect(d.parts.filter((p) => p.type === 'tube')).toHaveLength(32);
    expect(part(d.parts, 'bit[0]/q.load')).toMatchObject({ a: 'q[0]', ohms: 10000 });
    expect(part(d.parts, 'bit[7]/q.load')).toMatchObject({ a: 'q[7]', ohms: 80000 });
  });

  it('closes a ring with mod: element 0 reads element 9', () => {
    const d = design(`${HEADER}
block inv (a, y) { stage y { tube LT; load 33 k to bp; input a series 220 k pulldown 220 k to bias } }
instance r[i in 0..9] of inv (a: o[(i - 1) mod 10], y: o[i])`);
    expect(part(d.parts, 'r[0]/y.s1')).toMatchObject({ a: 'o[9]' });
    expect(part(d.parts, 'r[9]/y.s1')).toMatchObject({ a: 'o[8]' });
  });

  it('reports a block that contains itself, with the loop', () => {
    const r = load(`block a (x) { instance i of b (x: x) }\nblock b (x) { instance j of a (x: x) }\ninstance top of a (x: n)\nresistor R (n, gnd) 1 k`);
    expect(codes(r.diagnostics)).toEqual(['block-cycle']);
    expect(r.diagnostics[0]?.notes).toEqual(['the loop: a → b → a']);
  });

  it('reports a port left unconnected, an unknown port with a suggestion, and a port the block never uses', () => {
    const r = load(`${LATCH}block spare (p, unused) { resistor R (p, gnd) 1 k }
instance L of latch (s: set, q: out, nq: outbar)
instance M of latch (s: set, rr: clr, q: out2, nq: outbar2)
instance N of spare (p: x, unused: y)`);
    expect(codes(r.diagnostics)).toEqual(['port-unused', 'port-unconnected', 'port-unconnected', 'unknown-port']);
    expect(r.diagnostics[3]?.notes[0]).toBe("did you mean 'r'?");
  });

  it('reports a problem inside a block once, however many instances repeat it', () => {
    const r = load(`${HEADER}
block b (x) { resistor R (x, gnd) -5 k }
instance u[i in 1..6] of b (x: n[i])`);
    expect(codes(r.diagnostics)).toEqual(['value-not-positive']);
    expect(r.diagnostics[0]?.notes).toEqual(['reported once; it occurs 6 times (once per block instance)']);
  });
});

describe('diagnostics of meaning', () => {
  it('reports duplicate names with where the first one was', () => {
    const r = load(`${HEADER}rail bp = 12 V
stage q { tube LT; load 1 k to bp; input q direct }
stage q { tube LT; load 1 k to bp; input q direct }`);
    expect(where(r.diagnostics)).toEqual(['5:6-5:8 duplicate-name', '7:7-7:8 duplicate-name']);
    expect(r.diagnostics[0]?.notes).toEqual(['first defined at main.tube:2:1']);
  });

  it('reports unknown nets, types, blocks and values with "did you mean"', () => {
    const r = load(`${HEADER}
stage q { tube LTT; load 1 k to bp; input nq series 1 k pulldown 1 k to biass }
stage nq { tube LT; load rll to bp; input q series 1 k }
instance x of latchh (a: q)
block latch (a) { resistor R (a, gnd) 1 k }`);
    expect(codes(r.diagnostics)).toEqual(['unknown-type', 'unknown-net', 'unknown-name', 'unknown-block']);
    expect(r.diagnostics.map((d) => d.notes[0])).toEqual(["did you mean 'LT'?", "did you mean 'bias'?", undefined, "did you mean 'latch'?"]);
  });

  it('reports a value in the wrong unit, zero or negative values, and tolerances outside 0–50 %', () => {
    const r = load(`rail bp = 24 A
rail bias = -12 V tol 60 %
resistor R1 (bp, x) 10 V
resistor R2 (x, bias) 0
capacitor C1 (x, gnd) -1 pF
resistor R3 (x, gnd) 1 k tol 5`);
    expect(codes(r.diagnostics)).toEqual(['unit-mismatch', 'tolerance-range', 'unit-mismatch', 'value-not-positive', 'value-not-positive', 'tolerance-range']);
    expect(r.diagnostics[0]?.message).toBe('a rail voltage must be in volts, but this is in amps');
    expect(r.diagnostics[5]?.notes).toEqual(['did you mean 5 %?']);
  });

  it('reports values that are not finite', () => {
    const r = load('let big = 1e308 * 1e308\nrail bp = big\nlet z = 1 / 0');
    expect(codes(r.diagnostics)).toEqual(['value-not-finite', 'value-not-finite']);
  });

  it('refuses to redefine gnd', () => {
    expect(codes(load('rail gnd = 1 V').diagnostics)).toEqual(['reserved-name']);
  });

  it('warns of a net with a single connection, a likely misspelling', () => {
    const r = load(`${HEADER}resistor R1 (bp, x) 10 k\nresistor R2 (x, gnd) 10 k\nresistor R3 (xx, gnd) 1 k`);
    expect(r.ok).toBe(true);
    expect(codes(r.diagnostics)).toEqual(['net-single-connection']);
    expect(r.diagnostics[0]?.message).toContain("net 'xx'");
  });

  it('reports a grid held only through a capacitor: it has no DC path and would float', () => {
    const r = load(`${HEADER}
resistor RL (bp, p) 33 k
section V1 LT (plate: p, grid: g, cathode: gnd)
capacitor C1 (p2, g) 100 pF
resistor R2 (bp, p2) 10 k`);
    expect(codes(r.diagnostics)).toEqual(['grid-no-dc-path']);
    expect(r.ok).toBe(false);
  });

  it('reports a stage without a tube, a load or an input', () => {
    const r = load(`${HEADER}stage q { }`);
    expect(codes(r.diagnostics)).toEqual(['missing-field', 'missing-field', 'stage-no-input']);
  });

  it('reports only the syntax error in a stage, not the tube or input it then seems to lack (the first error is the cause: common practice, no source)', () => {
    // An unquoted designation breaks the tube item and a pull-down without 'to' breaks the
    // input: the stage seems to name no tube and have no input, but those follow from the two.
    const r = load(`${HEADER}stage q { tube 12AU7; load 33 k to bp; input q series 220 k pulldown 470 k }`);
    expect(where(r.diagnostics)).toEqual(['5:16-5:21 unexpected-token', '5:76-5:77 unexpected-token']);
    // A stage left without its closing brace swallows the next: the net that stage drives
    // is not "unknown" where the first one reads it; only the brace is reported.
    const brace = load(`${HEADER}stage q { tube LT; load 33 k to bp; input nq series 220 k pulldown 470 k to bias }
stage nq { tube LT; load 33 k to bp; input q series 220 k pulldown 470 k to bias
`);
    expect(codes(brace.diagnostics)).toEqual(['unexpected-token']);
    expect(brace.diagnostics[0]!.message).toContain("no closing '}'");
    // A stage without syntax errors that lacks them is still told so.
    expect(codes(load(`${HEADER}stage q { load 33 k to bp }`).diagnostics)).toEqual(['missing-field', 'stage-no-input']);
  });

  it('points at the screen item, not the input, when a stage gives a triode a screen', () => {
    const r = load(`${HEADER}stage q { tube LT; load 33 k to bp; screen bp; input q series 220 k pulldown 470 k to bias }`);
    expect(where(r.diagnostics)).toEqual(['5:37-5:46 unknown-port']);
    expect(r.diagnostics[0]!.message).toContain("stage 'q' connects a screen");
  });

  it('reports a pentode section with no screen, and model parameters unknown or missing', () => {
    const r = load(`${HEADER}
type LP koren-pentode { mu = 30, ex = 1.35, kg1 = 900, kg2 = 4000, kp = 40, kvb = 20 }
type BAD koren-triode { mu = 20, kgl = 3 }
stage q { tube LP; load 10 k to bp; input q series 1 M pulldown 1 M to bias }`);
    expect(where(r.diagnostics)).toEqual(['7:6-7:9 missing-field', '7:34-7:37 unknown-field']);
    expect(r.diagnostics[1]?.notes[0]).toBe("did you mean 'kg1'?");
    const fixedBad = load(`${HEADER}
type LP koren-pentode { mu = 30, ex = 1.35, kg1 = 900, kg2 = 4000, kp = 40, kvb = 20 }
stage q { tube LP; load 10 k to bp; input q series 1 M pulldown 1 M to bias }`);
    expect(codes(fixedBad.diagnostics)).toEqual(['missing-field']);
    expect(fixedBad.diagnostics[0]?.message).toContain('screen');
  });

  it('refuses a design with no parts', () => {
    expect(codes(load('rail bp = 24 V').diagnostics)).toEqual(['empty-design']);
    expect(codes(load('').diagnostics)).toEqual(['empty-design']);
  });
});

describe('includes', () => {
  it('reads included files relative to the including file, once each', () => {
    const r = load('include "lib/a.tube"\ninclude "lib/b.tube"\nresistor R (bp, gnd) rv', {
      'lib/a.tube': 'include "b.tube"\nrail bp = 24 V',
      'lib/b.tube': 'let rv = 1 k',
    });
    expect(r.diagnostics).toEqual([]);
    expect((r.design?.parts[0] as Resistor).ohms).toBe(1000);
    expect([...r.sources.keys()]).toEqual(['main.tube', 'lib/a.tube', 'lib/b.tube']);
  });

  it('reports an include that cannot be found, and one that loops, at the include', () => {
    const r = load('include "missing.tube"\ninclude "loop.tube"', { 'loop.tube': 'include "main.tube"' });
    const [cycle, missing] = r.diagnostics;
    expect(missing).toMatchObject({ code: 'include-not-found', span: { file: 'main.tube', start: { line: 1, col: 9 }, end: { line: 1, col: 23 } } });
    expect(cycle).toMatchObject({ code: 'include-cycle', span: { file: 'loop.tube', start: { line: 1, col: 9 } } });
    expect(cycle?.notes).toEqual(['the loop: main.tube → loop.tube → main.tube']);
  });
});

describe('finding a part by name', async () => {
  const { findPart } = await import('../../lib/index.js');
  const d = design('rail bp = 24 V\nbutton START (x, bp)\nresistor R (x, gnd) 10 k');
  it('finds a part of the asked type, and suggests the closest name of that type when it is missing', () => {
    expect(findPart(d, 'START', 'switch')).toMatchObject({ part: { name: 'START', momentary: true } });
    const miss = findPart(d, 'STRT', 'switch');
    expect('diagnostic' in miss && miss.diagnostic).toMatchObject({ code: 'unknown-part', notes: ["did you mean 'START'?"] });
    const wrong = findPart(d, 'R', 'switch');
    expect('diagnostic' in wrong && wrong.diagnostic.message).toBe("'R' is a resistor, not a switch");
  });
});
