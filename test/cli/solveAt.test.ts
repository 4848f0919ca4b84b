import { describe, expect, it } from 'vitest';
import { runCommand as run } from '../cliRun.js';

/** The text with its line wrapping undone. */
const flat = (text: string) => text.replace(/\s+/g, ' ');

describe('tubemargin solve --at', () => {
  it('re-solves the witness of a net from a whole check --json report and finds its failure there', async () => {
    const check = await run(['check', 'nets/nor-adder.tube', '--json']);
    expect(check.code).toBe(1);
    const report = JSON.parse(check.out);
    const x2 = report.nets.find((n: { name: string }) => n.name === 'x2');
    expect(x2.basis).toBe('witness');
    const r = await run(['solve', 'nets/nor-adder.tube', '--at', 'c.json', '--at-net', 'x2'], { 'c.json': check.out });
    expect(r.code).toBe(1);
    expect(r.out).toMatch(/^At the witness of net x2: x2 at 7\.0\d\d V/);
    expect(flat(r.out)).toContain('the failure it names is there');
    const json = await run(['solve', 'nets/nor-adder.tube', '--at', 'c.json', '--at-net', 'x2', '--json'], { 'c.json': check.out });
    const solved = JSON.parse(json.out);
    expect(solved.witness).toMatchObject({ of: 'net x2', reproduced: true });
    // The level the witness names is the level the whole design takes there (to the millivolt).
    expect(solved.nodes.x2).toBeCloseTo(x2.witness.level.volts, 3);
  });

  it('takes a witness object on its own, as docs/examples holds one', async () => {
    const r = await run(['solve', 'nets/nor-adder.tube', '--at', 'docs/examples/adder-x2-witness.json']);
    expect(r.code).toBe(1);
    expect(flat(r.out)).toContain('the failure it names is there');
  });

  it('re-solves a latch that cannot hold and sees the state lost', async () => {
    const check = await run(['check', 'docs/examples/grounded-latch.tube', '--json']);
    const r = await run(['solve', 'docs/examples/grounded-latch.tube', '--at', 'c.json', '--at-net', 'q'], { 'c.json': check.out });
    expect(r.code).toBe(1);
    expect(flat(r.out)).toContain('the state does not hold; the failure it names is there');
  });

  it('says what is wrong with the witness given, exit 2', async () => {
    const check = JSON.parse((await run(['check', 'nets/nor-adder.tube', '--json'])).out);
    const witness = check.nets.find((n: { name: string }) => n.name === 'x2').witness;
    // A report with two witnesses, as a design with two failing nets gives.
    const two = JSON.stringify({ nets: [{ name: 'x2', witness }, { name: 'y2', witness }] });
    const files = { 'c.json': two, 'bad.json': '{ "values": ', 'other.json': JSON.stringify({ values: { NOSUCH: 1 }, positions: {}, states: {} }) };
    const cases: [string[], RegExp][] = [
      [['--at', 'c.json'], /holds 2 witnesses: pick one with --at-net \(one of x2, y2\)/],
      [['--at', 'c.json', '--at-net', 'sum'], /holds no witness for 'sum'/],
      [['--at', 'bad.json'], /is not JSON/],
      [['--at', 'missing.json'], /cannot read the witness file 'missing.json'/],
      [['--at', 'other.json'], /names what nets\/nor-adder.tube does not have: NOSUCH/],
      [['--at', 'c.json', '--at-net', 'x2', '--close', 'SA'], /--at sets the contacts and latch states itself/],
    ];
    for (const [args, message] of cases) {
      const r = await run(['solve', 'nets/nor-adder.tube', ...args], files);
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.err).toMatch(message);
      expect(r.err).not.toContain('    at ');
    }
  });
});
