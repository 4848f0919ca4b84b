import { spawnSync } from 'node:child_process';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ROOT, demoDesigns } from '../helpers.js';
import { runCommand as run } from '../cliRun.js';

describe('tubemargin check', () => {
  it('fails the latch whose pull-downs return to 0 V, and says it cannot hold and its sections are not cut off (common practice, no source)', async () => {
    const r = await run(['check', 'docs/examples/grounded-latch.tube']);
    expect(r.code).toBe(1);
    expect(r.out).toMatch(/^FAIL/m);
    expect(r.out).toContain('cannot hold a state');
    expect(r.out).toMatch(/\b(n?q)\.v1 is not cut off while \1 is high/);
    expect(r.out).toMatch(/\n {2}nq ↔ q +NO /);
  });

  it('gives every demo design a verdict within 80 columns, naming the weakest nets and what makes them weak', async () => {
    for (const file of demoDesigns()) {
      const r = await run(['check', file]);
      expect([0, 1]).toContain(r.code);
      expect(r.out).toMatch(/^(PASS|FAIL|UNDECIDED): /m);
      expect(r.out).toContain('The weakest nets, and why');
      expect(r.out).toMatch(/comes from:\n {5}\S/);
      for (const line of r.out.split('\n')) expect(line.length, line).toBeLessThanOrEqual(80);
    }
  });

  it('writes tubemargin.report/1 JSON with the verdict, the required margin, and per net its levels, margins and status', async () => {
    const r = await run(['check', 'nets/nor-adder.tube', '--json']);
    const json = JSON.parse(r.out);
    expect(json.schema).toBe('tubemargin.report/1');
    expect(['pass', 'fail', 'undecided']).toContain(json.verdict);
    expect(json.requiredMargin).toBe(1.5);
    const x1 = json.nets.find((n: { name: string }) => n.name === 'x1');
    expect(Object.keys(x1)).toEqual(expect.arrayContaining(['name', 'driver', 'fanout', 'high', 'low', 'margin', 'cutoffMargin', 'driveMargin', 'status']));
    expect(x1.high.worst).toBeLessThan(x1.high.nominal);
    expect(x1.low.worst).toBeGreaterThan(x1.low.nominal);
    expect(r.code).toBe(json.verdict === 'pass' ? 0 : 1);
  });

  it('takes the required margin from --margin over the design setting, and the exit code follows the verdict', async () => {
    const strict = JSON.parse((await run(['check', 'nets/nor-adder.tube', '--json', '--margin', '5'])).out);
    const loose = await run(['check', 'nets/nor-adder.tube', '--json', '--margin', '0.1V']);
    expect(strict.requiredMargin).toBe(5);
    expect(strict.verdict).toBe('fail');
    expect(JSON.parse(loose.out).requiredMargin).toBe(0.1);
    expect(loose.code).toBe(JSON.parse(loose.out).verdict === 'pass' ? 0 : 1);
  });

  it('lists latches with whether they hold, their SNM and whether each set and reset input switches them', async () => {
    const r = await run(['check', 'nets/irrigation-sequencer.tube', '--json']);
    const json = JSON.parse(r.out);
    expect(json.latches).toHaveLength(4);
    for (const l of json.latches) {
      expect(l.holds).toBe(true);
      expect(l.snm).toBeGreaterThan(0);
      expect(l.switches).toBe(true);
      expect(l.triggerMargin).toBeGreaterThan(0);
    }
  });

  it('is harder on aged tubes: the end-of-life scenario never raises a worst high or lowers a worst low', async () => {
    const fresh = JSON.parse((await run(['check', 'nets/nor-adder.tube', '--json'])).out);
    const old = JSON.parse((await run(['check', 'nets/nor-adder.tube', '--json', '--age', 'end-of-life'])).out);
    expect(old.ageing.scenario).toBe('end-of-life');
    for (const n of old.nets) {
      const f = fresh.nets.find((x: { name: string }) => x.name === n.name);
      if (n.high) expect(n.high.worst).toBeLessThanOrEqual(f.high.worst + 1e-6);
      if (n.low) expect(n.low.worst).toBeGreaterThanOrEqual(f.low.worst - 1e-6);
    }
  });

  it('refuses a bad --margin or --age with exit code 2 and no stack trace', async () => {
    for (const args of [['--margin', 'wide'], ['--age', 'ancient']]) {
      const r = await run(['check', 'nets/nor-adder.tube', ...args]);
      expect(r.code).toBe(2);
      expect(r.err).toMatch(/^error: --(margin|age) takes/);
      expect(r.err).not.toContain('    at ');
    }
  });

  it('colours the verdict only on a terminal without NO_COLOR, or when FORCE_COLOR asks', async () => {
    const ANSI = /\u001b\[/;
    const check = (tty: boolean, env: Record<string, string> = {}) => run(['check', 'nets/nor-adder.tube'], {}, { tty, env });
    expect((await check(true)).out).toMatch(ANSI);
    expect((await check(true, { NO_COLOR: '1' })).out).not.toMatch(ANSI);
    expect((await check(false)).out).not.toMatch(ANSI);
    expect((await check(false, { FORCE_COLOR: '1' })).out).toMatch(ANSI);
  });

  it('says when the verdict rests on a model used outside its trusted range, as solve does (the library entry\'s own range: 12AU7 fitted 50–300 V)', async () => {
    const r = await run(['check', 'nets/crate-tally.tube']);
    expect(r.out.replace(/\s+/g, ' ')).toMatch(/The verdict rests on a model used outside its trusted range: SURPLUS_TRIODE \(12AU7\) is trusted from 50 to 300 V on the plate; 80 conducting sections here run at 16\.\d–26\.\d V/);
    const json = JSON.parse((await run(['check', 'nets/crate-tally.tube', '--json'])).out);
    expect(json.modelRange).toHaveLength(1);
    expect(json.modelRange[0]).toContain('SURPLUS_TRIODE (12AU7) is trusted from 50 to 300 V');
    // A design within its types' ranges says nothing of it.
    expect(JSON.parse((await run(['check', 'nets/irrigation-sequencer.tube', '--json'])).out).modelRange).toEqual([]);
  });

  it('shows the safety cautions for a design whose rails exceed 60 V', async () => {
    const r = await run(['check', 'nets/crate-tally.tube']);
    expect(r.out).toContain('CAUTION: hv (up to 158 V), neg (down to −78.8 V), LINE_A (up to 150 V), LINE_B');
    expect(r.out).toContain('licensed person');
  });
});

describe('the wording of check (issue #17)', () => {
  it('names the scenario once, counts one string in the singular and a library type once', async () => {
    const design = `title "two-stage latch on a library type"
rail bp = 24 V tol 5 %
rail bias = -12 V tol 5 %
defaults { tolerance = 5 %, margin = 1.5 V, tube = "6AU6" }
stage q  { load 39 k to bp; screen bp; input nq series 220 k pulldown 220 k to bias }
stage nq { load 39 k to bp; screen bp; input q series 220 k pulldown 220 k to bias }
`;
    const r = await run(['check', 'l.tube'], { 'l.tube': design });
    const text = r.out.replace(/\n +/g, ' ');
    expect(text).toContain('(scenario new: new tubes, only the tube-to-tube spread of each type)');
    expect(text).not.toMatch(/new: new tubes:/);
    // Two envelopes: one string of two across bp; the type is the library's own, named once.
    expect(text).toMatch(/Heaters, 6AU6: 2 envelopes/);
    expect(text).toMatch(/or 1 string of 2 with [^;]* across bp/);
    expect(text).not.toMatch(/\b1 strings\b/);
    // The trusted-range note names the type once too (one helper, typeLabel, for both).
    expect(text).toMatch(/outside its trusted range: 6AU6 is trusted/);
    expect(text).not.toContain('6AU6 (6AU6)');
  });

  it('puts every heater in exactly one series string, the strings as even as the rail allows (common practice, no source)', async () => {
    // 20 envelopes of 6.3 V across 24 V: at most 3 a string, so 7 strings: 6 of 3 and 1 of 2,
    // never '7 strings of 3', which would need 21 heaters.
    const j = JSON.parse((await run(['check', 'nets/irrigation-sequencer.tube', '--json'])).out);
    for (const h of j.ratings.heaters as { envelopes: number; volts: number; strings: { rail: string; perString: number; strings: number; droppingOhms: number }[] }[]) {
      for (const rail of new Set(h.strings.map((s) => s.rail))) {
        const groups = h.strings.filter((s) => s.rail === rail);
        expect(groups.reduce((n, s) => n + s.strings * s.perString, 0), rail).toBe(h.envelopes);
        const lengths = groups.map((s) => s.perString);
        expect(Math.max(...lengths) - Math.min(...lengths), rail).toBeLessThanOrEqual(1);
        for (const s of groups) expect(s.droppingOhms, rail).toBeGreaterThanOrEqual(0);
      }
    }
    const pentodes = j.ratings.heaters.find((h: { designation: string }) => h.designation === '6AU6');
    expect(pentodes.strings.filter((s: { rail: string }) => s.rail === 'bp').map((s: { strings: number; perString: number }) => [s.strings, s.perString])).toEqual([[6, 3], [1, 2]]);
    const text = (await run(['check', 'nets/irrigation-sequencer.tube'])).out.replace(/\n +/g, ' ');
    expect(text).toMatch(/6 strings of 3 with 17 Ω \(1\.53 W\) each and 1 string of 2 with 38 Ω \(3\.42 W\) each across bp/);
  });

  it('says UNDECIDED once, and names every bound it cites as the bound', async () => {
    const r = await run(['check', 'nets/irrigation-sequencer.tube']);
    const text = r.out.replace(/\n +/g, ' ');
    expect(text).toMatch(/\(UNDECIDED\): /);
    expect(text).not.toMatch(/\(UNDECIDED\): undecided/i);
    // Under a net that bounds failed and corners did not decide, each further reason is the bound's.
    for (const m of text.matchAll(/\(UNDECIDED\):[^\n]*?also: (.{10})/g)) expect(m[1]).toBe('the bound:');
  });

  it('explains the figures under the names the tables head them with, not the JSON keys', async () => {
    const r = await run(['check', 'nets/irrigation-sequencer.tube']);
    const glossary = r.out.slice(r.out.indexOf('What the figures mean'));
    const terms = glossary.split('\n').slice(1).filter((l) => /^ {2}\S/.test(l)).map((l) => l.slice(2, l.indexOf(': ')));
    expect(terms).toEqual(['high', 'low', 'NM_H', 'NM_L', 'cutoff', 'drive margin (in --json)', 'more', 'SNM', 'trigger']);
    const headings = r.out.split('\n').filter((l) => /^ {2}(net|latch) /.test(l)).join(' ').split(/\s+/);
    for (const t of terms.filter((x) => !x.includes('--json'))) expect(headings, t).toContain(t);
    expect(glossary).not.toMatch(/worstHigh|headroom|nmHigh/);
    // The JSON keeps its own keys.
    const j = JSON.parse((await run(['check', 'nets/irrigation-sequencer.tube', '--json'])).out);
    expect(Object.keys(j.definitions)).toContain('worstHigh');
  });
});

describe('tubemargin check --samples', () => {
  it('adds the yield with its interval, the margin distributions and the failing samples', async () => {
    const r = await run(['check', 'nets/nor-adder.tube', '--samples', '400', '--seed', '7', '--workers', '1']);
    expect(r.out).toMatch(/Monte Carlo: 400 samples \(uniform, seed 7\): yield \d+\.\d %, 95 % interval/);
    expect(r.out).toMatch(/\n {2}net +min +1 % +median +failed\n/);
    const json = JSON.parse((await run(['check', 'nets/nor-adder.tube', '--samples', '400', '--seed', '7', '--workers', '1', '--json'])).out);
    expect(json.monteCarlo.samples).toBe(400);
    expect(json.monteCarlo.interval[0]).toBeLessThanOrEqual(json.monteCarlo.yield);
    expect(json.monteCarlo.interval[1]).toBeGreaterThanOrEqual(json.monteCarlo.yield);
  });

  it('gives byte-identical JSON for a seed with 1 and with 2 worker threads', () => {
    // Worker threads run the compiled tool, so this runs the built binary as a user would.
    const once = (workers: string) =>
      spawnSync(process.execPath, [join(ROOT, 'bin/tubemargin.js'), 'check', 'nets/nor-adder.tube', '--samples', '300', '--seed', '5', '--distribution', 'normal', '--workers', workers, '--json'], { cwd: ROOT, encoding: 'utf8' });
    const one = once('1');
    const two = once('2');
    expect(one.status).toBe(two.status);
    expect(JSON.parse(one.stdout).monteCarlo.samples).toBe(300);
    expect(two.stdout).toBe(one.stdout);
  });

  it('refuses a bad --samples, --seed, --distribution or --workers with exit code 2', async () => {
    for (const args of [['--samples', '0'], ['--samples', 'many'], ['--seed', '-1'], ['--distribution', 'lumpy'], ['--workers', '0']]) {
      const r = await run(['check', 'nets/nor-adder.tube', ...args]);
      expect(r.code).toBe(2);
      expect(r.err).toMatch(/^error: --(samples|seed|distribution|workers) takes/);
    }
  });
});

describe('tubemargin check --shrink', () => {
  it('prints the smallest failing set of part values found, within 80 columns, and carries it in the JSON', async () => {
    const r = await run(['check', 'nets/nor-adder.tube', '--shrink']);
    expect(r.out).toMatch(/^Shrink: the smallest failing set of part values found/m);
    expect(r.out).toMatch(/\n {2}(perveance|resistor|rail) \S+: .* % of its band\)/);
    for (const line of r.out.split('\n')) expect(line.length, line).toBeLessThanOrEqual(80);
    const json = JSON.parse((await run(['check', 'nets/nor-adder.tube', '--shrink', '--json'])).out);
    expect(json.shrink.found).toBe(true);
    expect(json.shrink.deviations.length).toBeGreaterThan(0);
  });
});
