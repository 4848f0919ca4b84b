import { describe, expect, it } from 'vitest';
import { fitReadings, loadDesign, NOMINAL_VARIATION, parseReadings, tubeCurrents, type Reading, type TubeModel } from '../../lib/index.js';
import { fitToText } from '../../lib/report/fitReport.js';

/** A seeded normal generator (Box–Muller over a linear congruential stream), so the synthetic readings are the same every run. */
function normals(seed: number): () => number {
  let s = seed;
  const u = () => (s = (s * 1103515245 + 12345) % 2147483648) / 2147483648;
  return () => Math.sqrt(-2 * Math.log(1 - u())) * Math.cos(2 * Math.PI * u());
}

const TRIODE = { name: 'truth', kind: 'koren-triode', mu: 21.5, ex: 1.3, kg1: 1180, kp: 84, kvb: 300, rgi: 2000, vgamma: 0, spread: 0 } as TubeModel;

/** Readings synthesised from known parameters and per-tube factors, with relative noise. */
function synthesise(model: TubeModel, factors: Record<string, number>, noise: number, seed = 7): Reading[] {
  const n = normals(seed);
  const out: Reading[] = [];
  for (const [tube, f] of Object.entries(factors)) {
    for (const plateVolts of [25, 50, 100, 150, 200, 250]) {
      for (const gridVolts of [0, -2, -4, -6, -8]) {
        const ia = tubeCurrents(model, { vgk: gridVolts, vak: plateVolts, vg2k: 100 }, { ...NOMINAL_VARIATION, perveance: f }).plate;
        if (ia < 1e-5) continue;
        out.push({ tube, plateVolts, gridVolts, plateAmps: ia * (1 + noise * n()), screenVolts: model.kind === 'koren-pentode' ? 100 : undefined });
      }
    }
  }
  return out;
}

const geometricMean = (xs: number[]) => Math.exp(xs.reduce((a, x) => a + Math.log(x), 0) / xs.length);

