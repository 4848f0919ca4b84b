import { describe, expect, it } from 'vitest';
import { buildStageGraph, type Design } from '../../lib/index.js';
import { drawDesign, junctions, LABEL_CHARS, SLACK_STOPS, slackColour, slackSource, TAG_FANOUT } from '../../lib/report/drawing.js';
import { generateRegister, generateVariedRegister } from '../../bench/generate.js';
import { checkOf, demoDesigns, design, load, netsFiles } from '../helpers.js';

/** The drawing of a design as `show --svg` makes it, read back from the SVG text. */
const dataNets = (svg: string) => [...svg.matchAll(/<g class="net[^"]*" data-net="([^"]*)"/g)].map((m) => m[1]!);
const boxes = (svg: string, kind: string) => [...svg.matchAll(new RegExp(`<g class="box ${kind}" data-box="([^"]*)"`, 'g'))].map((m) => m[1]!);

function demo(file: string): Design {
  const files = netsFiles();
  const d = load(files[file]!, files, file).design;
  if (!d) throw new Error(`${file} does not load`);
  return d;
}

describe('drawing of a design', () => {
  it('draws every demo unfolded with one box per stage and exactly one net group per logic net', async () => {
    for (const file of demoDesigns()) {
      const d = demo(file);
      const g = buildStageGraph(d);
      const drawing = await drawDesign(d, g);
      expect(drawing.folded, file).toBe(false);
      // The stages and inputs as the stage graph lists them, independently of how the drawing groups them.
      const stages = g.nets.filter((n) => n.kind === 'stage').map((n) => n.name);
      const inputs = g.nets.filter((n) => n.kind === 'input').map((n) => n.name);
      expect(boxes(drawing.svg, 'stage').sort(), file).toEqual([...stages].sort());
      expect(boxes(drawing.svg, 'input').sort(), file).toEqual([...inputs].sort());
      expect(dataNets(drawing.svg).sort(), file).toEqual(g.nets.map((n) => n.name).sort());
    }
  });

  it('folds a register built of block arrays into one box per array and one net group per net pattern that crosses between them', async () => {
    // generateRegister writes `instance cell[i] of latch (… q: q[i], nq: nq[i])` and
    // `instance gate[i] of copy (phase_n: clk_n, … set: s[i], clr: c[i])`: the arrays
    // cell and gate, the drive on clk_n, and between them s, c (gate to cell), q, nq
    // (cell to gate) and clk_n (to every gate).
    const d = design(generateRegister(40));
    const drawing = await drawDesign(d, buildStageGraph(d), { fold: true });
    expect(drawing.folded).toBe(true);
    expect(boxes(drawing.svg, 'group').sort()).toEqual(['cell[]', 'gate[]']);
    expect(boxes(drawing.svg, 'input')).toEqual(['clk_n']);
    expect(drawing.svg).toContain('cell[…] ×10');
    expect(dataNets(drawing.svg).sort()).toEqual(['c[…]', 'clk_n', 'nq[…]', 'q[…]', 's[…]']);
  });

  it('folds a design of 200+ stages by default, and unfolds it when asked', async () => {
    const d = design(generateVariedRegister(240, 1));
    const g = buildStageGraph(d);
    const folded = await drawDesign(d, g);
    expect(folded.folded).toBe(true);
    // Stage arrays q[i], nq[i], s[i], c[i], x0[i], x1[i]: one box each.
    expect(boxes(folded.svg, 'group').sort()).toEqual(['c[]', 'nq[]', 'q[]', 's[]', 'x0[]', 'x1[]']);
    const unfolded = await drawDesign(d, g, { fold: false });
    expect(boxes(unfolded.svg, 'stage').length).toBe(g.nets.filter((n) => n.kind === 'stage').length);
    // The clock line feeds hundreds of gates: drawn as a tag at each, still one net group.
    expect(dataNets(unfolded.svg).filter((n) => n === 'clk_n')).toHaveLength(1);
    const clkTags = unfolded.svg.match(/<text class="tag"[^>]*>clk_n</g) ?? [];
    expect(clkTags.length).toBeGreaterThan(TAG_FANOUT);
  }, 60_000);

  it('escapes hostile names and truncates long ones, keeping the whole name in the tooltip', async () => {
    const base = design(`rail bp = 24 V
rail bias = -12 V
type T koren-pentode { mu = 35, ex = 1.35, kg1 = 600, kg2 = 4500, kp = 45, kvb = 15 }
defaults { tube = T }
stage q  { load 39 k to bp; screen bp; input nq series 220 k pulldown 220 k to bias }
stage nq { load 39 k to bp; screen bp; input q series 220 k pulldown 220 k to bias }
`);
    // Names no design-language identifier allows, as a JSON design or a library user could give them.
    const hostile = '<script>alert("x")</script>&\'q';
    const long = 'n'.repeat(70);
    const rename = (s: string) => s.replace(/^q(?=$|\.)/, hostile).replace(/^nq(?=$|\.)/, long);
    const renamed: Design = JSON.parse(JSON.stringify(base), (_, v) => (typeof v === 'string' ? rename(v) : v));
    const { svg } = await drawDesign(renamed, buildStageGraph(renamed));
    expect(svg).not.toContain('<script');
    expect(svg).not.toMatch(/alert\("x"\)/);
    expect(svg).toContain('&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt;&amp;&#39;q');
    const labels = [...svg.matchAll(/<text[^>]*>([^<]*)<\/text>/g)].map((m) => m[1]!);
    expect(labels).not.toContain(long);
    expect(labels).toContain(`${long.slice(0, LABEL_CHARS - 1)}…`);
    expect(labels.every((l) => l.replace(/&[a-z]+;|&#\d+;/g, '_').length <= Math.max(LABEL_CHARS, 40))).toBe(true);
    expect(svg).toMatch(new RegExp(`<title>stage ${long}:`));
    expect(dataNets(svg).sort()).toEqual(['&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt;&amp;&#39;q', long].sort());
  });

  it('colours each net by its slack and marks failing nets apart', async () => {
    const file = 'nets/nor-adder.tube';
    const d = demo(file);
    const check = checkOf(d);
    const { svg } = await drawDesign(d, buildStageGraph(d), { check });
    const groups = new Map([...svg.matchAll(/<g (class="net[^"]*") data-net="([^"]*)" ([^>]*)>/g)].map((m) => [m[2]!, `${m[1]} ${m[3]}`]));
    const top = Math.max(2 * check.requiredMargin, 1);
    let failing = 0;
    for (const n of check.nets) {
      const attrs = groups.get(n.name)!;
      if (n.status === 'fail') {
        failing++;
        expect(attrs).toContain('class="net fails"');
        expect(attrs).toContain('stroke-dasharray');
      } else if (n.status === 'pass') expect(attrs).toContain(`stroke="${slackColour(n.slack / top)}"`);
    }
    expect(failing).toBeGreaterThan(0);
  });
});

describe('what the drawing tells at a glance', () => {
  it('puts a dot where one net\'s wires branch and none where they only run on or cross', () => {
    // A tee: one wire runs on, another leaves it halfway.
    expect(junctions([[[0, 0], [10, 0]], [[5, 0], [5, 10]]])).toEqual([[5, 0]]);
    // Two wires laid over each other, and one wire with a bend: no branch.
    expect(junctions([[[0, 0], [10, 0]], [[0, 0], [10, 0]]])).toEqual([]);
    expect(junctions([[[0, 0], [10, 0], [10, 10]]])).toEqual([]);
    // Two wires leaving one point in three directions.
    expect(junctions([[[0, 0], [10, 0]], [[0, 0], [0, 10], [5, 10]], [[-4, 0], [0, 0]]])).toEqual([[0, 0]]);
  });

  it('on every demo, dots every net wired to more than one place and no net wired to one', async () => {
    for (const file of demoDesigns()) {
      const d = demo(file);
      const { svg } = await drawDesign(d, buildStageGraph(d));
      for (const [, net, body] of svg.matchAll(/<g class="net[^"]*" data-net="([^"]*)"[^>]*>(.*?)<\/g>/g)) {
        if (body!.includes('class="tag"')) continue; // a net drawn as tags has no wires to branch
        const wires = (body!.match(/<path /g) ?? []).length;
        const dots = (body!.match(/class="junction"/g) ?? []).length;
        // The driver's stub and one wire meet end to end; a third path must leave one of them somewhere.
        if (wires <= 2) expect(dots, `${file} ${net}`).toBe(0);
        else expect(dots, `${file} ${net}`).toBeGreaterThan(0);
      }
    }
  });

  it('names in each tooltip the limit that sets the net\'s colour, and why a failing net fails', async () => {
    const d = demo('nets/nor-adder.tube');
    const check = checkOf(d);
    const { svg } = await drawDesign(d, buildStageGraph(d), { check });
    for (const n of check.nets.filter((m) => m.status !== 'unchecked')) {
      const title = new RegExp(`data-net="${n.name.replace(/[[\]]/g, '\\$&')}"[^>]*><title>([^<]*)</title>`).exec(svg)![1]!;
      const source = slackSource(n, check.requiredMargin)!;
      // The named limit is the one equal to the slack.
      const value = source === 'its cutoff margin' ? n.cutoffMargin!.volts : source.startsWith('NM_H') ? n.margin.high! - check.requiredMargin : source.startsWith('NM_L') ? n.margin.low! - check.requiredMargin : source.includes('high') ? n.high!.worst - n.thresholdVolts - check.requiredMargin : n.thresholdVolts - n.low!.worst - check.requiredMargin;
      expect(value, n.name).toBeCloseTo(n.slack, 9);
      expect(title).toContain(`slack ${n.slack.toFixed(2)} V: ${source}`);
      if (n.status === 'fail') expect(title).toContain(n.reasons[0]!.replace(/'/g, '&#39;'));
    }
  });

  it('folded, marks a box whose nets fail, names its ports, and labels an output that feeds nothing', async () => {
    const d = demo('nets/irrigation-sequencer.tube');
    const check = checkOf(d);
    // The nets driven by sections of the instances bed[1] … bed[4] (their sections' names start so).
    const inside = new Set(buildStageGraph(d).nets.filter((n) => n.drivers.some((x) => x.startsWith('bed['))).map((n) => n.name));
    const failingInside = check.nets.filter((n) => n.status === 'fail' && inside.has(n.name)).length;
    expect(failingInside).toBeGreaterThan(0);
    const folded = (await drawDesign(d, buildStageGraph(d), { check, fold: true })).svg;
    expect(folded).toMatch(new RegExp(`<g class="box group fail" data-box="bed\\[\\]">.*?${failingInside} fail`));
    expect(folded).toContain('<text class="port"');
    const unfolded = (await drawDesign(d, buildStageGraph(d), { check })).svg;
    for (const n of buildStageGraph(d).nets.filter((m) => m.receivers.length === 0)) expect(unfolded).toMatch(new RegExp(`data-net="${n.name.replace(/[[\]]/g, '\\$&')}".*?<text class="end"[^>]*>${n.name.replace(/[[\]]/g, '\\$&')}</text>`));
  });
});

describe('the slack palette', () => {
  // Relative luminance and contrast ratio as WCAG 2.2 defines them (W3C Recommendation,
  // "relative luminance" and "contrast ratio" in its glossary): an open standard.
  const luminance = (hex: string) => {
    const [r, g, b] = [1, 3, 5].map((k) => parseInt(hex.slice(k, k + 2), 16) / 255).map((c) => (c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4));
    return 0.2126 * r! + 0.7152 * g! + 0.0722 * b!;
  };
  const contrast = (a: string, b: string) => {
    const [hi, lo] = [luminance(a), luminance(b)].sort((x, y) => y - x);
    return (hi! + 0.05) / (lo! + 0.05);
  };

  it('grows lighter from weakest to strongest, so the order reads in grey print and to any colour vision', () => {
    // Every 2.5 % of the scale (finer steps meet the 8-bit rounding of the channels).
    const samples = Array.from({ length: 41 }, (_, k) => luminance(slackColour(k / 40)));
    for (let k = 1; k < samples.length; k++) expect(samples[k]!, `step ${k}`).toBeGreaterThan(samples[k - 1]!);
    expect(slackColour(0)).toBe(SLACK_STOPS[0]);
    expect(slackColour(1)).toBe(SLACK_STOPS[SLACK_STOPS.length - 1]);
  });

  it('keeps even its lightest colour visible on white (contrast at least 2.5:1)', () => {
    for (const c of SLACK_STOPS) expect(contrast(c, '#ffffff'), c).toBeGreaterThanOrEqual(2.5);
  });
});
