import { describe, expect, it } from 'vitest';
import { DESIGN_SCHEMA, designFromJson, designToJson, loadDesign } from '../../lib/index.js';
import { codes, demoDesigns, load, memoryLoader, netsFiles, where, withoutSpans } from '../helpers.js';

/** The example of the JSON design form, as the project's issue tracker states it. */
const ISSUE_EXAMPLE = `{ "schema": "tubemargin.design/1", "title": "…",
  "rails":  [ {"name": "bp", "volts": 24, "tol": 0.05} ],
  "models": [ {"name": "MT", "kind": "koren-triode", "mu": 21.5, "ex": 1.3, "kg1": 1180,
               "kp": 84, "kvb": 300, "rgi": 2000, "vgamma": 0, "spread": 0.25} ],
  "parts":  [ {"type": "resistor", "name": "RL1", "a": "q", "b": "bp", "ohms": 100000, "tol": 0.05},
              {"type": "tube", "name": "V1", "model": "MT", "plate": "q", "grid": "g", "cathode": "gnd"},
              {"type": "switch", "name": "S1", "a": "x", "b": "bp", "closed": false} ] }`;

describe('the JSON design form tubemargin.design/1', () => {
  it('reads the documented example, filling defaults, and then flags its floating grid', () => {
    const read = designFromJson(ISSUE_EXAMPLE, 'ex.json');
    expect(read.diagnostics).toEqual([]);
    expect(read.value?.parts.map((p) => p.name)).toEqual(['RL1', 'V1', 'S1']);
    expect(read.value?.parts[2]).toMatchObject({ closed: false, momentary: false });
    const loaded = loadDesign('ex.json', ISSUE_EXAMPLE);
    expect(codes(loaded.diagnostics)).toEqual(['grid-no-dc-path', 'net-single-connection', 'net-single-connection', 'node-no-dc-path']);
  });

  for (const file of demoDesigns()) {
    it(`round-trips ${file}: text → model → JSON → model gives the same model`, () => {
      const files = netsFiles();
      const fromText = loadDesign(file, files[file]!, { loader: memoryLoader(files), checkModel: true });
      expect(fromText.ok).toBe(true);
      const json = JSON.stringify(designToJson(fromText.design!));
      const fromJson = loadDesign('again.json', json, { checkModel: true });
      expect(fromJson.diagnostics).toEqual(fromText.diagnostics.filter(() => false));
      expect(withoutSpans(fromJson.design)).toEqual(withoutSpans(fromText.design));
      expect(JSON.stringify(designToJson(fromJson.design!))).toBe(json);
    });
  }

  it('round-trips a speed-up capacitor and the stray setting: text → model → JSON → model', () => {
    const text = `rail bp = 24 V
rail bias = -12 V
defaults { stray = 15 pF }
stage q { tube "12AU7"; load 33 k to bp; input a series 220 k speedup 47 pF pulldown 220 k to bias }
resistor RA (a, bias) 100 k`;
    const fromText = loadDesign('s.tube', text, { checkModel: true });
    expect(fromText.ok).toBe(true);
    const json = JSON.stringify(designToJson(fromText.design!));
    const fromJson = loadDesign('again.json', json, { checkModel: true });
    expect(withoutSpans(fromJson.design)).toEqual(withoutSpans(fromText.design));
    expect(fromJson.design!.settings.strayFarads).toBeCloseTo(15e-12, 20);
    expect(fromJson.design!.parts.find((p) => p.name === 'q.c1')).toMatchObject({ type: 'capacitor', role: 'speedup', stage: 'q' });
  });

  it('points a JSON syntax error at the character', () => {
    const r = designFromJson('{\n  "schema": "tubemargin.design/1",\n  "parts": [,]\n}', 'bad.json');
    expect(where(r.diagnostics)).toEqual(['3:13-3:14 json-syntax']);
  });

  it('points schema errors at the value at fault, and reports all of them', () => {
    const text = `{"schema": "${DESIGN_SCHEMA}", "parts": [
  {"type": "resistor", "name": "R1", "a": "x", "b": "gnd", "ohms": "10k"},
  {"type": "resistr", "name": "R2"},
  {"type": "capacitor", "name": "C1", "a": "x", "b": "gnd"}
]}`;
    const r = designFromJson(text, 'bad.json');
    expect(where(r.diagnostics)).toEqual(['2:68-2:73 json-schema', '3:12-3:21 json-schema', '4:3-4:60 json-schema']);
    expect(r.diagnostics.map((d) => d.message)).toEqual([
      '$.parts[0].ohms must be a number, not the string "10k"',
      '$.parts[1].type must be one of resistor, tube, diode, switch, capacitor, drive',
      '$.parts[2] lacks the field "farads" (a number)',
    ]);
    expect(r.diagnostics[1]?.notes).toEqual(["did you mean 'resistor'?"]);
  });

  it('checks meaning as the text form does: positive values, tolerances, names, models', () => {
    const text = `{"schema": "${DESIGN_SCHEMA}",
 "rails": [{"name": "gnd", "volts": 1}],
 "parts": [
  {"type": "resistor", "name": "R1", "a": "x", "b": "gnd", "ohms": -5},
  {"type": "resistor", "name": "R1", "a": "x", "b": "gnd", "ohms": 5},
  {"type": "resistor", "name": "R3", "a": "x", "b": "gnd", "ohms": 5, "tol": 0.7},
  {"type": "tube", "name": "V1", "model": "12AU8", "plate": "x", "grid": "x", "cathode": "gnd"}
]}`;
    const r = designFromJson(text, 'bad.json');
    expect(codes(r.diagnostics)).toEqual(['reserved-name', 'value-not-positive', 'duplicate-name', 'tolerance-range', 'unknown-type']);
    expect(r.diagnostics[1]?.span?.start).toMatchObject({ line: 4, col: 68 });
    expect(r.diagnostics[4]?.notes).toEqual(["did you mean '12AU7'?"]);
  });

  it('warns of an unknown field with a suggestion, and refuses another tubemargin schema', () => {
    const r = designFromJson(`{"schema": "${DESIGN_SCHEMA}", "parts": [], "rail": []}`, 'w.json');
    expect(codes(r.diagnostics)).toEqual(['unknown-field']);
    expect(r.diagnostics[0]?.notes).toEqual(["did you mean 'rails'?"]);
    expect(codes(designFromJson('{"schema": "tubemargin.report/1"}', 'r.json').diagnostics)).toEqual(['schema-version']);
  });

  it('takes a tube model by library designation alone', () => {
    const r = designFromJson(`{"schema": "${DESIGN_SCHEMA}", "models": [{"library": "12AX7", "spread": 0.3}], "parts": [
      {"type": "tube", "name": "V1", "model": "12AX7", "plate": "p", "grid": "g", "cathode": "gnd"},
      {"type": "tube", "name": "V2", "model": "6DJ8", "plate": "p", "grid": "g", "cathode": "gnd"}]}`, 'l.json');
    expect(r.diagnostics).toEqual([]);
    expect(r.value?.models.map((m) => [m.name, m.kind, m.spread])).toEqual([
      ['12AX7', 'koren-triode', 0.3],
      ['6DJ8', 'koren-triode', 0.25],
    ]);
  });

  it('is what show --json prints for a text design with every field explicit', () => {
    const d = load('rail bp = 24 V\nresistor R (bp, x) 1 k\nresistor R2 (x, gnd) 1 k');
    expect(designToJson(d.design!)).toEqual({
      schema: DESIGN_SCHEMA,
      title: '',
      requiredMargin: 1,
      defaults: { tol: 0.05, watts: 0.5, strayFarads: 1e-11 },
      rails: [{ name: 'bp', volts: 24, tol: 0, sourceOhms: 0 }],
      models: [],
      parts: [
        { type: 'resistor', name: 'R', a: 'bp', b: 'x', ohms: 1000, tol: 0.05, watts: 0.5 },
        { type: 'resistor', name: 'R2', a: 'x', b: 'gnd', ohms: 1000, tol: 0.05, watts: 0.5 },
      ],
    });
  });
});
