import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium, type Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildStageGraph } from '../../lib/index.js';
import { readDesignFile, type CliIo } from '../../cli/io.js';
import { runCli } from '../../cli/main.js';
import { generateVariedRegister } from '../../bench/generate.js';
import { ROOT, demoDesigns, design, load, netsFiles } from '../helpers.js';

/**
 * The drawing (`show --svg`, and the report's first section) opened in a real browser:
 * Debian's Chromium, driven by playwright-core, headless, with nothing allowed to reach
 * the network. Text is measured where the browser puts it (getBBox), not where the code
 * estimates it.
 */
const OUT = mkdtempSync(join(tmpdir(), 'tubemargin-drawing-'));
let browser: Browser;

beforeAll(async () => {
  browser = await chromium.launch({ executablePath: '/usr/bin/chromium', args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run'] });
}, 60_000);
afterAll(async () => {
  await browser?.close();
});

async function cli(args: string[]): Promise<{ code: number; err: string }> {
  let err = '';
  const io: CliIo = {
    stdout: () => undefined,
    stderr: (t) => void (err += t),
    readFile: (p) => (p.startsWith('/') ? readFileSync(p, 'utf8') : readDesignFile(join(ROOT, p))),
    writeFile: (p, text) => writeFileSync(p, text, 'utf8'),
    stdoutIsTTY: false,
    stderrIsTTY: false,
    env: {},
  };
  return { code: await runCli(args, io), err };
}

/**
 * In the page, as source text: the drawing's size on screen, the net groups by name, and
 * every pair of overlapping things among the labels (each text against each other) and the
 * boxes (each text against each box it is not written in).
 */
const MEASURE = String.raw`(() => {
  const svg = document.querySelector('svg.tubemargin-drawing');
  const shown = svg.getBoundingClientRect();
  const boxOf = (el) => {
    const b = el.getBBox();
    const m = el.getCTM();
    const corners = [[b.x, b.y], [b.x + b.width, b.y], [b.x, b.y + b.height], [b.x + b.width, b.y + b.height]].map(([x, y]) => new DOMPoint(x, y).matrixTransform(m));
    const xs = corners.map((p) => p.x);
    const ys = corners.map((p) => p.y);
    return { left: Math.min(...xs), right: Math.max(...xs), top: Math.min(...ys), bottom: Math.max(...ys) };
  };
  const overlap = (a, b) => Math.min(a.right, b.right) - Math.max(a.left, b.left) > 0.5 && Math.min(a.bottom, b.bottom) - Math.max(a.top, b.top) > 0.5;
  const texts = [...svg.querySelectorAll('text')].filter((t) => t.textContent.trim() !== '').map((el) => ({ el, text: el.textContent, box: boxOf(el) }));
  const rects = [...svg.querySelectorAll('g.box > rect')].map((el) => ({ el, box: boxOf(el) }));
  const problems = [];
  for (let i = 0; i < texts.length; i++)
    for (let j = i + 1; j < texts.length; j++) if (overlap(texts[i].box, texts[j].box)) problems.push('"' + texts[i].text + '" and "' + texts[j].text + '"');
  for (const t of texts)
    for (const r of rects) if (r.el.parentNode !== t.el.parentNode && overlap(t.box, r.box)) problems.push('"' + t.text + '" on the box of ' + r.el.parentNode.getAttribute('data-box'));
  // A label sticking out of its own box.
  for (const t of texts) {
    const own = t.el.parentNode.matches('g.box') ? t.el.parentNode.querySelector('rect') : null;
    if (own) {
      const r = boxOf(own);
      if (t.box.left < r.left || t.box.right > r.right || t.box.top < r.top || t.box.bottom > r.bottom) problems.push('"' + t.text + '" out of its box');
    }
  }
  const groups = {};
  svg.querySelectorAll('g.net').forEach((g) => (groups[g.dataset.net] = (groups[g.dataset.net] || 0) + 1));
  return { width: shown.width, height: shown.height, texts: texts.length, problems, groups };
})()`;

async function open(url: string) {
  const page = await browser.newPage({ viewport: { width: 1200, height: 900 } });
  const errors: string[] = [];
  const requests: string[] = [];
  page.on('console', (m) => m.type() === 'error' && errors.push(m.text()));
  page.on('pageerror', (e) => errors.push(e.message));
  page.on('request', (r) => requests.push(r.url()));
  await page.goto(url);
  const measured = (await page.evaluate(MEASURE)) as { width: number; height: number; texts: number; problems: string[]; groups: Record<string, number> };
  return { page, errors, requests, measured };
}

describe('the drawing in a browser', () => {
  for (const file of demoDesigns()) {
    it(`${file}: visible, one group per logic net, no label on another or on a box, no console errors, no requests`, async () => {
      const out = join(OUT, `${file.replace(/\W+/g, '-')}.svg`);
      const run = await cli(['show', file, '--svg', out]);
      expect(run.code, run.err).toBe(0);
      const { page, errors, requests, measured } = await open(`file://${out}`);
      const files = netsFiles();
      const netNames = buildStageGraph(load(files[file]!, files, file).design!).nets.map((n) => n.name);
      expect(measured.width).toBeGreaterThan(100);
      expect(measured.height).toBeGreaterThan(50);
      expect(measured.texts).toBeGreaterThan(netNames.length);
      expect(Object.keys(measured.groups).sort()).toEqual([...netNames].sort());
      expect(Object.values(measured.groups).every((c) => c === 1)).toBe(true);
      expect(measured.problems).toEqual([]);
      expect(errors).toEqual([]);
      expect(requests).toEqual([`file://${out}`]);
      await page.close();
    }, 60_000);
  }

  it('a varied 240-stage register, unfolded and folded: no label on another or on a box, one group per net', async () => {
    const file = join(OUT, 'varied.tube');
    writeFileSync(file, generateVariedRegister(240, 3));
    const nets = buildStageGraph(design(generateVariedRegister(240, 3))).nets.map((n) => n.name);
    for (const fold of ['--unfold', '--fold']) {
      const out = join(OUT, `varied${fold}.svg`);
      const run = await cli(['show', file, '--svg', out, fold, '--no-margins']);
      expect(run.code, run.err).toBe(0);
      const { page, errors, measured } = await open(`file://${out}`);
      expect(measured.problems, fold).toEqual([]);
      expect(errors).toEqual([]);
      if (fold === '--unfold') expect(Object.keys(measured.groups).sort()).toEqual([...nets].sort());
      else expect(Object.keys(measured.groups).sort()).toEqual(['c[…]', 'clk_n', 'nq[…]', 'q[…]', 's[…]', 'x0[…]', 'x1[…]']);
      await page.close();
    }
  }, 120_000);

  it('stands at the top of the report, each net linked to its row in the table of nets', async () => {
    const out = join(OUT, 'crate-report.html');
    const run = await cli(['report', 'nets/crate-tally.tube', '-o', out]);
    expect(run.code, run.err).toBe(0);
    const { page, errors, measured } = await open(`file://${out}`);
    expect(measured.problems).toEqual([]);
    expect(await page.locator('#drawing svg.tubemargin-drawing').isVisible()).toBe(true);
    // The drawing comes before the tables.
    const order = await page.evaluate(String.raw`[...document.querySelectorAll('section')].map((s) => s.id)`);
    expect((order as string[]).indexOf('drawing')).toBeLessThan((order as string[]).indexOf('nets'));
    // Every net group's link leads to a row that names a net of the group.
    const links = (await page.evaluate(String.raw`[...document.querySelectorAll('#drawing a')].map((a) => [a.querySelector('g.net') ? a.querySelector('g.net').dataset.net : a.textContent, decodeURIComponent(a.getAttribute('href').slice(1))])`)) as [string, string][];
    expect(links.length).toBeGreaterThan(10);
    for (const [net, target] of links) {
      const row = page.locator(`[id="${target.replace(/"/g, '\\"')}"]`);
      expect(await row.count(), target).toBe(1);
      expect(await row.locator('td').first().innerText()).toBe(net);
    }
    expect(errors).toEqual([]);
    await page.close();
  }, 120_000);
});
