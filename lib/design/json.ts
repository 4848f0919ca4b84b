import { error, type Checked, type Diagnostic } from '../source/diagnostic.js';
import type { SourceSpan } from '../source/span.js';
import { didYouMean } from '../source/suggest.js';
import { DEFAULT_SPREAD, GRID_DEFAULTS, GRID_RANGES, MODEL_KINDS, MODEL_KIND_NAMES } from '../models/kinds.js';
import { TUBE_LIBRARY, findLibraryEntry } from '../models/library.js';
import { checkSign, checkTolerance, rangeOfDimension } from './evaluate.js';
import { FARADS, OHMS, VOLTS, WATTS, type Dimension } from '../netlist/units.js';
import { parseJsonText } from './jsonText.js';
import { CAPACITOR_TOL, DEFAULT_SETTINGS, DIODE_DEFAULTS, DIODE_RANGES, GROUND, partPins, type Design, type Part, type Rail, type TubeModel } from './model.js';
import { SPANS, array, bool, literal, num, object, optional, str, variants, type Infer, type WithSpans } from './schema.js';

/** The schema tag of the JSON design form. */
export const DESIGN_SCHEMA = 'tubemargin.design/1';

const stagePart = { stage: optional(str()), role: optional(literal('load', 'section', 'series', 'pulldown', 'screen', 'speedup')) };

/** The JSON design form `tubemargin.design/1`, declared once; `DesignJson` is derived from it. */
export const designJsonSchema = object({
  schema: literal(DESIGN_SCHEMA),
  title: optional(str()),
  requiredMargin: optional(num()),
  defaults: optional(object({ tol: optional(num()), watts: optional(num()), strayFarads: optional(num()) })),
  rails: optional(array(object({ name: str(), volts: num(), tol: optional(num()), sourceOhms: optional(num()) }))),
  models: optional(
    array(
      object({
        name: optional(str()),
        kind: optional(literal(...MODEL_KIND_NAMES)),
        library: optional(str()),
        mu: optional(num()),
        ex: optional(num()),
        kg1: optional(num()),
        kg2: optional(num()),
        kp: optional(num()),
        kvb: optional(num()),
        k: optional(num()),
        rgi: optional(num()),
        vgamma: optional(num()),
        spread: optional(num()),
      }),
    ),
  ),
  parts: array(
    variants('type', {
      resistor: object({ type: literal('resistor'), name: str(), a: str(), b: str(), ohms: num(), tol: optional(num()), watts: optional(num()), ...stagePart }),
      tube: object({
        type: literal('tube'),
        name: str(),
        model: str(),
        plate: str(),
        grid: str(),
        cathode: str(),
        screen: optional(str()),
        suppressor: optional(str()),
        ...stagePart,
      }),
      diode: object({ type: literal('diode'), name: str(), anode: str(), cathode: str(), is: optional(num()), n: optional(num()), rs: optional(num()) }),
      switch: object({ type: literal('switch'), name: str(), a: str(), b: str(), closed: optional(bool()), momentary: optional(bool()) }),
      capacitor: object({ type: literal('capacitor'), name: str(), a: str(), b: str(), farads: num(), tol: optional(num()), ...stagePart }),
      drive: object({ type: literal('drive'), name: str(), node: str(), volts: num(), tol: optional(num()), sourceOhms: optional(num()) }),
    }),
  ),
});

export type DesignJson = Infer<typeof designJsonSchema>;

/**
 * The JSON form of a flat design: every field explicit, no spans, keys in a stable order, so
 * the output of `show --json` reads back to an equal design.
 */
