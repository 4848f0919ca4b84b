import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium, type Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { designToJson, loadDesign } from '../../lib/index.js';
import { readDesignFile, type CliIo } from '../../cli/io.js';
import { runCli } from '../../cli/main.js';
import { buttonLatchText } from '../analysis/oracle.js';
import { ROOT, demoDesigns } from '../helpers.js';

/**
 * The HTML report opened in a real browser: Debian's Chromium (`.ci/run` installs it),
 * driven by playwright-core, headless, with nothing allowed to reach the network.
 */
const OUT = mkdtempSync(join(tmpdir(), 'tubemargin-report-'));
let browser: Browser;

beforeAll(async () => {
  browser = await chromium.launch({ executablePath: '/usr/bin/chromium', args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run'] });
}, 60_000);
afterAll(async () => {
  await browser?.close();
});

/** Runs the CLI in-process with files read from the repository or `files`, and written to `written`. */
async function cli(args: string[], files: Record<string, string> = {}): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const io: CliIo = {
    stdout: (t) => void (out += t),
    stderr: (t) => void (err += t),
    readFile: (p) => files[p] ?? (p.startsWith('/') ? readFileSync(p, 'utf8') : readDesignFile(join(ROOT, p))),
    writeFile: (p, text) => writeFileSync(p, text, 'utf8'),
    stdoutIsTTY: false,
    stderrIsTTY: false,
    env: {},
  };
  return { code: await runCli(args, io), out, err };
}

/**
 * Measurements taken in the page, as source text: a function handed to `page.evaluate`
 * would be serialised after the test's transpiler had its way with it.
 */
const MEASURE = String.raw`(() => {
  // Every plot's visible text labels whose boxes (getBBox, in the plot's own coordinates) overlap.
  const boxOf = (el) => {
    const b = el.getBBox();
    const m = el.getCTM();
    const corners = [[b.x, b.y], [b.x + b.width, b.y], [b.x, b.y + b.height], [b.x + b.width, b.y + b.height]].map(([x, y]) => new DOMPoint(x, y).matrixTransform(m));
    const xs = corners.map((p) => p.x);
    const ys = corners.map((p) => p.y);
    return { left: Math.min(...xs), right: Math.max(...xs), top: Math.min(...ys), bottom: Math.max(...ys) };
  };
  const shown = (el) => {
    if (el.textContent.trim() === '') return false;
    for (let n = el; n instanceof SVGElement; n = n.parentNode) {
      const style = getComputedStyle(n);
      if (style.display === 'none' || style.visibility === 'hidden' || Number(style.opacity) === 0) return false;
    }
    return true;
  };
  const overlaps = [];
  document.querySelectorAll('figure.plot svg').forEach((svg, k) => {
    const labels = [...svg.querySelectorAll('text')].filter(shown).map((el) => ({ text: el.textContent, box: boxOf(el) }));
    for (let i = 0; i < labels.length; i++)
      for (let j = i + 1; j < labels.length; j++) {
        const a = labels[i].box;
        const b = labels[j].box;
        const w = Math.min(a.right, b.right) - Math.max(a.left, b.left);
        const h = Math.min(a.bottom, b.bottom) - Math.max(a.top, b.top);
        if (w > 0.5 && h > 0.5) overlaps.push('plot ' + (k + 1) + ': "' + labels[i].text + '" and "' + labels[j].text + '"');
      }
  });
  // The bars of the margin chart, top to bottom, with the net and status each is drawn for.
  const bars = [...document.querySelectorAll('#margins [aria-roledescription="bar"]')]
    .map((el) => {
      const r = el.getBoundingClientRect();
      const m = /net: (.*); status: (\w+)$/.exec(el.getAttribute('aria-label') || '');
      return { net: m ? m[1] : '', status: m ? m[2] : '', width: r.width, top: r.top };
    })
    .sort((a, b) => a.top - b.top);
  // A number parted from its unit by a line break: "1.50" at the end of one line, "V" on the next.
  const unit = '(?:[µmkMnp]?(?:V|s|Hz|A|W|F|Ω)|%|sections?|samples|nets?|points|steps)(?![A-Za-z])';
  const numberAndUnit = new RegExp('\\d[ \\u00a0]' + unit, 'g');
  const split = [];
  const walker = document.createTreeWalker(document.body, NodeFilter.SHOW_TEXT);
  for (let n = walker.nextNode(); n; n = walker.nextNode()) {
    if (n.parentElement.closest('svg')) continue;
    for (const m of n.data.matchAll(numberAndUnit)) {
      const range = document.createRange();
      range.setStart(n, m.index);
      range.setEnd(n, m.index + m[0].length);
      const lines = new Set([...range.getClientRects()].filter((r) => r.width > 0).map((r) => Math.round(r.top)));
      if (lines.size > 1) split.push(n.data.slice(Math.max(0, m.index - 20), m.index + m[0].length + 5));
    }
  }
  return { overlaps, bars, split };
})()`;

/** Opens a report at a width; returns what a person sees, what the page logged or asked for, the measurements, and what `extra` (page code) gives. */
async function open(path: string, screenshot: string, width = 1200, extra = 'null') {
  const page = await browser.newPage({ viewport: { width, height: 900 } });
  const errors: string[] = [];
  const requests: string[] = [];
  page.on('console', (m) => m.type() === 'error' && errors.push(m.text()));
  page.on('pageerror', (e) => errors.push(e.message));
  page.on('request', (r) => requests.push(r.url()));
  await page.goto(`file://${path}`);
  // As read: no-break spaces as spaces, word joiners (they only hold a range's numbers together) as nothing.
  const plain = (t: string) => t.replace(/\u00a0/g, ' ').replace(/\u2060/g, '');
  const text = async (selector: string) => ((await page.locator(selector).count()) ? plain(await page.locator(selector).first().innerText()) : undefined);
  const seen = {
    verdict: (await text('#verdict'))!,
    verdictInHeader: await page.locator('header #verdict').count(),
    weakest: await text('#weakest'),
    title: await page.locator('h1').innerText(),
    plots: await page.locator('figure.plot svg').count(),
    visiblePlots: await page.locator('figure.plot svg:visible').count(),
    scripts: await page.locator('script').count(),
    caution: await page.locator('#caution').count(),
    cautionText: await text('#caution'),
    header: await text('header'),
    body: plain(await page.locator('body').innerText()),
  };
  const measured = (await page.evaluate(MEASURE)) as { overlaps: string[]; bars: { net: string; status: string; width: number; top: number }[]; split: string[] };
  const more: unknown = await page.evaluate(extra);
  await page.screenshot({ path: screenshot, fullPage: true });
  await page.close();
  return { seen, errors, requests, measured, more };
}

/** What a check's JSON says of a net's status, as the margin chart names it. */
const barStatus = (status: string) => ({ fail: 'fails', undecided: 'undecided', pass: 'passes' })[status];

describe('the HTML report in a browser', () => {
  for (const file of demoDesigns()) {
    it(`${file}: shows the verdict, the weakest net and every plot, no two labels overlapping, with no console errors and no requests but the page`, async () => {
      const path = join(OUT, file.replace(/\W+/g, '_') + '.html');
      const r = await cli(['report', file, '-o', path, '--samples', '300', '--workers', '1']);
      expect([0, 1]).toContain(r.code);
      const check = JSON.parse((await cli(['check', file, '--json'])).out);
      const html = readFileSync(path, 'utf8');
      const { seen, errors, requests, measured } = await open(path, path.replace(/\.html$/, '.png'));
      expect(seen.verdict).toMatch(new RegExp(`^${check.verdict.toUpperCase()}: `));
      expect(seen.weakest).toBe(check.nets[0].name);
      expect(seen.plots).toBe((html.match(/<figure class="plot">/g) ?? []).length);
      expect(seen.plots).toBeGreaterThanOrEqual(4);
      expect(seen.visiblePlots).toBe(seen.plots);
      expect(seen.scripts).toBe(0);
      expect(seen.caution).toBe(check.cautions.length > 0 ? 1 : 0);
      expect(measured.overlaps).toEqual([]);
      expect(errors).toEqual([]);
      expect(requests.every((u) => u.startsWith('file://'))).toBe(true);
    }, 120_000);

    it(`${file}: the margin chart has a bar for every net check judges, failing nets first, then undecided ones`, async () => {
      const path = join(OUT, file.replace(/\W+/g, '_') + '-margins.html');
      expect([0, 1]).toContain((await cli(['report', file, '-o', path])).code);
      const check = JSON.parse((await cli(['check', file, '--json'])).out);
      const judged = (check.nets as { name: string; status: string }[]).filter((n) => n.status !== 'unchecked');
      const { measured } = await open(path, path.replace(/\.html$/, '.png'));
      expect(new Map(measured.bars.map((b) => [b.net, b.status]))).toEqual(new Map(judged.map((n) => [n.name, barStatus(n.status)])));
      expect(measured.bars).toHaveLength(judged.length);
      for (const b of measured.bars) expect(b.width, b.net).toBeGreaterThan(1);
      // Top to bottom: every failing bar above every undecided one, and those above every passing one.
      const rank = measured.bars.map((b) => ['fails', 'undecided', 'passes'].indexOf(b.status));
      expect(rank).toEqual([...rank].sort((a, b) => a - b));
    }, 120_000);
  }

  it('the irrigation sequencer (it fails): what the yield counts, histograms in the order of the nets, VOL above VOH said in words, a supply map failing everywhere said so and clear of its axis, no number parted from its unit', async () => {
    const file = 'nets/irrigation-sequencer.tube';
    const path = join(OUT, 'irrigation-full.html');
    const r = await cli(['report', file, '-o', path, '--samples', '300', '--workers', '1', '--rail', 'bp=22:26:2', '--rail', 'bias=-14:-10:2']);
    expect(r.code).toBe(1);
    const check = JSON.parse((await cli(['check', file, '--json'])).out);
    // The map: its cells' left edges against the y axis's line, and the cells' count.
    const map = String.raw`(() => {
      const svg = document.querySelector('#sweep svg');
      const axis = [...svg.querySelectorAll('[aria-roledescription="axis"]')].find((a) => (a.getAttribute('aria-label') || '').startsWith('Y-axis'));
      const line = axis.querySelector('.role-axis-domain line').getBoundingClientRect();
      // Every mark drawn for a point of the map: all but the ring of the nominal point.
      const cells = [...svg.querySelectorAll('.role-mark [role="graphics-symbol"]:not([aria-roledescription="point"])')].map((c) => c.getBoundingClientRect());
      const titles = [...document.querySelectorAll('#samples [aria-roledescription="title"]')].map((t) => t.textContent);
      return { axisX: line.left, cellsLeft: Math.min(...cells.map((c) => c.left)), cells: cells.length, titles };
    })()`;
    const { seen, measured, more } = await open(path, join(OUT, 'irrigation-full.png'), 1200, map);
    const m = more as { axisX: number; cellsLeft: number; cells: number; titles: string[] };
    expect(seen.verdict).toMatch(/^FAIL: /);
    expect(measured.overlaps).toEqual([]);
    // A yield of 100 % under FAIL is read with what it counts, and which nets it leaves out.
    expect(seen.body).toMatch(/yield 100\.00 %/);
    expect(seen.body).toMatch(/The yield counts the samples in which every net that feeds a grid keeps the required 1\.50 V of noise margin/);
    expect(seen.body).toMatch(/the nets that feed no grid \(valve\[1\], valve\[2\], valve\[3\], valve\[4\]\) are not counted/);
    // Histograms in the order of the table of nets (weakest first, names in order): 1, 2, 3, 4.
    const names = m.titles.map((t) => t.replace(/: noise margin over the samples$/, ''));
    expect(names.length).toBeGreaterThanOrEqual(2);
    const order = names.map((n) => check.nets.findIndex((x: { name: string }) => x.name === n));
    expect(order.every((k) => k >= 0)).toBe(true);
    expect(order).toEqual([...order].sort((a, b) => a - b));
    // The valve stage's worst-case low lies above its worst-case high: said in words beside the curve.
    expect(seen.body).toMatch(/Worst-case VOL \(24\.04 V\) lies above worst-case VOH \(22\.80 V\)/);
    // Every point of this map fails (the nominal point does), and the page says so.
    expect(m.cells).toBe(9);
    expect(seen.body).toMatch(/Every one of the 9 points fails/);
    expect(m.cellsLeft).toBeGreaterThanOrEqual(m.axisX - 0.5);
    // At the width of a telephone, lines break often: never between a number and its unit.
    const narrow = await open(path, join(OUT, 'irrigation-narrow.png'), 360);
    expect(narrow.measured.split).toEqual([]);
  }, 180_000);

  it("pulse's page, the counter of the README: the verdict at the top, the model's range warning, one caution heading, one row a net on a scale of its range, no overlapping labels, no number parted from its unit", async () => {
    const path = join(OUT, 'crate-tally-pulse.html');
    const nets = Array.from({ length: 10 }, (_, k) => `on[${k}]`);
    const args = ['pulse', 'nets/crate-tally.tube', '--after', 'pulse RESET', '--for', '300us', '--input', 'LINE_A=clock(150V, 0V, period=100us, width=25%)', '--input', 'LINE_B=clock(150V, 0V, period=100us, width=25%, delay=50%)', '--nets', nets.join(',')];
    const r = await cli([...args, '--expect', 'on[3]=1', '-o', path]);
    expect(r.code).toBe(0);
    // Each row of waveforms: how many traces it holds, and how much of its height the trace spans.
    const rows = String.raw`(() => [...document.querySelectorAll('#waves .role-scope')].map((row) => {
      const frame = row.querySelector('path.background').getBBox();
      const lines = [...row.querySelectorAll('.mark-line path')];
      return { lines: lines.length, share: lines.length ? lines[0].getBBox().height / frame.height : 0 };
    }))()`;
    const { seen, errors, requests, measured, more } = await open(path, path.replace(/\.html$/, '.png'), 1200, rows);
    expect(seen.verdictInHeader).toBe(1);
    expect(seen.verdict).toBe('PASS: the run finished; every state asked for at the end holds (1 net).');
    // The warning pulse prints on stderr, on the page too.
    const warning = /warning: (.*) \[outside-trusted-range\]/.exec(r.err)![1]!;
    expect(seen.header).toContain(`The waveforms rest on a model used outside its trusted range: ${warning}`);
    // The caution block's heading says caution; its lines do not again.
    expect(seen.caution).toBe(1);
    expect(seen.cautionText).toMatch(/^Caution: high voltage\n/);
    expect(seen.cautionText!.match(/caution/gi)).toHaveLength(1);
    expect(seen.cautionText).toMatch(/exceed 60 V/);
    // Two driven inputs and ten watched nets, a row each; every trace spans at least 40 % of its row (on one 0–150 V axis, a 16–26 V swing took 8 %).
    const waveRows = more as { lines: number; share: number }[];
    expect(waveRows).toHaveLength(12);
    for (const row of waveRows) expect(row.lines).toBe(1);
    for (const row of waveRows) expect(row.share).toBeGreaterThan(0.4);
    expect(measured.overlaps).toEqual([]);
    expect(errors).toEqual([]);
    expect(requests.every((u) => u.startsWith('file://'))).toBe(true);
    const narrow = await open(path, join(OUT, 'crate-tally-pulse-narrow.png'), 360);
    expect(narrow.measured.split).toEqual([]);
    // An expectation not met: FAIL at the top, as the exit code.
    const failing = join(OUT, 'crate-tally-pulse-fail.html');
    expect((await cli([...args, '--expect', 'on[3]=0', '-o', failing])).code).toBe(1);
    expect((await open(failing, failing.replace(/\.html$/, '.png'))).seen.verdict).toBe('FAIL: 1 of 1 state asked for at the end is not met (on[3] should be 0).');
  }, 180_000);

  it("pulse's page with --fastest: the fastest clock's verdict at the top, the waveforms visible, no console errors, no requests but the page", async () => {
    const path = join(OUT, 'cap-counter-pulse.html');
    const r = await cli(['pulse', 'nets/cap-counter.tube', '--for', '350us', '--input', 'HOPPER=clock(150V, 0V, period=100us, width=10%)', '--nets', 'q[3],q[2],q[1],q[0]', '--probe', 'bit0/steer', '--fastest', '-o', path]);
    expect(r.code).toBe(0);
    const { seen, errors, requests, measured } = await open(path, path.replace(/\.html$/, '.png'));
    expect(seen.title).toBe('Cap counter ripple binary');
    expect(seen.verdictInHeader).toBe(1);
    expect(seen.verdict).toMatch(/^PASS: the run finished; a clock period of .* counts as the given clock does in every corner\.$/);
    expect(seen.plots).toBe(1);
    expect(seen.visiblePlots).toBe(1);
    expect(seen.scripts).toBe(0);
    expect(seen.caution).toBe(1);
    expect(measured.overlaps).toEqual([]);
    expect(errors).toEqual([]);
    expect(requests.every((u) => u.startsWith('file://'))).toBe(true);
  }, 120_000);

  it('escapes every name from the design: a title, nets and parts holding <script>, quotes and ampersands', async () => {
    const d = loadDesign('latch.tube', buttonLatchText('6AU6', 'screen bp;', '33 k', '220 k')).design!;
    const json = JSON.stringify(designToJson(d))
      .replaceAll('"q"', JSON.stringify('<script>q</script>'))
      .replaceAll('"nq"', JSON.stringify(`n"q'&amp;`));
    const doc = JSON.parse(json);
    doc.title = '<script>alert("x")</script> & <b>bold</b>';
    const jsonPath = join(OUT, 'hostile.json');
    writeFileSync(jsonPath, JSON.stringify(doc));
    const path = join(OUT, 'hostile.html');
    const r = await cli(['report', jsonPath, '-o', path]);
    expect([0, 1]).toContain(r.code);
    const html = readFileSync(path, 'utf8');
    expect(html).not.toMatch(/<script/i);
    expect(html).toContain('&lt;script&gt;q&lt;/script&gt;');
    const { seen, errors } = await open(path, join(OUT, 'hostile.png'));
    expect(seen.title).toBe('<script>alert("x")</script> & <b>bold</b>');
    expect(seen.scripts).toBe(0);
    expect(errors).toEqual([]);
  }, 120_000);

  it('overwrites an earlier report but never another file', async () => {
    const mine = join(OUT, 'notes.html');
    writeFileSync(mine, '<p>my own notes</p>');
    const r = await cli(['report', 'nets/nor-adder.tube', '-o', mine]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/exists and is not a tubemargin report/);
    expect(readFileSync(mine, 'utf8')).toBe('<p>my own notes</p>');
    const again = join(OUT, 'again.html');
    expect([0, 1]).toContain((await cli(['report', 'nets/nor-adder.tube', '-o', again])).code);
    expect([0, 1]).toContain((await cli(['report', 'nets/nor-adder.tube', '-o', again])).code);
  }, 60_000);
});