describe('fitting a model to bench readings', () => {
  it('recovers the parameters of readings synthesised from known ones, with 0.5 % noise, within 2 % (Koren triode)', () => {
    const factors = { A: 0.9, B: 1.05, C: 1.12, D: 0.96 };
    const answer = fitReadings(synthesise(TRIODE, factors, 0.005), 'koren-triode');
    if ('refusal' in answer) throw new Error(answer.refusal);
    const fit = answer.fit;
    // The factors' geometric mean is set to 1, so the type's kg1 absorbs the synthetic lot's mean.
    const g = geometricMean(Object.values(factors));
    const truth = { mu: 21.5, ex: 1.3, kg1: 1180 / g, kp: 84, kvb: 300 };
    for (const [k, v] of Object.entries(truth)) expect(Math.abs((fit.model as unknown as Record<string, number>)[k]! / v - 1), k).toBeLessThan(0.02);
    for (const [t, f] of Object.entries(factors)) expect(Math.abs(fit.perTube[t]! / (f / g) - 1), t).toBeLessThan(0.02);
    expect(fit.trustedPlateVolts).toEqual([25, 250]);
    expect(fit.rmsError).toBeLessThan(0.01);
  });

  it('recovers a pentode from plate and screen readings within 2 %, kg2 included (Koren pentode)', () => {
    const truth = { name: 'truth', kind: 'koren-pentode', mu: 36, ex: 1.35, kg1: 2744, kg2: 2103, kp: 120, kvb: 8, rgi: 2000, vgamma: 0, spread: 0 } as TubeModel;
    const n = normals(5);
    const readings: Reading[] = [];
    for (const [tube, f] of [['A', 0.95], ['B', 1.05]] as const) {
      for (const plateVolts of [5, 10, 20, 40, 60]) {
        for (const gridVolts of [0, -1, -2, -3]) {
          for (const screenVolts of [24, 48]) {
            const c = tubeCurrents(truth, { vgk: gridVolts, vak: plateVolts, vg2k: screenVolts }, { ...NOMINAL_VARIATION, perveance: f });
            if (c.plate < 1e-6) continue;
            readings.push({ tube, plateVolts, gridVolts, screenVolts, plateAmps: c.plate * (1 + 0.005 * n()), screenAmps: c.screen * (1 + 0.005 * n()) });
          }
        }
      }
    }
    const answer = fitReadings(readings, 'koren-pentode');
    if ('refusal' in answer) throw new Error(answer.refusal);
    const g = Math.sqrt(0.95 * 1.05);
    const expected = { mu: 36, ex: 1.35, kg1: 2744 / g, kg2: 2103 / g, kp: 120, kvb: 8 };
    for (const [k, v] of Object.entries(expected)) expect(Math.abs((answer.fit.model as unknown as Record<string, number>)[k]! / v - 1), k).toBeLessThan(0.02);
  });

  it("gives a synthetic lot's spread within its sampling error: twelve tubes drawn within ±20 %", () => {
    const n = normals(11);
    const factors: Record<string, number> = {};
    for (let i = 0; i < 12; i++) factors[`T${i}`] = 1 + 0.2 * Math.max(-1, Math.min(1, n() / 2));
    const answer = fitReadings(synthesise(TRIODE, factors, 0.005, 3), 'koren-triode');
    if ('refusal' in answer) throw new Error(answer.refusal);
    const g = geometricMean(Object.values(factors));
    const lotSpread = Math.max(...Object.values(factors).map((f) => Math.abs(f / g - 1)));
    // Each factor is fitted to better than 1 % here, so the spread is the lot's to within that.
    expect(Math.abs(answer.fit.spread - lotSpread)).toBeLessThan(0.01);
    expect(answer.fit.spread).toBeLessThanOrEqual(0.2 / 0.8 + 0.01);
  });

  it('refuses too few readings, readings at one grid voltage, and readings with no current', () => {
    const few = synthesise(TRIODE, { A: 1 }, 0).slice(0, 6);
    expect(fitReadings(few, 'koren-triode')).toMatchObject({ refusal: expect.stringMatching(/^6 readings for 5 unknowns/) });
    const oneGrid = synthesise(TRIODE, { A: 1, B: 1.1, C: 0.9 }, 0).filter((r) => r.gridVolts === 0);
    expect(fitReadings(oneGrid, 'koren-triode')).toMatchObject({ refusal: expect.stringMatching(/fewer than three grid voltages/) });
    const dark = synthesise(TRIODE, { A: 1 }, 0).map((r) => ({ ...r, plateAmps: 0 }));
    expect(fitReadings(dark, 'koren-triode')).toMatchObject({ refusal: 'no reading shows any plate current' });
  });

  it('writes a type the design language reads back to the same currents', () => {
    const answer = fitReadings(synthesise(TRIODE, { A: 0.95, B: 1.05 }, 0.005), 'koren-triode');
    if ('refusal' in answer) throw new Error(answer.refusal);
    const text = fitToText(answer.fit, 'MINE', 'bench.csv');
    const d = loadDesign('mine.tube', text + 'rail bp = 100 V\nstage q { tube MINE; load 10 k to bp; input x series 1 k pulldown 1 M to gnd }\ndrive X (x) 0 V\n').design!;
    const model = d.models.find((m) => m.name === 'MINE')!;
    const fitted = { ...answer.fit.model, name: 'f', rgi: 2000, vgamma: 0, spread: 0 } as TubeModel;
    for (const [vgk, vak] of [[0, 100], [-3, 200], [-1, 50]] as const) {
      expect(tubeCurrents(model, { vgk, vak }).plate / tubeCurrents(fitted, { vgk, vak }).plate).toBeCloseTo(1, 4);
    }
  });
});

describe('reading a readings file', () => {
  it('reports every bad value at its line and column, and a missing column at the header', () => {
    const r = parseReadings('r.csv', '# bench, week 3\ntube,plate_v,grid_v,plate_ma\nA,100,-2,4.1\nA,1OO,-2,4.1\nB,100,,3.9\n');
    expect(r.diagnostics.map((d) => `${d.span!.start.line}:${d.span!.start.col} ${d.code}`)).toEqual(['4:3 csv-value', '5:7 csv-value']);
    expect(r.value).toHaveLength(1);
    expect(r.value[0]).toMatchObject({ tube: 'A', plateVolts: 100, gridVolts: -2 });
    expect(r.value[0]!.plateAmps).toBeCloseTo(0.0041, 12);
    const missing = parseReadings('r.csv', 'tube,plate_v,plate_ma\nA,100,4\n');
    expect(missing.diagnostics.map((d) => d.code)).toEqual(['csv-column']);
  });
});