export function designToJson(design: Design): DesignJson {
  const rails = design.rails.map((r) => ({ name: r.name, volts: r.volts, tol: r.tol, sourceOhms: r.sourceOhms }));
  const models = design.models.map((m) => {
    const fields = m as unknown as Record<string, unknown>;
    const out: Record<string, unknown> = { name: m.name, kind: m.kind };
    if (m.library !== undefined) out.library = m.library;
    for (const p of MODEL_KINDS[m.kind].parameters) out[p.name] = fields[p.name];
    out.rgi = m.rgi;
    out.vgamma = m.vgamma;
    out.spread = m.spread;
    return out;
  });
  const parts = design.parts.map((p) => {
    const { span: _span, ...rest } = p;
    if (rest.type === 'tube') delete rest.screenSpan;
    return rest;
  });
  return {
    schema: DESIGN_SCHEMA,
    title: design.title,
    requiredMargin: design.settings.requiredMargin,
    defaults: { tol: design.settings.resistorTol, watts: design.settings.resistorWatts, strayFarads: design.settings.strayFarads },
    rails,
    models,
    parts,
  } as DesignJson;
}

/**
 * Reads a JSON design. Problems of form (syntax, wrong types, missing fields) and of meaning
 * (non-positive values, tolerances outside 0–50 %, duplicate names, unknown models) are all
 * reported with the span of the value at fault. Missing tolerances and ratings take the
 * design's defaults; a model may be given by `library` designation alone, and a tube's
 * `model` may name a library entry directly.
 */
export function designFromJson(text: string, file: string): Checked<Design | undefined> {
  const parsed = parseJsonText(text, file);
  const diagnostics: Diagnostic[] = [...parsed.diagnostics];
  if (!parsed.value) return { value: undefined, diagnostics };
  const root = parsed.value;
  if (root.type === 'object') {
    const tag = root.entries.find((e) => e.key === 'schema')?.value;
    if (tag?.type === 'string' && tag.value !== DESIGN_SCHEMA && tag.value.startsWith('tubemargin.')) {
      diagnostics.push(error('schema-version', `this file is "${tag.value}"; a design file is "${DESIGN_SCHEMA}"`, tag.span));
      return { value: undefined, diagnostics };
    }
  }
  const json = designJsonSchema.read(root, '$', diagnostics);
  if (!json) return { value: undefined, diagnostics };
  return { value: new JsonReader(diagnostics).read(json), diagnostics };
}

function spanOf(x: unknown, key = ''): SourceSpan | undefined {
  return (x as WithSpans<object>)[SPANS]?.[key];
}

class JsonReader {
  constructor(private readonly diagnostics: Diagnostic[]) {}

  read(json: DesignJson): Design {
    const d = this.diagnostics;
    const settings = { ...DEFAULT_SETTINGS };
    if (json.requiredMargin !== undefined) settings.requiredMargin = checkSign(json.requiredMargin, spanOf(json, 'requiredMargin'), { what: 'requiredMargin', sign: 'positive', range: rangeOfDimension(VOLTS) }, d) ?? settings.requiredMargin;
    if (json.defaults?.tol !== undefined) settings.resistorTol = checkTolerance(json.defaults.tol, spanOf(json.defaults, 'tol'), 'defaults.tol', d) ?? settings.resistorTol;
    if (json.defaults?.strayFarads !== undefined) settings.strayFarads = checkSign(json.defaults.strayFarads, spanOf(json.defaults, 'strayFarads'), { what: 'defaults.strayFarads', sign: 'non-negative', range: rangeOfDimension(FARADS) }, d) ?? settings.strayFarads;
    if (json.defaults?.watts !== undefined) settings.resistorWatts = checkSign(json.defaults.watts, spanOf(json.defaults, 'watts'), { what: 'defaults.watts', sign: 'positive', range: rangeOfDimension(WATTS) }, d) ?? settings.resistorWatts;

    const rails: Rail[] = [];
    for (const r of json.rails ?? []) {
      const span = spanOf(r);
      if (r.name === GROUND) d.push(error('reserved-name', `'${GROUND}' is the 0 V rail and always exists`, spanOf(r, 'name')));
      else if (rails.some((x) => x.name === r.name)) d.push(error('duplicate-name', `rail '${r.name}' is defined twice`, spanOf(r, 'name')));
      else {
        const volts = checkSign(r.volts, spanOf(r, 'volts'), { what: 'a rail voltage', sign: 'any', range: rangeOfDimension(VOLTS) }, d) ?? 0;
        const tol = r.tol === undefined ? 0 : (checkTolerance(r.tol, spanOf(r, 'tol'), 'a rail tolerance', d) ?? 0);
        const sourceOhms = r.sourceOhms === undefined ? 0 : (checkSign(r.sourceOhms, spanOf(r, 'sourceOhms'), { what: 'a source resistance', sign: 'non-negative', range: rangeOfDimension(OHMS) }, d) ?? 0);
        rails.push({ name: r.name, volts, tol, sourceOhms, span });
      }
    }

    const models = new Map<string, TubeModel>();
    for (const m of json.models ?? []) {
      const model = this.readModel(m);
      if (!model) continue;
      if (models.has(model.name)) d.push(error('duplicate-name', `model '${model.name}' is defined twice`, spanOf(m, 'name') ?? spanOf(m)));
      else models.set(model.name, model);
    }

    const parts: Part[] = [];
    const names = new Set<string>();
    for (const p of json.parts) {
      const span = spanOf(p);
      if (names.has(p.name)) {
        d.push(error('duplicate-name', `part '${p.name}' is defined twice`, spanOf(p, 'name')));
        continue;
      }
      names.add(p.name);
      const part = this.readPart(p, settings, span);
      if (!part) continue;
      if (part.type === 'tube' && !models.has(part.model)) {
        const entry = findLibraryEntry(part.model);
        if (entry) models.set(part.model, { ...entry.model, name: part.model, library: part.model });
        else {
          d.push(error('unknown-type', `part '${p.name}' uses unknown model '${part.model}'`, spanOf(p, 'model'), didYouMean(part.model, [...models.keys(), ...TUBE_LIBRARY.map((e) => e.designation)])));
          continue;
        }
      }
      for (const [pin, net] of partPins(part)) if (net === '') d.push(error('json-schema', `part '${p.name}': ${pin} names no net`, spanOf(p, pin)));
      parts.push(part);
    }
    return { title: json.title ?? '', settings, rails, models: [...models.values()], parts };
  }

