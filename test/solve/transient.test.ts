import { describe, expect, it } from 'vitest';
import { parseWaveform, simulate, solveOperatingPoint, type TransientResult } from '../../lib/index.js';
import { design } from '../helpers.js';
import { denseReference } from '../../bench/denseReference.js';
import { toggleBinaryText } from '../analysis/oracle.js';

const wave = (text: string) => {
  const w = parseWaveform(text);
  if ('error' in w) throw new Error(w.error);
  return w.value;
};
const run = (text: string, inputs: Record<string, string>, options: Partial<Parameters<typeof simulate>[1]> & { stop: number }): TransientResult => {
  const r = simulate(design(text), { strayFarads: 0, inputs: new Map(Object.entries(inputs).map(([k, v]) => [k, wave(v)])), ...options });
  if (!('times' in r)) throw new Error(r.diagnostics.map((d) => d.message).join('; '));
  return r;
};

/** An RC low-pass: 10 kΩ into 100 nF, τ = 1 ms, driven by a 10 V step with a 1 ns edge at 0.1 ms. */
const RC = `drive IN (in) 0 V
resistor R1 (in, out) 10 k
capacitor C1 (out, gnd) 100 nF`;
const TAU = 1e-3;
const T0 = 1e-4;
const EDGE = 1e-9;

/** Closed form of the RC charge after a step of V at t0 (the first-order linear ODE's solution), the ramp's nanosecond ignored. */
const charging = (t: number) => (t <= T0 ? 0 : 10 * (1 - Math.exp(-(t - T0 - EDGE / 2) / TAU)));

describe('simulation in time against closed forms', () => {
  it('an RC charge follows 10 V·(1 − e^(−t/RC)) within 0.1 % of the step at every point (first-order ODE, closed form)', () => {
    const r = run(RC, { IN: `points(0s 0V, ${T0}s 0V, ${T0 + EDGE}s 10V)` }, { stop: 6e-3 });
    const out = r.volts('out')!;
    let worst = 0;
    r.times.forEach((t, i) => {
      if (t > T0 + EDGE) worst = Math.max(worst, Math.abs(out[i]! - charging(t)));
    });
    expect(r.ok).toBe(true);
    expect(worst / 10).toBeLessThan(1e-3);
    expect(r.accepted).toBeLessThan(2000);
  });

  it('an RC-coupled step decays as V·e^(−t/RC) at the far side of a coupling capacitor (closed form)', () => {
    // 100 nF in series, 10 kΩ to ground: the output jumps with the input and decays.
    const r = run(`drive IN (in) 0 V\ncapacitor CC (in, out) 100 nF\nresistor R1 (out, gnd) 10 k`, { IN: `points(0s 0V, ${T0}s 0V, ${T0 + EDGE}s 10V)` }, { stop: 5e-3 });
    const out = r.volts('out')!;
    let worst = 0;
    r.times.forEach((t, i) => {
      if (t > T0 + 1e-6) worst = Math.max(worst, Math.abs(out[i]! - 10 * Math.exp(-(t - T0 - EDGE / 2) / TAU)));
    });
    expect(worst / 10).toBeLessThan(1e-3);
  });

  it('halving the step cuts the trapezoidal rule’s error about four times on a linear RC circuit (its known second order)', () => {
    const error = (h: number) => {
      const r = run(RC, { IN: `points(0s 0V, ${T0}s 0V, ${T0 + EDGE}s 10V)` }, { stop: 2e-3, fixedStep: h });
      const out = r.volts('out')!;
      return Math.abs(out[out.length - 1]! - charging(2e-3));
    };
    const e1 = error(1e-4);
    const e2 = error(5e-5);
    const e3 = error(2.5e-5);
    expect(e1 / e2).toBeGreaterThan(3.5);
    expect(e1 / e2).toBeLessThan(4.5);
    expect(e2 / e3).toBeGreaterThan(3.5);
    expect(e2 / e3).toBeLessThan(4.5);
    // Backward Euler, first order, halves its error instead.
    const be = (h: number) => {
      const r = run(RC, { IN: `points(0s 0V, ${T0}s 0V, ${T0 + EDGE}s 10V)` }, { stop: 2e-3, fixedStep: h, method: 'backward-euler' });
      const out = r.volts('out')!;
      return Math.abs(out[out.length - 1]! - charging(2e-3));
    };
    expect(be(1e-4) / be(5e-5)).toBeGreaterThan(1.8);
    expect(be(1e-4) / be(5e-5)).toBeLessThan(2.2);
  });

  it('charge is conserved on a node held only by capacitors, at every step (Kirchhoff: no current path off the island)', () => {
    // The island {mid, far}: 1 nF from the driven input, 2.2 nF to ground at mid, 10 kΩ to far, 470 pF to ground at far.
    const r = run(`drive IN (in) 0 V\ncapacitor CC (in, mid) 1 nF\ncapacitor C2 (mid, gnd) 2.2 nF\nresistor R (mid, far) 10 k\ncapacitor C3 (far, gnd) 470 pF`, { IN: 'clock(0V, 20V, period=40us, width=50%, edge=1us)' }, { stop: 200e-6 });
    const vin = r.volts('in')!;
    const mid = r.volts('mid')!;
    const far = r.volts('far')!;
    let worst = 0;
    r.times.forEach((_, i) => {
      const charge = 1e-9 * (mid[i]! - vin[i]!) + 2.2e-9 * mid[i]! + 470e-12 * far[i]!;
      worst = Math.max(worst, Math.abs(charge));
    });
    // 20 nC swing on CC; what is left is gmin's leak (1e-12 S) and Newton's tolerance.
    expect(worst).toBeLessThan(20e-9 * 1e-6);
    expect(Math.max(...mid)).toBeGreaterThan(1);
  });
});

