import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { findScenario, loadDesign, reproduceWitness } from '../../lib/index.js';
import { checkToJson, renderCheck } from '../../lib/report/checkReport.js';
import { ROOT, checkOf, memoryLoader, netsFiles } from '../helpers.js';

/**
 * What `check` says about its verdicts agrees with the verdicts, as a new user reading
 * the adder's check found it did not (regressions of the fresh-eyes run).
 */
const demo = (file: string) => {
  const text = readFileSync(join(ROOT, file), 'utf8');
  return loadDesign(file, text, { loader: memoryLoader({ ...netsFiles(), [file]: text }) }).design!;
};

describe("check's words agree with its verdicts", () => {
  const adder = demo('nets/nor-adder.tube');

  it('names as causes of a worst level only parts and levels that move it the worse way, even at end of life', () => {
    for (const scenario of ['new', 'end-of-life']) {
      const r = checkOf(adder, { scenario: findScenario(scenario)! });
      for (const n of r.nets) {
        for (const c of n.weakest?.causes ?? []) {
          // A worst high is made by what pulls it down; a worst low by what pushes it up.
          if (n.weakest!.what === 'high') expect(c.volts, `${scenario}: ${n.name} ${c.target}`).toBeLessThan(0);
          if (n.weakest!.what === 'low') expect(c.volts, `${scenario}: ${n.name} ${c.target}`).toBeGreaterThan(0);
        }
      }
    }
  });

  it('explains every net that fails or is undecided in the text, as its headline says ("below")', () => {
    const r = checkOf(adder);
    const text = renderCheck(adder, r, 'nets/nor-adder.tube');
    const lines = text.split('\n');
    // Each is explained itself, or named alike under one that is (the same verdict and figures).
    const named = new Set<string>();
    for (const l of lines) {
      const head = /^\d+\. (\S+) \(/.exec(l);
      if (head) named.add(head[1]!);
      if (/^ {3}alike: /.test(l)) for (const x of l.replace(/^ {3}alike: /, '').split(', ')) named.add(x.trim().split(' ')[0]!);
    }
    for (const n of r.nets.filter((x) => x.status === 'fail' || x.status === 'undecided')) expect(named.has(n.name), n.name).toBe(true);
  });

  it('gives reasons in the JSON for a missing witness or found level that fit the basis', () => {
    const r = checkOf(adder);
    const json = checkToJson(adder, r);
    for (const n of json.nets) {
      if (n.basis === 'witness') expect(n.foundWhy ?? '', n.name).not.toMatch(/bounds decided/);
      if (n.status === 'undecided') expect(n.witnessWhy ?? '', n.name).not.toMatch(/^no corner fails it/);
      if (n.status === 'pass' && n.basis === 'bounds') expect(n.witnessWhy, n.name).toMatch(/bounds keep the required margin/);
    }
  });

  it('says a re-solved witness of a level past its logic threshold is on the wrong side of it, in words', () => {
    const d = demo('nets/irrigation-sequencer.tube');
    const valve = checkOf(d).nets.find((n) => n.name === 'valve[3]')!;
    const again = reproduceWitness(d, valve.witness!);
    expect(again.reproduced).toBe(true);
    expect(again.seen).toMatch(/its low level on the wrong side of its logic threshold 12\.000 V/);
  });
  it('says why no corner was searched where no state gives a net its level, not that the budget ran out', () => {
    // Three inverters in a ring have no static logic state (an odd loop of inversions
    // oscillates: common practice, no source), so no state of the design puts a net at the
    // level its bound fails on; the check solved no corner, and its budget was untouched.
    const ring = loadDesign('ring.tube', `rail bp = 24 V tol 5 %
rail bias = -12 V tol 5 %
type LP koren-pentode { mu = 35, ex = 1.35, kg1 = 600, kg2 = 4500, kp = 45, kvb = 15, spread = 25 % }
defaults { tolerance = 5 %, margin = 1.5 V, tube = LP }
stage a { load 33 k to bp; screen bp; input c series 220 k pulldown 220 k to bias }
stage b { load 33 k to bp; screen bp; input a series 220 k pulldown 220 k to bias }
stage c { load 33 k to bp; screen bp; input b series 220 k pulldown 220 k to bias }`).design!;
    const r = checkOf(ring);
    expect(r.nets.length).toBe(3);
    for (const n of r.nets) {
      expect(n.status).toBe('undecided');
      expect(n.reasons[0]).toContain('no state of its contacts and latches gives it the level in question');
      expect(n.reasons.join(' ')).not.toContain('budget');
    }
  });
  it('prints a re-solve line that finds the witness again: the scenario and margin the check ran with, and names a shell reads as written', () => {
    // Found by a fresh-eyes run: after `check --age aged`, the printed `check … --json`
    // left out `--age aged`, so the report it wrote held no witness for the net, and
    // `bed[1]/off` unquoted is a file pattern to a shell (common practice, no source).
    const file = 'nets/irrigation-sequencer.tube';
    const d = demo(file);
    const text = renderCheck(d, checkOf(d, { scenario: findScenario('aged')!, requiredMargin: 1.25 }), file);
    const lines = text.split('\n');
    const at = lines.flatMap((line, i) => (line.includes('re-solve it:') ? [`${line} ${lines[i + 1]!.trim()} ${lines[i + 2]!.trim()}`] : []));
    expect(at.length).toBeGreaterThan(0);
    for (const line of at) {
      expect(line).toContain('--age aged');
      expect(line).toContain('--margin 1.25');
      const net = /--at-net (\S+)/.exec(line)?.[1];
      expect(net, line).toBeDefined();
      if (/[[\]]/.test(net!)) expect(net).toMatch(/^'.*'$/);
    }
    // A gain witness is printed like any other.
    expect(text).toMatch(/valve\[1\] \(FAIL\)[\s\S]*?witness:[\s\S]*?re-solve it/);
  });
  it('groups as alike only nets that came to the same verdict the same way', () => {
    // Found by a fresh-eyes run: in the aged irrigation sequencer bed[1]/off (FAIL, its
    // latch cannot hold) was shown "alike" bed[2..4]/off, which were UNDECIDED, and bed[1]/on
    // (its latch's witness) alike nets failing on a level of their own.
    const file = 'nets/irrigation-sequencer.tube';
    const d = demo(file);
    const r = checkOf(d, { scenario: findScenario('aged')! });
    const kind = (name: string) => {
      const n = r.nets.find((x) => x.name === name)!;
      const w = n.witness;
      return `${n.status} ${!w ? '' : w.level ? 'level' : w.grid ? 'grid' : w.gain ? 'gain' : 'latch'}`;
    };
    const lines = renderCheck(d, r, file).split('\n');
    let groups = 0;
    lines.forEach((line, i) => {
      const head = /^\d+\. (\S+) \(/.exec(line);
      const alike = head && lines.slice(i + 1, i + 4).find((l) => l.startsWith('   alike: '));
      if (!head || !alike) return;
      groups++;
      const names = alike.slice('   alike: '.length).replace(/ \(each.*$/, '').split(', ').filter((x) => !x.startsWith('…'));
      for (const name of names) expect(`${name}: ${kind(name)}`).toBe(`${name}: ${kind(head[1]!)}`);
    });
    expect(groups).toBeGreaterThan(0);
  });
});