  private readModel(m: NonNullable<DesignJson['models']>[number]): TubeModel | undefined {
    const d = this.diagnostics;
    const span = spanOf(m);
    let base: Record<string, unknown>;
    if (m.library !== undefined) {
      const entry = findLibraryEntry(m.library);
      if (!entry) {
        d.push(error('unknown-type', `"${m.library}" is not in the tube library`, spanOf(m, 'library'), didYouMean(m.library, TUBE_LIBRARY.map((e) => e.designation))));
        return undefined;
      }
      if (m.kind !== undefined && m.kind !== entry.model.kind) {
        d.push(error('json-schema', `"${m.library}" is a ${entry.model.kind} model, not ${m.kind}`, spanOf(m, 'kind')));
        return undefined;
      }
      base = { ...entry.model, library: m.library };
    } else if (m.kind !== undefined) {
      base = { kind: m.kind, ...GRID_DEFAULTS, spread: DEFAULT_SPREAD };
    } else {
      d.push(error('json-schema', 'a model needs a "kind" or a "library" designation', span));
      return undefined;
    }
    const name = m.name ?? m.library;
    if (name === undefined) {
      d.push(error('json-schema', 'a model needs a "name"', span));
      return undefined;
    }
    const kind = base.kind as TubeModel['kind'];
    const kindParams = MODEL_KINDS[kind].parameters;
    const params = kindParams.map((p) => p.name);
    const out: Record<string, unknown> = { ...base, name, span };
    let ok = true;
    const fields = m as unknown as Record<string, unknown>;
    for (const key of ['mu', 'ex', 'kg1', 'kg2', 'kp', 'kvb', 'k']) {
      const v = fields[key];
      if (v === undefined) continue;
      if (!params.includes(key)) {
        d.push(error('unknown-field', `a ${kind} model has no parameter "${key}"`, spanOf(m, key), [`parameters: ${params.join(', ')}`]));
        ok = false;
        continue;
      }
      const range = kindParams.find((p) => p.name === key)!.range;
      const x = checkSign(v as number, spanOf(m, key), { what: key, sign: 'positive', range }, d);
      if (x === undefined) ok = false;
      else out[key] = x;
    }
    if (m.rgi !== undefined) out.rgi = checkSign(m.rgi, spanOf(m, 'rgi'), { what: 'rgi', sign: 'positive', range: GRID_RANGES.rgi }, d) ?? (ok = false);
    if (m.vgamma !== undefined) out.vgamma = checkSign(m.vgamma, spanOf(m, 'vgamma'), { what: 'vgamma', sign: 'any', range: GRID_RANGES.vgamma }, d) ?? (ok = false);
    if (m.spread !== undefined) out.spread = checkTolerance(m.spread, spanOf(m, 'spread'), 'a tube spread', d) ?? (ok = false);
    const missing = params.filter((p) => out[p] === undefined);
    if (missing.length > 0) {
      d.push(error('missing-field', `model '${name}' lacks ${missing.join(', ')}`, span));
      ok = false;
    }
    return ok ? (out as unknown as TubeModel) : undefined;
  }