describe('speed-up capacitors', () => {
  it('a compensated divider (R1·C1 = R2·C2) passes a step at once and flat, an uncompensated one with its time constant (the compensated attenuator, common practice, no source)', () => {
    // 470 kΩ with a speed-up capacitor, 390 kΩ with 56 pF to ground: compensated at C1 = 56 pF·390/470.
    const divider = (c1: string) => `drive IN (in) 0 V\nresistor R1 (in, out) 470 k\ncapacitor C1 (in, out) ${c1}\nresistor R2 (out, gnd) 390 k\ncapacitor C2 (out, gnd) 56 pF`;
    const final = (10 * 390) / 860;
    const step = { IN: `points(0s 0V, 1us 0V, 1.01us 10V)` };
    const compensated = run(divider(`${(56 * 390) / 470} pF`), step, { stop: 100e-6 });
    const out = compensated.volts('out')!;
    compensated.times.forEach((t, i) => {
      if (t > 1.02e-6) expect(Math.abs(out[i]! - final)).toBeLessThan(final * 1e-3);
    });
    // Without the speed-up capacitor the output rises with τ = (R1‖R2)·C2 = 11.9 µs.
    const slow = run(divider('0.001 pF'), step, { stop: 100e-6 });
    const tau = ((470e3 * 390e3) / 860e3) * 56e-12;
    const v = slow.volts('out')!;
    const i = slow.times.findIndex((t) => t >= 1.01e-6 + tau);
    expect(v[i]! / final).toBeGreaterThan(0.6);
    expect(v[i]! / final).toBeLessThan(0.66);
  });
});

describe('interelectrode capacitance in time', () => {
  it("a triode's grid charges with the Miller capacitance Cgk + Cgp·(1 + A) (J. M. Miller, NBS Scientific Paper 351, 1920)", () => {
    // A 12AU7 section with a 10 kΩ plate load, its grid fed from a bias source through 1 MΩ
    // and stepped 0.1 V: small enough that the stage stays linear.
    const text = `rail hv = 150 V
drive IN (in) -4 V
resistor RG (in, g) 1 M
resistor RL (hv, p) 10 k
section V1 "12AU7" (p, g, gnd)`;
    // The stage's gain A = −dVp/dVg from two DC solves (a central difference).
    const plateAt = (vg: number) => {
      const r = run(text, { IN: `${vg}V` }, { stop: 1e-9 });
      return r.volts('p')![0]!;
    };
    const gain = -(plateAt(-3.95) - plateAt(-4.05)) / 0.1;
    expect(gain).toBeGreaterThan(5);
    const r = run(text, { IN: 'points(0s -4V, 1us -4V, 1.001us -3.9V)' }, { stop: 300e-6 });
    const g = r.volts('g')!;
    // Time for the grid to cover 1 − 1/e of its step: one time constant of R·C_in.
    const target = -4 + 0.1 * (1 - Math.exp(-1));
    const i = g.findIndex((v) => v >= target);
    const t63 = r.times[i - 1]! + ((r.times[i]! - r.times[i - 1]!) * (target - g[i - 1]!)) / (g[i]! - g[i - 1]!) - 1.0005e-6;
    // The library's 12AU7 capacitances (RCA Receiving Tube Manual, from memory).
    const cgk = 1.6e-12;
    const cgp = 1.5e-12;
    const miller = 1e6 * (cgk + cgp * (1 + gain));
    if (process.env.SHOW_NUMBERS) console.log({ gain, t63, miller });
    expect(Math.abs(t63 / miller - 1)).toBeLessThan(0.03);
    // Without the grid–plate capacitance's multiplication the grid would be several times faster.
    expect(t63).toBeGreaterThan(3 * 1e6 * (cgk + cgp));
  });
});

