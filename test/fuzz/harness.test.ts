import { describe, expect, it } from 'vitest';
import { fixedSpan, notFiniteInText, outsideSpan, shrinkText, SPAN_SLACK_VOLTS, unexplainedNulls, WHY_SUFFIX } from '../../tools/fuzz.js';
import { sampleDesigns, type FuzzDesign } from '../../tools/fuzzDesigns.js';
import { design } from '../helpers.js';
import { loadDesign } from '../../lib/index.js';

/** The fuzz harness's own checks: they must catch what they claim, or a green fuzz run means nothing. */

describe('the invariant checks of the fuzz harness', () => {
  it('finds a null with no reason beside it, and accepts one whose `…Why` sibling says why', () => {
    const kinds = (v: unknown) => unexplainedNulls(v, 'x').map((f) => `${f.kind} ${f.detail}`);
    expect(kinds({ high: null })).toEqual([`null-unexplained x $.high is null without high${WHY_SUFFIX}`]);
    expect(kinds({ high: null, [`high${WHY_SUFFIX}`]: 'never high: its driver is always on' })).toEqual([]);
    expect(kinds({ high: null, [`high${WHY_SUFFIX}`]: '  ' })).toHaveLength(1);
    expect(kinds({ nets: [{ margin: { low: null } }] })).toEqual([`null-unexplained x $.nets[0].margin.low is null without low${WHY_SUFFIX}`]);
    expect(kinds({ interval: [0.9, null] })).toEqual(['null-unexplained x $.interval[1] is null in an array']);
    expect(kinds({ a: 1, b: 'two', c: [true], d: undefined })).toEqual([]);
  });

  it('reports a number that is not finite by its path, before JSON would turn it into null', () => {
    const found = unexplainedNulls({ worst: Number.NaN }, 'x');
    expect(found.map((f) => f.kind)).toEqual(['not-finite']);
  });

  it('finds NaN and Infinity written as text, and not names that merely contain the letters', () => {
    expect(notFiniteInText('worst high -Infinity V, worst low Infinity V', 'check').map((f) => f.signature)).toEqual(['check: -Infinity', 'check: Infinity']);
    expect(notFiniteInText('bp NaN A (NaN W)', 'check')).toHaveLength(2);
    expect(notFiniteInText('net NaNo and Infinity_2 and xNaN at 1.5 V', 'check')).toEqual([]);
  });

  it('spans the fixed voltages: ground, every rail and every drive at the ends of their tolerances', () => {
    const d = design('rail bp = 100 V tol 10 %\nrail bias = -20 V\ndrive D (a) -30 V tol 50 %\nresistor R (a, bp) 1 k\n');
    expect(fixedSpan(d)).toEqual([-45, 110.00000000000001, SPAN_SLACK_VOLTS]);
    expect(fixedSpan(design('resistor R (a, gnd) 1 k\n'))).toEqual([0, 0, SPAN_SLACK_VOLTS]);
  });

  it('widens the span by a negative grid onset once for every section a grid sits behind', () => {
    const one = design('rail bp = 24 V\ntype T like "12AU7" { vgamma = -2 V }\nsection V1 T (bp, g, gnd)\nresistor RG (g, gnd) 1 M\n');
    expect(fixedSpan(one)[2]).toBeCloseTo(SPAN_SLACK_VOLTS + 2, 12);
    // V2's grid is V1's cathode: the two onsets stack.
    const two = design('rail bp = 24 V\ntype T like "12AU7" { vgamma = -2 V }\nsection V1 T (bp, g, k)\nsection V2 T (bp, k, gnd)\nresistor RG (g, gnd) 1 M\nresistor RK (k, gnd) 1 M\n');
    expect(fixedSpan(two)[2]).toBeCloseTo(SPAN_SLACK_VOLTS + 4, 12);
  });

  it(`flags a DC node more than ${SPAN_SLACK_VOLTS} V outside the span, and a grid node as such`, () => {
    const found = outsideSpan(
      [
        ['q', 26],
        ['q.g1', -14.6],
        ['y', 27],
      ],
      [-12, 24, SPAN_SLACK_VOLTS + 2],
      'solve',
    );
    expect(found.map((f) => f.signature)).toEqual(['solve: grid node below the span', 'solve: net above the span']);
  });

  it('shrinks a design to the lines and stage items a failure needs', async () => {
    const text = ['rail bp = 24 V', 'rail bias = -12 V', 'resistor R1 (a, bp) 1 k', 'stage q { tube "12AU7"; load 10 k tol 5 % to bp; input a series 100 k pulldown 100 k to bias }', 'capacitor C (q, gnd) 1 n'].join('\n');
    const small = await shrinkText(text, async (t) => loadDesign('f.tube', t).ok && /rail bp/.test(t) && /stage q/.test(t) && /R1/.test(t));
    expect(small).toBe('rail bp = 24 V\nresistor R1 (a, bp) 1 k\nstage q { tube "12AU7"; load 10 k to bp; input a series 100 k }\n');
  });
});

