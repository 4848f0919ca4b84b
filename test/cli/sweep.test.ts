import { describe, expect, it } from 'vitest';
import { runCommand as run } from '../cliRun.js';

describe('tubemargin sweep', () => {
  it('draws the map of one rail within 80 columns, marks the nominal point and gives the window', async () => {
    const r = await run(['sweep', 'nets/nor-adder.tube', '--rail', 'bp=20:28:1', '--margin', '0.4']);
    expect(r.out).toMatch(/^ {2}[#.@!]{9}$/m);
    expect(r.out).toMatch(/[@!]/);
    expect(r.out).toContain('Operating window through the nominal point');
    expect(r.out).toMatch(/\n {2}bp: /);
    for (const line of r.out.split('\n')) expect(line.length, line).toBeLessThanOrEqual(80);
    expect(r.code).toBe(r.out.includes('@') ? 0 : 1);
  });

  it('shows the safety cautions for a rail swept above 60 V, at the farthest value swept (extra-low voltage: 60 V DC, common practice, no source)', async () => {
    // The adder's 24 V rail is safe as built; swept to 72 V it is not, and the caution says so.
    const r = await run(['sweep', 'nets/nor-adder.tube', '--rail', 'bp=24:72:48']);
    expect(r.out).toMatch(/CAUTION: bp \(up to 72 V\)/);
    const j = JSON.parse((await run(['sweep', 'nets/nor-adder.tube', '--rail', 'bp=24:72:48', '--json'])).out);
    expect(j.cautions[0]).toMatch(/bp \(up to 72 V\)/);
    expect((await run(['sweep', 'nets/nor-adder.tube', '--rail', 'bp=20:28:8'])).out).not.toContain('CAUTION');
  });

  it('writes the whole grid as tubemargin.sweep/1 JSON', async () => {
    const r = await run(['sweep', 'nets/nor-adder.tube', '--rail', 'bp=22:26:2', '--rail', 'bias=-13:-11:1', '--heater', '0.9', '--json']);
    const json = JSON.parse(r.out);
    expect(json.schema).toBe('tubemargin.sweep/1');
    expect(json.heater).toBe(0.9);
    expect(json.grid).toHaveLength(3);
    expect(json.grid[0]).toHaveLength(3);
    expect(json.axes.map((a: { rail: string }) => a.rail)).toEqual(['bp', 'bias']);
  });

  it('refuses a malformed --rail, a rail the design lacks and a bad --heater with exit code 2', async () => {
    expect((await run(['sweep', 'nets/nor-adder.tube', '--rail', 'bp=20-28'])).code).toBe(2);
    const missing = await run(['sweep', 'nets/nor-adder.tube', '--rail', 'hv=20:28:1']);
    expect(missing.code).toBe(2);
    expect(missing.err).toContain("no rail named 'hv'");
    expect((await run(['sweep', 'nets/nor-adder.tube', '--rail', 'bp=20:28:1', '--heater', '3'])).code).toBe(2);
  });
});