describe('readings across a plate load (a voltmeter on the plate of a tube in a stage)', () => {
  /**
   * A bench stage solved by bisection, independently of the tool's solver: the supply
   * drives the plate through the load, which carries the plate current and the
   * voltmeter's (Ohm's law and Kirchhoff's current law at the plate).
   */
  function platePoint(model: TubeModel, factor: number, supply: number, load: number, grid: number, meter: number): number {
    const excess = (vp: number) => supply - vp - load * (tubeCurrents(model, { vgk: grid, vak: vp, vg2k: 0 }, { ...NOMINAL_VARIATION, perveance: factor }).plate + vp / meter);
    let lo = 0;
    let hi = supply;
    for (let k = 0; k < 200; k++) {
      const mid = (lo + hi) / 2;
      if (excess(mid) > 0) lo = mid;
      else hi = mid;
    }
    return (lo + hi) / 2;
  }
  const dividerTap = (drive: number, series: number, pulldown: number, bias: number) => (drive * pulldown + bias * series) / (series + pulldown);

  it('turns each row into the plate current by Ohm\'s law, the meter\'s share taken off, and the grid into its divider\'s tap', () => {
    const text = 'tube,supply_v,load_ohms,plate_v,drive_v,series_ohms,pulldown_ohms,bias_v,meter_ohms\nA,24,100000,4.0,0,220000,220000,-12,10000000\n';
    const r = parseReadings('bench.csv', text);
    expect(r.diagnostics).toEqual([]);
    expect(r.value[0]!.gridVolts).toBeCloseTo(-6, 12);
    expect(r.value[0]!.plateAmps).toBeCloseTo(20 / 100e3 - 4 / 10e6, 15);
  });

  it('fits the Koren triode to plate voltages of a latch-like bench stage as well as to plate currents: the fit predicts the true currents within 2 %', () => {
    const factors = { A: 0.92, B: 1.08 };
    const meter = 10e6;
    const rows: string[] = [];
    for (const [tube, f] of Object.entries(factors))
      for (const supply of [24, 36, 48, 60])
        for (const load of [33e3, 100e3, 220e3])
          for (const drive of [-6, 0, 6, 12])
            for (const pulldown of [150e3, 220e3, 330e3]) {
              const grid = dividerTap(drive, 220e3, pulldown, -12);
              if (grid > 0) continue;
              const vp = platePoint(TRIODE, f, supply, load, grid, meter);
              // A 3½-digit meter on its 200 V range: readings to 0.1 V, so only points that the reading resolves to 2 %.
              const read = Math.round(vp * 10) / 10;
              if (supply - read < 0.5) continue;
              rows.push(`${tube},${supply},${load},${read},${drive},220000,${pulldown},-12,${meter}`);
            }
    const parsed = parseReadings('bench.csv', `tube,supply_v,load_ohms,plate_v,drive_v,series_ohms,pulldown_ohms,bias_v,meter_ohms\n${rows.join('\n')}\n`);
    expect(parsed.diagnostics).toEqual([]);
    expect(parsed.value.length).toBeGreaterThan(60);
    const answer = fitReadings(parsed.value, 'koren-triode');
    if ('refusal' in answer) throw new Error(answer.refusal);
    const fitted = { ...TRIODE, ...answer.fit.model } as TubeModel;
    const g = geometricMean(Object.values(factors));
    // Over the plates and grids of the readings, the fitted type and tube factors give the true currents.
    let worst = 0;
    for (const reading of parsed.value) {
      const f = factors[reading.tube as keyof typeof factors];
      const truth = tubeCurrents(TRIODE, { vgk: reading.gridVolts, vak: reading.plateVolts, vg2k: 0 }, { ...NOMINAL_VARIATION, perveance: f }).plate;
      const model = tubeCurrents(fitted, { vgk: reading.gridVolts, vak: reading.plateVolts, vg2k: 0 }, { ...NOMINAL_VARIATION, perveance: answer.fit.perTube[reading.tube]! }).plate;
      if (truth > 20e-6) worst = Math.max(worst, Math.abs(model / truth - 1));
    }
    expect(worst).toBeLessThan(0.02);
    for (const [t, f] of Object.entries(factors)) expect(Math.abs(answer.fit.perTube[t]! / (f / g) - 1), t).toBeLessThan(0.03);
  });

  it('refuses a row whose divider lifts the grid above the cathode, a plate above its supply and a load of 0 Ω, each at its line and column', () => {
    const text = 'tube,supply_v,load_ohms,plate_v,drive_v,series_ohms,pulldown_ohms,bias_v\nA,24,100000,4,0,220000,220000,-12\nA,24,100000,4,24,100000,220000,-12\nA,24,100000,30,0,220000,220000,-12\nA,24,0,4,0,220000,220000,-12\n';
    const r = parseReadings('bench.csv', text);
    expect(r.diagnostics.map((d) => `${d.span!.start.line}:${d.span!.start.col} ${d.code}`)).toEqual(['3:15 csv-value', '4:13 csv-value', '5:6 csv-value']);
    expect(r.diagnostics[0]!.message).toContain('grid at +12.75 V') // (24 V · 220 k − 12 V · 100 k) / 320 k;
    expect(r.value).toHaveLength(1);
    const missing = parseReadings('bench.csv', 'tube,supply_v,load_ohms,plate_v\nA,24,100000,4\n');
    expect(missing.diagnostics.map((d) => d.message)).toEqual(['the header lacks drive_v, series_ohms, pulldown_ohms, bias_v: readings across a plate load need tube, supply_v, load_ohms and plate_v, and grid_v or the divider drive_v, series_ohms, pulldown_ohms and bias_v']);
  });
});