  private readPart(p: DesignJson['parts'][number], settings: Design['settings'], span: SourceSpan | undefined): Part | undefined {
    const d = this.diagnostics;
    const positive = (v: number, key: string, what: string, dim: Dimension) => checkSign(v, spanOf(p, key), { what, sign: 'positive', range: rangeOfDimension(dim) }, d);
    const tol = (v: number | undefined, key: string, fallback: number) => (v === undefined ? fallback : checkTolerance(v, spanOf(p, key), 'a tolerance', d));
    const { [SPANS]: _spans, ...rest } = p as WithSpans<typeof p>;
    switch (p.type) {
      case 'resistor': {
        const ohms = positive(p.ohms, 'ohms', 'a resistance', OHMS);
        const t = tol(p.tol, 'tol', settings.resistorTol);
        const watts = p.watts === undefined ? settings.resistorWatts : positive(p.watts, 'watts', 'a power rating', WATTS);
        if (ohms === undefined || t === undefined || watts === undefined) return undefined;
        return { ...(rest as typeof p), ohms, tol: t, watts, span };
      }
      case 'capacitor': {
        const farads = positive(p.farads, 'farads', 'a capacitance', FARADS);
        const t = tol(p.tol, 'tol', CAPACITOR_TOL);
        if (farads === undefined || t === undefined) return undefined;
        return { ...(rest as typeof p), farads, tol: t, span };
      }
      case 'drive': {
        const volts = checkSign(p.volts, spanOf(p, 'volts'), { what: 'a drive level', sign: 'any', range: rangeOfDimension(VOLTS) }, d);
        const t = tol(p.tol, 'tol', 0);
        const sourceOhms = p.sourceOhms === undefined ? 0 : checkSign(p.sourceOhms, spanOf(p, 'sourceOhms'), { what: 'a source resistance', sign: 'non-negative', range: rangeOfDimension(OHMS) }, d);
        if (volts === undefined || t === undefined || sourceOhms === undefined) return undefined;
        return { ...(rest as typeof p), volts, tol: t, sourceOhms, span };
      }
      case 'diode': {
        const is = p.is === undefined ? DIODE_DEFAULTS.is : checkSign(p.is, spanOf(p, 'is'), { what: "the diode's saturation current 'is'", sign: 'positive', range: DIODE_RANGES.is }, d);
        const n = p.n === undefined ? DIODE_DEFAULTS.n : checkSign(p.n, spanOf(p, 'n'), { what: "the diode's emission coefficient 'n'", sign: 'positive', range: DIODE_RANGES.n }, d);
        const rs = p.rs === undefined ? DIODE_DEFAULTS.rs : checkSign(p.rs, spanOf(p, 'rs'), { what: "the diode's series resistance 'rs'", sign: 'non-negative', range: DIODE_RANGES.rs }, d);
        if (is === undefined || n === undefined || rs === undefined) return undefined;
        return { ...(rest as typeof p), is, n, rs, span };
      }
      case 'switch':
        return { ...(rest as typeof p), closed: p.closed ?? false, momentary: p.momentary ?? false, span };
      case 'tube':
        return { ...(rest as typeof p), span };
    }
  }
}
