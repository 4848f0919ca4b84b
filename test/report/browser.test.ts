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

/** Opens a report; returns what a person sees and what the page logged or asked for. */
async function open(path: string, screenshot: string) {
  const page = await browser.newPage({ viewport: { width: 1200, height: 900 } });
  const errors: string[] = [];
  const requests: string[] = [];
  page.on('console', (m) => m.type() === 'error' && errors.push(m.text()));
  page.on('pageerror', (e) => errors.push(e.message));
  page.on('request', (r) => requests.push(r.url()));
  await page.goto(`file://${path}`);
  const seen = {
    verdict: await page.locator('#verdict').innerText(),
    weakest: await page.locator('#weakest').count() ? await page.locator('#weakest').innerText() : undefined,
    title: await page.locator('h1').innerText(),
    plots: await page.locator('figure.plot svg').count(),
    visiblePlots: await page.locator('figure.plot svg:visible').count(),
    scripts: await page.locator('script').count(),
    caution: await page.locator('#caution').count(),
  };
  await page.screenshot({ path: screenshot, fullPage: true });
  await page.close();
  return { seen, errors, requests };
}

describe('the HTML report in a browser', () => {
  for (const file of demoDesigns()) {
    it(`${file}: shows the verdict, the weakest net and every plot, with no console errors and no requests but the page`, async () => {
      const path = join(OUT, file.replace(/\W+/g, '_') + '.html');
      const r = await cli(['report', file, '-o', path, '--samples', '300', '--workers', '1']);
      expect([0, 1]).toContain(r.code);
      const check = JSON.parse((await cli(['check', file, '--json'])).out);
      const html = readFileSync(path, 'utf8');
      const { seen, errors, requests } = await open(path, path.replace(/\.html$/, '.png'));
      expect(seen.verdict).toMatch(new RegExp(`^${check.verdict.toUpperCase()}: `));
      expect(seen.weakest).toBe(check.nets[0].name);
      expect(seen.plots).toBe((html.match(/<figure class="plot">/g) ?? []).length);
      expect(seen.plots).toBeGreaterThanOrEqual(4);
      expect(seen.visiblePlots).toBe(seen.plots);
      expect(seen.scripts).toBe(0);
      expect(seen.caution).toBe(check.cautions.length > 0 ? 1 : 0);
      expect(errors).toEqual([]);
      expect(requests.every((u) => u.startsWith('file://'))).toBe(true);
    }, 120_000);
  }

  it("pulse's page: the waveforms plotted and visible, the fastest clock's verdict, no console errors, no requests but the page", async () => {
    const path = join(OUT, 'cap-counter-pulse.html');
    const r = await cli(['pulse', 'nets/cap-counter.tube', '--for', '350us', '--input', 'HOPPER=clock(150V, 0V, period=100us, width=10%)', '--nets', 'q[3],q[2],q[1],q[0]', '--probe', 'bit0/steer', '--fastest', '-o', path]);
    expect(r.code).toBe(0);
    const { seen, errors, requests } = await open(path, path.replace(/\.html$/, '.png'));
    expect(seen.title).toBe('Cap counter ripple binary');
    expect(seen.verdict).toMatch(/^A period of .* counts as the given clock does in every corner\.$/);
    expect(seen.plots).toBe(1);
    expect(seen.visiblePlots).toBe(1);
    expect(seen.scripts).toBe(0);
    expect(seen.caution).toBe(1);
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