describe('the generator of odd but valid designs', () => {
  const designs = sampleDesigns(7, 600);
  const share = (test: (d: FuzzDesign) => boolean) => designs.filter(test).length / designs.length;

  it('gives the same designs for the same seed, and others for another', () => {
    expect(sampleDesigns(7, 5).map((d) => d.text)).toEqual(designs.slice(0, 5).map((d) => d.text));
    expect(sampleDesigns(8, 5).map((d) => d.text)).not.toEqual(designs.slice(0, 5).map((d) => d.text));
  });

  it('writes designs that mostly load without errors: the odd values are mostly inside the ranges the language accepts', () => {
    expect(share((d) => loadDesign('f.tube', d.text).ok)).toBeGreaterThan(0.75);
  });

  it('reaches every construct the issue lists', () => {
    const has = (re: RegExp) => share((d) => re.test(d.text));
    const constructs: [string, RegExp][] = [
      ['a latch', /^stage q\d+ /m],
      ['a NOR gate', /^stage \w+ \{[^}]*input[^}]*input/m],
      ['a positive rail', /^rail \w+ = \d/m],
      ['a negative rail', /^rail \w+ = -/m],
      ['a rail with a source resistance', /^rail .* source /m],
      ['a stiff drive', /^drive \w+ \(\w+\) \S+ V( tol \S+ %)?$/m],
      ['a drive with a source resistance', /^drive .* source /m],
      ['a button', /^button /m],
      ['a switch', /^switch /m],
      ['a diode with parameters', /^diode .*\{ .*(is|n|rs) = /m],
      ['a capacitor', /^capacitor /m],
      ['a screen', /screen /],
      ['a screen resistor', /screen [\d.e+-]+ to /],
      ['a cathode tied to a rail', /cathode (?!gnd)\w+/],
      ['an input tied straight to a rail', /input (bp|bias|r\d+|gnd) direct/],
      ['a speed-up capacitor', /speedup /],
      ['an instance array', /^instance \w+\[i in /m],
      ['a ring of instances', / mod \d+\]/],
      ['a raw section', /^section /m],
      ['a koren-triode type', /koren-triode \{/],
      ['a koren-pentode type', /koren-pentode \{/],
      ['a child-langmuir type', /child-langmuir \{/],
      ['a library type with overrides', /like "\w+" \{/],
      ['a vgamma', /vgamma = -?[\d.]+ V/],
      ['a spread', /spread = /],
      ['a 50 % tolerance', /tol 50 %/],
      ['a 0 % tolerance', /tol 0 %/],
      ['a 1 TΩ resistor', /\b1000000000000\b/],
      ['a 1 mΩ resistor', /\b0\.001\b/],
      ['an SI multiplier', /\d ?[pnumkMG](Ω|ohms?|F|V|W|A)?[ ;)]/],
      ['the resistor code', /\d[kMG]\d/],
      ['a let value', /^let v\d+ = /m],
      ['a sum', /\(\S+ \+ \S+\)/],
      ['a power rating', / rating /],
      ['a parameter override', / with \(rl = /],
    ];
    const missing = constructs.filter(([, re]) => has(re) < 0.005).map(([what]) => what);
    expect(missing).toEqual([]);
    expect(share((d) => /vgamma = -2 V/.test(d.text))).toBeGreaterThan(0);
    expect(share((d) => /vgamma = 2 V/.test(d.text))).toBeGreaterThan(0);
  });

  it('now and then places an instance array of about a thousand stages', () => {
    const long = sampleDesigns(3, 3, { motifs: ['array'], maxMotifs: 1, longArrayChance: 1, longArray: 1000 });
    expect(Math.max(...long.map((d) => d.arrayCells))).toBeGreaterThan(300);
    expect(share((d) => d.arrayCells >= 100)).toBeGreaterThan(0);
  });
});