describe('the sparse solver in time', () => {
  it('gives the dense reference solver’s waveforms on a toggle binary (mathjs lup/lusolve as the oracle)', () => {
    const text = toggleBinaryText('220 pF');
    const inputs = { CLK: 'clock(150V, 0V, period=20us, width=10%, edge=1%)' };
    const sparse = run(text, inputs, { stop: 15e-6, strayFarads: 10e-12 });
    const dense = run(text, inputs, { stop: 15e-6, strayFarads: 10e-12, linear: denseReference });
    expect(dense.times.length).toBe(sparse.times.length);
    for (const net of ['a', 'b', 's', 'ga', 'gb']) {
      const x = sparse.volts(net)!;
      const y = dense.volts(net)!;
      // Both stop Newton on the same residual and step tests, so they differ by rounding,
      // which a latch's loop gain amplifies while it flips: within 0.1 mV of a 150 V swing.
      let worst = 0;
      for (let i = 0; i < x.length; i++) worst = Math.max(worst, Math.abs(x[i]! - y[i]!));
      if (process.env.SHOW_NUMBERS) console.log(net, worst);
      expect(worst).toBeLessThan(1e-4);
    }
    // It flipped, so the comparison covered a switching event.
    expect(sparse.volts('a')![0]! < 75).not.toBe(sparse.volts('a')!.at(-1)! < 75);
  });
});

describe('the end of a run', () => {
  it('settles on the DC operating point of the state it ends in (at rest, every capacitor carries nothing: Kirchhoff with the capacitors open)', () => {
    const text = toggleBinaryText('220 pF');
    const r = run(text, { CLK: 'clock(150V, 0V, period=1ms, width=1%, count=1)' }, { stop: 2e-3, strayFarads: 10e-12 });
    const end = new Map([...r.circuit.terminalOf.keys()].map((n) => [n, r.volts(n)!.at(-1)!]));
    // The pulse flipped the binary: the DC solve started from where the run ends keeps that state.
    expect(end.get('a')!).toBeGreaterThan(75);
    const op = solveOperatingPoint(design(text), { start: end });
    if (!('nodes' in op)) throw new Error('no solve');
    if (process.env.SHOW_NUMBERS) console.log([...end].map(([n, v]) => [n, v - op.nodes.get(n)!]));
    // Within 0.1 mV: the trapezoidal rule's ringing of the trigger node's fast mode (10 ns
    // behind the 1 kΩ source) is damped, not carried to the end (it was 2 mV undamped).
    for (const [net, v] of end) expect(Math.abs(op.nodes.get(net)! - v)).toBeLessThan(1e-4);
  });
});

describe('drives in time', () => {
  it('refuses a waveform on a drive that shares its net with a fixed voltage, rather than moving ground', () => {
    const r = simulate(design(`drive IN (gnd) 0 V\nresistor R (gnd, x) 1 k\nrail hv = 10 V\nresistor R2 (hv, x) 1 k`), { stop: 1e-6, inputs: new Map([['IN', wave('points(0s 0V, 1us 5V)')]]) });
    expect('diagnostics' in r && !('times' in r) ? r.diagnostics.map((d) => d.message).join() : '').toMatch(/shares its net/);
  });
});

