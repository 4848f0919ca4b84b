import { describe, expect, it } from 'vitest';
import { designFromJson, MODEL_KINDS, TUBE_LIBRARY } from '../../lib/index.js';
import { codes, load } from '../helpers.js';

const HEADER = `rail bp = 24 V\nrail bias = -12 V\n`;
const STAGE = `stage q { tube T; load 33 k to bp; input a series 220 k pulldown 220 k to bias }\nresistor RA (a, gnd) 10 k\n`;

const errorsOf = (text: string) => load(text).diagnostics.filter((d) => d.severity === 'error');

describe('values outside the physical domain of a model kind are refused, naming the field and the range', () => {
  it('refuses a grid-current onset beyond ±2 V: grid current starts a fraction of a volt either side of the cathode (common practice, no source)', () => {
    for (const vgamma of ['-100 V', '-2.5 V', '3 V']) {
      const errs = errorsOf(`${HEADER}type T like "12AU7" { vgamma = ${vgamma} }\n${STAGE}`);
      expect(codes(errs)).toEqual(['value-out-of-range']);
      expect(errs[0]!.message).toContain('vgamma');
      expect(errs[0]!.message).toMatch(/within -2 V…2 V, not -?\d/);
      expect(errs[0]!.span?.start.line).toBe(3);
    }
    for (const vgamma of ['-2 V', '2 V', '-0.7 V']) expect(errorsOf(`${HEADER}type T like "12AU7" { vgamma = ${vgamma} }\n${STAGE}`)).toEqual([]);
  });

  it('refuses Koren exponents and scales that describe no tube, and Child–Langmuir perveances beyond any tube', () => {
    const cases = [
      'type T koren-triode { mu = 20, ex = 0.2, kg1 = 1000, kp = 300, kvb = 300 }',
      'type T koren-triode { mu = 20, ex = 1.4, kg1 = 1e-9, kp = 300, kvb = 300 }',
      'type T koren-triode { mu = 0.01, ex = 1.4, kg1 = 1000, kp = 300, kvb = 300 }',
      'type T koren-triode { mu = 20, ex = 1.4, kg1 = 1000, kp = 1e300, kvb = 300 }',
      'type T child-langmuir { mu = 20, k = 1e6 }',
    ];
    for (const t of cases) expect(codes(errorsOf(`${HEADER}${t}\n${STAGE}`)), t).toEqual(['value-out-of-range']);
  });

  it('refuses diode constants where the exponential law overflows or the part is no diode', () => {
    for (const fields of ['is = 1e-40', 'is = 100', 'n = 0.01', 'n = 1000', 'rs = 1e12']) {
      const errs = errorsOf(`${HEADER}resistor R1 (bp, x) 10 k\ndiode D1 (x, gnd) { ${fields} }`);
      expect(codes(errs), fields).toEqual(['value-out-of-range']);
    }
  });

  it('refuses the same values in the JSON form, pointing at the value', () => {
    const json = JSON.stringify({
      schema: 'tubemargin.design/1',
      rails: [{ name: 'bp', volts: 24 }],
      models: [{ name: 'T', library: '12AU7', vgamma: -50 }],
      parts: [
        { type: 'resistor', name: 'R1', a: 'bp', b: 'p', ohms: 10000 },
        { type: 'resistor', name: 'R2', a: 'g', b: 'gnd', ohms: 10000 },
        { type: 'tube', name: 'V1', model: 'T', plate: 'p', grid: 'g', cathode: 'gnd' },
        { type: 'diode', name: 'D1', anode: 'p', cathode: 'gnd', n: 1e-6 },
      ],
    });
    const r = designFromJson(json, 'd.json');
    expect(codes(r.diagnostics).filter((c) => c === 'value-out-of-range')).toHaveLength(2);
    expect(r.diagnostics.every((d) => d.span !== undefined)).toBe(true);
  });

  it('keeps every library entry inside the ranges it enforces', () => {
    for (const e of TUBE_LIBRARY) {
      for (const p of MODEL_KINDS[e.model.kind].parameters) {
        const v = (e.model as unknown as Record<string, number>)[p.name]!;
        expect(v, `${e.designation} ${p.name}`).toBeGreaterThanOrEqual(p.range.min);
        expect(v, `${e.designation} ${p.name}`).toBeLessThanOrEqual(p.range.max);
      }
    }
  });

  it('refuses an empty design: nothing to check is not a pass', () => {
    for (const text of ['', '# only a comment\n', 'rail bp = 24 V\n']) expect(codes(errorsOf(text))).toEqual(['empty-design']);
  });
});

describe('a design with parts but nothing to check', () => {
  it('is refused by sweep (nothing-to-check, exit 2); check judges only the ratings and says so, never "every net keeps"', async () => {
    const { runCommand } = await import('../cliRun.js');
    // 24 V across 1 kΩ is 576 mW (Joule's law), over half of a 0.5 W rating; 100 kΩ takes 5.76 mW.
    const hot = { 'r.tube': 'rail bp = 24 V\nresistor R (bp, gnd) 1 k\n' };
    const cool = { 'r.tube': 'rail bp = 24 V\nresistor R (bp, gnd) 100 k\n' };
    const swept = await runCommand(['sweep', 'r.tube', '--rail', 'bp=20:24:2'], hot);
    expect(swept.code).toBe(2);
    expect(swept.err).toContain('[nothing-to-check]');
    const failing = await runCommand(['check', 'r.tube'], hot);
    expect(failing.code).toBe(1);
    expect(failing.out.replace(/\s+/g, ' ')).toContain('FAIL: no logic net to judge (no section drives a net); parts run over their ratings');
    const passing = await runCommand(['check', 'r.tube'], cool);
    expect(passing.code).toBe(0);
    expect(passing.out).toContain('PASS: no logic net to judge');
    expect(passing.out).not.toContain('every net keeps');
    expect((await runCommand(['solve', 'r.tube'], hot)).code).toBe(0);
  });
});
