import type { Assignment, Expr, Name, NetRef, PartKind, PartStmt, PinArg, StageItem, Statement, TypeRef, ValueSpec } from '../netlist/ast.js';
import { AMPS, DIMENSIONLESS, FARADS, OHMS, PERVEANCE, VOLTS, WATTS } from '../netlist/units.js';
import { error, warning, type Checked, type Diagnostic } from '../source/diagnostic.js';
import { formatLocation, type SourceSpan } from '../source/span.js';
import { didYouMean } from '../source/suggest.js';
import { DEFAULT_SPREAD, GRID_DEFAULTS, GRID_RANGES, MODEL_KINDS, MODEL_KIND_NAMES, isModelKind } from '../models/kinds.js';
import { TUBE_LIBRARY, findLibraryEntry } from '../models/library.js';
import { evaluate, evaluateAs, evaluateInteger, evaluateTolerance, ValueScope, type Quantity } from './evaluate.js';
import { CAPACITOR_TOL, DEFAULT_SETTINGS, DIODE_DEFAULTS, DIODE_RANGES, GROUND, type Design, type DesignSettings, type Part, type Rail, type StageRole, type TubeModel, type TubeSection } from './model.js';

/** How deeply block instances may nest inside each other. */
export const MAX_BLOCK_DEPTH = 32;
/** Most elements one instance array may have. */
export const MAX_ARRAY_LENGTH = 100_000;
/** Most parts one expanded design may have. */
export const MAX_PARTS = 2_000_000;

/** Pins of each raw part, in positional order, and how many must be connected. */
const PINS: Record<PartKind, { names: string[]; required: number }> = {
  resistor: { names: ['a', 'b'], required: 2 },
  capacitor: { names: ['a', 'b'], required: 2 },
  switch: { names: ['a', 'b'], required: 2 },
  button: { names: ['a', 'b'], required: 2 },
  diode: { names: ['anode', 'cathode'], required: 2 },
  section: { names: ['plate', 'grid', 'cathode', 'screen', 'suppressor'], required: 3 },
  drive: { names: ['node'], required: 1 },
};

type BlockStmt = Extract<Statement, { kind: 'block' }>;
type TypeStmt = Extract<Statement, { kind: 'type' }>;

interface Scope {
  /** Prefix of every name made in this scope: '' at the top, 'bit[3]/' inside an instance. */
  prefix: string;
  /** Block ports: local name → the outer net it is connected to. */
  ports: Map<string, string>;
  values: ValueScope;
  /** Blocks being expanded, outermost first, to find instantiation cycles. */
  stack: string[];
}

interface ResolvedNet {
  local: string;
  global: string;
}

/**
 * Expands the top-level statements of a design (includes already spliced in) into the
 * typed flat model: evaluates every value, applies defaults, resolves tube types against
 * the design and the library, expands stages into their parts and blocks into their
 * instances. Reports every problem it finds; the model it returns holds every part that
 * could be built.
 */
export function expandDesign(statements: Statement[]): Checked<Design> {
  return new Expander().run(statements);
}

class Expander {
  private readonly diagnostics: Diagnostic[] = [];
  private readonly globals = new ValueScope();
  private readonly settings: DesignSettings = { ...DEFAULT_SETTINGS };
  private title = '';
  private titleSpan: SourceSpan | undefined;
  private defaultTube: TypeRef | undefined;
  private readonly rails = new Map<string, Rail>();
  private readonly typeStmts = new Map<string, TypeStmt>();
  private readonly models = new Map<string, TubeModel>();
  /** Types being resolved, to catch `type A like B` / `type B like A`. */
  private readonly resolving = new Set<string>();
  private readonly failedTypes = new Set<string>();
  private readonly blocks = new Map<string, BlockStmt>();
  private readonly parts: Part[] = [];
  private tooLarge = false;

  run(statements: Statement[]): Checked<Design> {
    const body: Statement[] = [];
    for (const st of statements) this.declare(st, body);
    for (const block of this.blocks.values()) this.checkPortsUsed(block);
    this.expandScope(body, { prefix: '', ports: new Map(), values: this.globals, stack: [] });
    for (const name of this.typeStmts.keys()) this.resolveTypeName(name);
    const design: Design = {
      title: this.title,
      settings: this.settings,
      rails: [...this.rails.values()],
      models: [...this.models.values()],
      parts: this.parts,
    };
    return { value: design, diagnostics: dedupe(this.diagnostics) };
  }

  // ---- the top level ---------------------------------------------------------------------

  private declare(st: Statement, body: Statement[]): void {
    const d = this.diagnostics;
    switch (st.kind) {
      case 'title':
        if (this.titleSpan) d.push(error('duplicate-name', 'the design has a title already', st.span, [`first title at ${formatLocation(this.titleSpan)}`]));
        this.title = st.text;
        this.titleSpan = st.span;
        return;
      case 'let':
        this.defineValue(this.globals, st.name, st.value, this.globals);
        return;
      case 'defaults':
        return this.applyDefaults(st.fields, st.tube);
      case 'rail':
        return this.declareRail(st);
      case 'type':
        if (this.typeStmts.has(st.name.text)) {
          d.push(error('duplicate-name', `type '${st.name.text}' is defined twice`, st.name.span, [`first defined at ${formatLocation(this.typeStmts.get(st.name.text)!.name.span)}`]));
        } else this.typeStmts.set(st.name.text, st);
        return;
      case 'block':
        if (this.blocks.has(st.name.text)) {
          d.push(error('duplicate-name', `block '${st.name.text}' is defined twice`, st.name.span, [`first defined at ${formatLocation(this.blocks.get(st.name.text)!.name.span)}`]));
        } else this.blocks.set(st.name.text, st);
        return;
      case 'param':
      case 'include':
        return; // the parser and the include collector report these
      default:
        body.push(st);
    }
  }

  private defineValue(target: ValueScope, name: Name, expr: Expr, evalIn: ValueScope, override?: Quantity): void {
    if (target.hasOwn(name.text)) {
      this.diagnostics.push(error('duplicate-name', `value '${name.text}' is defined twice`, name.span));
      return;
    }
    const q = override ?? evaluate(expr, evalIn, this.diagnostics);
    if (q) target.define(name.text, q);
  }

  private applyDefaults(fields: Assignment[], tube: TypeRef | undefined): void {
    if (tube) this.defaultTube = tube;
    const known = ['tolerance', 'rating', 'margin', 'stray', 'tube'];
    for (const f of fields) {
      switch (f.name.text) {
        case 'tolerance': {
          const v = evaluateTolerance(f.value, this.globals, 'the default resistor tolerance', this.diagnostics);
          if (v !== undefined) this.settings.resistorTol = v;
          break;
        }
        case 'rating': {
          const v = evaluateAs(f.value, this.globals, { what: 'the default resistor rating', dim: WATTS, sign: 'positive' }, this.diagnostics);
          if (v !== undefined) this.settings.resistorWatts = v;
          break;
        }
        case 'margin': {
          const v = evaluateAs(f.value, this.globals, { what: 'the required noise margin', dim: VOLTS, sign: 'positive' }, this.diagnostics);
          if (v !== undefined) this.settings.requiredMargin = v;
          break;
        }
        case 'stray': {
          const v = evaluateAs(f.value, this.globals, { what: 'the stray capacitance of a net', dim: FARADS, sign: 'non-negative' }, this.diagnostics);
          if (v !== undefined) this.settings.strayFarads = v;
          break;
        }
        default:
          this.diagnostics.push(error('unknown-field', `defaults has no setting '${f.name.text}'`, f.name.span, didYouMean(f.name.text, known)));
      }
    }
  }

  private declareRail(st: Extract<Statement, { kind: 'rail' }>): void {
    const d = this.diagnostics;
    const name = st.name.text;
    if (name === GROUND) {
      d.push(error('reserved-name', `'${GROUND}' is the 0 V rail and always exists; it cannot be redefined`, st.name.span));
      return;
    }
    if (this.rails.has(name)) {
      d.push(error('duplicate-name', `rail '${name}' is defined twice`, st.name.span, [`first defined at ${formatLocation(this.rails.get(name)!.span!)}`]));
      return;
    }
    const volts = evaluateAs(st.volts, this.globals, { what: 'a rail voltage', dim: VOLTS, sign: 'any' }, d);
    const tol = st.tol ? evaluateTolerance(st.tol, this.globals, 'a rail tolerance', d) : 0;
    const source = st.source ? evaluateAs(st.source, this.globals, { what: 'a source resistance', dim: OHMS, sign: 'positive' }, d) : 0;
    this.rails.set(name, { name, volts: volts ?? 0, tol: tol ?? 0, sourceOhms: source ?? 0, span: st.span });
  }

  // ---- tube types ------------------------------------------------------------------------

  /** The model name a stage or section uses for `ref`, adding the model to the design; undefined if unknown. */
  private resolveTypeRef(ref: TypeRef): string | undefined {
    if (ref.quoted) {
      const designation = ref.name.text;
      if (this.models.has(designation)) return designation;
      const entry = findLibraryEntry(designation);
      if (!entry) {
        this.diagnostics.push(
          error('unknown-type', `"${designation}" is not in the tube library`, ref.name.span, [
            ...didYouMean(designation, TUBE_LIBRARY.map((e) => e.designation)),
            "'tubemargin tubes' lists the library; a type of your own is written 'type NAME kind { … }'",
          ]),
        );
        return undefined;
      }
      this.models.set(designation, { ...entry.model, name: designation, library: designation });
      return designation;
    }
    return this.resolveTypeName(ref.name.text, ref.name.span);
  }

  private resolveTypeName(name: string, usedAt?: SourceSpan): string | undefined {
    if (this.models.has(name)) return name;
    if (this.failedTypes.has(name)) return undefined;
    const st = this.typeStmts.get(name);
    if (!st) {
      if (usedAt) {
        const notes = findLibraryEntry(name) ? [`library types go in quotes: "${name}"`] : didYouMean(name, this.typeStmts.keys());
        this.diagnostics.push(error('unknown-type', `unknown tube type '${name}'`, usedAt, notes));
      }
      return undefined;
    }
    if (this.resolving.has(name)) {
      this.diagnostics.push(error('block-cycle', `type '${name}' is defined in terms of itself`, st.name.span));
      this.failedTypes.add(name);
      return undefined;
    }
    this.resolving.add(name);
    const model = this.buildType(st);
    this.resolving.delete(name);
    if (!model) {
      this.failedTypes.add(name);
      return undefined;
    }
    this.models.set(name, model);
    return name;
  }

  private buildType(st: TypeStmt): TubeModel | undefined {
    const d = this.diagnostics;
    let base: Record<string, unknown>;
    if (st.base.kind === 'kind') {
      const kind = st.base.name.text;
      if (!isModelKind(kind)) {
        d.push(error('unknown-kind', `unknown model kind '${kind}'`, st.base.name.span, [...didYouMean(kind, MODEL_KIND_NAMES), `kinds: ${MODEL_KIND_NAMES.join(', ')}`]));
        return undefined;
      }
      base = { kind, ...GRID_DEFAULTS, spread: DEFAULT_SPREAD };
    } else {
      const from = st.base.type;
      const entry = from.quoted ? findLibraryEntry(from.name.text) : undefined;
      if (entry) base = { ...entry.model, library: entry.designation };
      else {
        const baseName = this.resolveTypeRef(from);
        if (baseName === undefined) return undefined;
        const { name: _n, span: _s, ...rest } = this.models.get(baseName)!;
        base = rest;
      }
    }
    const kind = base.kind as TubeModel['kind'];
    const params = MODEL_KINDS[kind].parameters;
    const allowed = [...params.map((p) => p.name), 'rgi', 'vgamma', 'spread'];
    const model: Record<string, unknown> = { ...base, name: st.name.text, span: st.span };
    let ok = true;
    const seen = new Set<string>();
    for (const f of st.fields) {
      const field = f.name.text;
      if (seen.has(field)) {
        d.push(error('duplicate-name', `'${field}' is given twice`, f.name.span));
        continue;
      }
      seen.add(field);
      let v: number | undefined;
      const param = params.find((p) => p.name === field);
      if (param) {
        v = evaluateAs(f.value, this.globals, { what: `${field} (${param.meaning})`, dim: param.unit === 'perveance' ? PERVEANCE : DIMENSIONLESS, sign: 'positive', range: param.range }, d);
      } else if (field === 'rgi') {
        v = evaluateAs(f.value, this.globals, { what: 'the grid input resistance rgi', dim: OHMS, sign: 'positive', range: GRID_RANGES.rgi }, d);
      } else if (field === 'vgamma') {
        v = evaluateAs(f.value, this.globals, { what: 'the grid-current onset vgamma', dim: VOLTS, sign: 'any', range: GRID_RANGES.vgamma }, d);
      } else if (field === 'spread') {
        v = evaluateTolerance(f.value, this.globals, 'a tube spread', d);
      } else {
        d.push(error('unknown-field', `a ${kind} model has no parameter '${field}'`, f.name.span, [...didYouMean(field, allowed), `parameters: ${allowed.join(', ')}`]));
        ok = false;
        continue;
      }
      if (v === undefined) ok = false;
      else model[field] = v;
    }
    const missing = params.filter((p) => model[p.name] === undefined && !seen.has(p.name)).map((p) => p.name);
    if (missing.length > 0) {
      d.push(error('missing-field', `type '${st.name.text}' lacks ${missing.join(', ')} (a ${kind} model needs ${params.map((p) => p.name).join(', ')})`, st.name.span));
      ok = false;
    }
    return ok ? (model as unknown as TubeModel) : undefined;
  }

  // ---- scopes: stages, parts, instances --------------------------------------------------

  private expandScope(statements: Statement[], scope: Scope): void {
    const declared = new Set<string>(scope.ports.keys());
    const pending: { ref: ResolvedNet; span: SourceSpan }[] = [];
    const things = new Map<string, SourceSpan>();
    const claim = (name: string, span: SourceSpan, what: string): boolean => {
      const first = things.get(name);
      if (first) {
        this.diagnostics.push(error('duplicate-name', `${what} '${name}' reuses a name already taken here`, span, [`first used at ${formatLocation(first)}`]));
        return false;
      }
      things.set(name, span);
      return true;
    };
    const ctx: ScopeContext = { scope, declared, pending, claim };
    for (const st of statements) {
      if (this.tooLarge) return;
      switch (st.kind) {
        case 'let':
          this.defineValue(scope.values, st.name, st.value, scope.values);
          break;
        case 'stage':
          this.expandStage(st, ctx);
          break;
        case 'part':
          this.expandPart(st, ctx);
          break;
        case 'instance':
          this.expandInstance(st, ctx);
          break;
        default:
          break;
      }
    }
    for (const { ref, span } of pending) {
      if (declared.has(ref.local) || this.isGlobalNet(ref.global)) continue;
      const candidates = [...declared, ...this.rails.keys(), GROUND];
      this.diagnostics.push(
        error('unknown-net', `unknown net '${ref.local}': no stage drives it and no part, port or rail is named so`, span, didYouMean(ref.local, candidates)),
      );
    }
  }

  private isGlobalNet(net: string): boolean {
    return net === GROUND || this.rails.has(net);
  }

  private resolveNet(ref: NetRef, scope: Scope): ResolvedNet | undefined {
    const name = ref.name.text;
    if (!ref.index) {
      const port = scope.ports.get(name);
      if (port !== undefined) return { local: name, global: port };
      if (this.isGlobalNet(name)) return { local: name, global: name };
      return { local: name, global: scope.prefix + name };
    }
    const i = evaluateInteger(ref.index, scope.values, 'a net index', this.diagnostics);
    if (i === undefined) return undefined;
    const local = `${name}[${i}]`;
    return { local, global: scope.prefix + local };
  }

  private addPart(part: Part): boolean {
    if (this.parts.length >= MAX_PARTS) {
      if (!this.tooLarge) {
        this.diagnostics.push(error('expansion-too-large', `the design expands to more than ${MAX_PARTS.toLocaleString('en')} parts`, part.span));
      }
      this.tooLarge = true;
      return false;
    }
    this.parts.push(part);
    return true;
  }

  private resistorValue(spec: ValueSpec, values: ValueScope, what: string): { ohms: number; tol: number; watts: number } | undefined {
    const d = this.diagnostics;
    const ohms = evaluateAs(spec.value, values, { what, dim: OHMS, sign: 'positive' }, d);
    const tol = spec.tol ? evaluateTolerance(spec.tol, values, 'a resistor tolerance', d) : this.settings.resistorTol;
    const watts = spec.rating ? evaluateAs(spec.rating, values, { what: 'a power rating', dim: WATTS, sign: 'positive' }, d) : this.settings.resistorWatts;
    if (ohms === undefined || tol === undefined || watts === undefined) return undefined;
    return { ohms, tol, watts };
  }

  private expandStage(st: Extract<Statement, { kind: 'stage' }>, ctx: ScopeContext): void {
    const { scope } = ctx;
    const d = this.diagnostics;
    const out = this.resolveNet(st.out, scope);
    if (!out) return;
    if (!ctx.claim(out.local, st.out.span, 'stage')) return;
    ctx.declared.add(out.local);
    const base = scope.prefix + out.local;
    const once = new Map<string, SourceSpan>();
    const single = (kind: string, span: SourceSpan): boolean => {
      const first = once.get(kind);
      if (first) {
        d.push(error('duplicate-name', `this stage has a '${kind}' already`, span, [`first at ${formatLocation(first)}`]));
        return false;
      }
      once.set(kind, span);
      return true;
    };
    let typeRef: TypeRef | undefined;
    let load: { spec: ValueSpec; to: NetRef; span: SourceSpan } | undefined;
    let cathode: NetRef | undefined;
    let screen: Extract<StageItem, { kind: 'screen' }> | undefined;
    const inputs = st.items.filter((i) => i.kind === 'input');
    for (const item of st.items) {
      if (item.kind === 'input') continue;
      if (!single(item.kind, item.span)) continue;
      if (item.kind === 'tube') typeRef = item.type;
      else if (item.kind === 'load') load = item;
      else if (item.kind === 'cathode') cathode = item.net;
      else screen = item;
    }
    typeRef ??= this.defaultTube;
    const model = typeRef ? this.resolveTypeRef(typeRef) : undefined;
    if (!typeRef) d.push(error('missing-field', `stage '${out.local}' names no tube: add 'tube NAME', or 'tube = NAME' in defaults`, st.out.span));
    if (!load) d.push(error('missing-field', `stage '${out.local}' has no plate load: add 'load 33 k to RAIL'`, st.out.span));
    if (inputs.length === 0) d.push(error('stage-no-input', `stage '${out.local}' has no input: add 'input NET series R pulldown R to RAIL'`, st.out.span));

    const refer = (ref: NetRef): ResolvedNet | undefined => {
      const r = this.resolveNet(ref, scope);
      if (r) ctx.pending.push({ ref: r, span: ref.span });
      return r;
    };
    const role = (r: StageRole) => ({ stage: out.global, role: r });

    if (load) {
      const to = refer(load.to);
      const value = this.resistorValue(load.spec, scope.values, 'a plate load');
      if (to && value) this.addPart({ type: 'resistor', name: `${base}.load`, a: out.global, b: to.global, ...value, ...role('load'), span: load.span });
    }
    const cathodeNet = cathode ? refer(cathode)?.global : GROUND;
    let screenNet: string | undefined;
    if (screen) {
      const to = refer(screen.to);
      if (to && screen.spec) {
        const value = this.resistorValue(screen.spec, scope.values, 'a screen resistor');
        screenNet = `${base}.sg`;
        if (value) this.addPart({ type: 'resistor', name: `${base}.screen`, a: screenNet, b: to.global, ...value, ...role('screen'), span: screen.span });
      } else if (to) screenNet = to.global;
    }
    inputs.forEach((input, k) => {
      if (input.kind !== 'input') return;
      const n = k + 1;
      const from = refer(input.from);
      if (!from) return;
      let grid = from.global;
      if (input.series) {
        grid = `${base}.g${n}`;
        const value = this.resistorValue(input.series, scope.values, 'a series resistor');
        if (value) this.addPart({ type: 'resistor', name: `${base}.s${n}`, a: from.global, b: grid, ...value, ...role('series'), span: input.span });
        if (input.speedup) {
          const farads = evaluateAs(input.speedup, scope.values, { what: 'a speed-up capacitance', dim: FARADS, sign: 'positive' }, d);
          if (farads !== undefined) this.addPart({ type: 'capacitor', name: `${base}.c${n}`, a: from.global, b: grid, farads, tol: CAPACITOR_TOL, ...role('speedup'), span: input.span });
        }
        if (input.pulldown) {
          const to = refer(input.pulldown.to);
          const pd = this.resistorValue(input.pulldown.spec, scope.values, 'a pull-down resistor');
          if (to && pd) this.addPart({ type: 'resistor', name: `${base}.p${n}`, a: grid, b: to.global, ...pd, ...role('pulldown'), span: input.span });
        }
      }
      if (model !== undefined && cathodeNet !== undefined) {
        const section: TubeSection = { type: 'tube', name: `${base}.v${n}`, model, plate: out.global, grid, cathode: cathodeNet, ...role('section'), span: input.span };
        if (screenNet !== undefined && screen) {
          section.screen = screenNet;
          section.screenSpan = screen.span;
        }
        this.addPart(section);
      }
    });
  }

  /** Connects a raw part's or an instance's pin list to names; reports unknown, doubled and missing pins. */
  private bindPins(
    args: PinArg[],
    names: string[],
    required: number,
    what: string,
    span: SourceSpan,
    resolve: (ref: NetRef) => ResolvedNet | undefined,
  ): Map<string, ResolvedNet> | undefined {
    const d = this.diagnostics;
    const bound = new Map<string, ResolvedNet>();
    let ok = true;
    args.forEach((arg, i) => {
      const pin = arg.pin?.text ?? names[i];
      const at = arg.pin?.span ?? arg.net.span;
      if (pin === undefined) {
        d.push(error('unknown-port', `${what} has only ${names.length} connection${names.length === 1 ? '' : 's'} (${names.join(', ')})`, at));
        ok = false;
        return;
      }
      if (!names.includes(pin)) {
        d.push(error('unknown-port', `${what} has no connection '${pin}'`, at, [...didYouMean(pin, names), `connections: ${names.join(', ')}`]));
        ok = false;
        return;
      }
      if (bound.has(pin)) {
        d.push(error('duplicate-name', `connection '${pin}' is given twice`, at));
        ok = false;
        return;
      }
      const net = resolve(arg.net);
      if (!net) ok = false;
      else bound.set(pin, net);
    });
    const missing = names.slice(0, required).filter((n) => !bound.has(n) && !args.some((a) => a.pin?.text === n));
    if (missing.length > 0) {
      d.push(error('port-unconnected', `${what}: ${missing.map((m) => `'${m}'`).join(', ')} ${missing.length === 1 ? 'is' : 'are'} not connected`, span));
      ok = false;
    }
    return ok ? bound : undefined;
  }

  private expandPart(st: PartStmt, ctx: ScopeContext): void {
    const { scope } = ctx;
    const d = this.diagnostics;
    if (!ctx.claim(st.name.text, st.name.span, st.part)) return;
    const pinSpec = PINS[st.part];
    const pins = this.bindPins(st.pins, pinSpec.names, pinSpec.required, `${st.part} '${st.name.text}'`, st.pinsSpan, (ref) => {
      const r = this.resolveNet(ref, scope);
      if (r) ctx.declared.add(r.local);
      return r;
    });
    const name = scope.prefix + st.name.text;
    const net = (pin: string) => pins?.get(pin)?.global as string;
    const values = scope.values;
    switch (st.part) {
      case 'resistor': {
        const value = this.resistorValue(st.spec!, values, 'a resistance');
        if (pins && value) this.addPart({ type: 'resistor', name, a: net('a'), b: net('b'), ...value, span: st.span });
        return;
      }
      case 'capacitor': {
        const farads = evaluateAs(st.spec!.value, values, { what: 'a capacitance', dim: FARADS, sign: 'positive' }, d);
        const tol = st.spec!.tol ? evaluateTolerance(st.spec!.tol, values, 'a capacitor tolerance', d) : CAPACITOR_TOL;
        if (pins && farads !== undefined && tol !== undefined) this.addPart({ type: 'capacitor', name, a: net('a'), b: net('b'), farads, tol, span: st.span });
        return;
      }
      case 'drive': {
        const volts = evaluateAs(st.spec!.value, values, { what: 'a drive level', dim: VOLTS, sign: 'any' }, d);
        const tol = st.spec!.tol ? evaluateTolerance(st.spec!.tol, values, 'a drive tolerance', d) : 0;
        const sourceOhms = st.source ? evaluateAs(st.source, values, { what: 'a source resistance', dim: OHMS, sign: 'positive' }, d) : 0;
        if (pins && volts !== undefined && tol !== undefined && sourceOhms !== undefined) {
          this.addPart({ type: 'drive', name, node: net('node'), volts, tol, sourceOhms, span: st.span });
        }
        return;
      }
      case 'diode': {
        const v = { ...DIODE_DEFAULTS };
        let ok = true;
        for (const f of st.fields) {
          const key = f.name.text;
          const expect =
            key === 'is'
              ? { what: "the diode's saturation current 'is'", dim: AMPS, sign: 'positive' as const, range: DIODE_RANGES.is }
              : key === 'n'
                ? { what: "the diode's emission coefficient 'n'", dim: DIMENSIONLESS, sign: 'positive' as const, range: DIODE_RANGES.n }
                : key === 'rs'
                  ? { what: "the diode's series resistance 'rs'", dim: OHMS, sign: 'non-negative' as const, range: DIODE_RANGES.rs }
                  : undefined;
          if (!expect) {
            d.push(error('unknown-field', `a diode has no parameter '${key}'`, f.name.span, [...didYouMean(key, ['is', 'n', 'rs']), 'parameters: is, n, rs']));
            ok = false;
            continue;
          }
          const x = evaluateAs(f.value, values, expect, d);
          if (x === undefined) ok = false;
          else v[key as keyof typeof v] = x;
        }
        if (pins && ok) this.addPart({ type: 'diode', name, anode: net('anode'), cathode: net('cathode'), ...v, span: st.span });
        return;
      }
      case 'section': {
        const model = this.resolveTypeRef(st.type!);
        if (!pins || model === undefined) return;
        const part: Part = { type: 'tube', name, model, plate: net('plate'), grid: net('grid'), cathode: net('cathode'), span: st.span };
        if (pins.has('screen')) part.screen = net('screen');
        if (pins.has('suppressor')) part.suppressor = net('suppressor');
        this.addPart(part);
        return;
      }
      case 'switch':
      case 'button':
        if (pins) this.addPart({ type: 'switch', name, a: net('a'), b: net('b'), closed: st.closed ?? false, momentary: st.part === 'button', span: st.span });
        return;
    }
  }

  private expandInstance(st: Extract<Statement, { kind: 'instance' }>, ctx: ScopeContext): void {
    const { scope } = ctx;
    const d = this.diagnostics;
    if (!ctx.claim(st.name.text, st.name.span, 'instance')) return;
    const block = this.blocks.get(st.block.text);
    if (!block) {
      d.push(error('unknown-block', `unknown block '${st.block.text}'`, st.block.span, didYouMean(st.block.text, this.blocks.keys())));
      return;
    }
    if (scope.stack.includes(block.name.text)) {
      const chain = [...scope.stack.slice(scope.stack.indexOf(block.name.text)), block.name.text].join(' → ');
      d.push(error('block-cycle', `block '${block.name.text}' contains itself`, st.block.span, [`the loop: ${chain}`]));
      return;
    }
    if (scope.stack.length >= MAX_BLOCK_DEPTH) {
      d.push(error('block-too-deep', `blocks nest more than ${MAX_BLOCK_DEPTH} deep here`, st.span, [`the chain: ${[...scope.stack, block.name.text].join(' → ')}`]));
      return;
    }
    let indices: (number | undefined)[] = [undefined];
    if (st.array) {
      const from = evaluateInteger(st.array.from, scope.values, 'an array bound', d);
      const to = evaluateInteger(st.array.to, scope.values, 'an array bound', d);
      if (from === undefined || to === undefined) return;
      if (to < from) {
        d.push(error('empty-range', `the range ${from}..${to} is empty`, st.array.to.span));
        return;
      }
      if (to - from + 1 > MAX_ARRAY_LENGTH) {
        d.push(error('expansion-too-large', `an instance array may have at most ${MAX_ARRAY_LENGTH.toLocaleString('en')} elements, not ${(to - from + 1).toLocaleString('en')}`, st.array.to.span));
        return;
      }
      indices = [];
      for (let i = from; i <= to; i++) indices.push(i);
    }
    const params = block.body.filter((b): b is Extract<Statement, { kind: 'param' }> => b.kind === 'param');
    for (const o of st.overrides) {
      if (!params.some((p) => p.name.text === o.name.text)) {
        d.push(error('unknown-name', `block '${block.name.text}' has no param '${o.name.text}'`, o.name.span, didYouMean(o.name.text, params.map((p) => p.name.text))));
      }
    }
    const portNames = block.ports.map((p) => p.text);
    for (const i of indices) {
      if (this.tooLarge) return;
      const outer = new ValueScope(scope.values);
      if (st.array && i !== undefined) outer.define(st.array.variable.text, { value: i, dim: DIMENSIONLESS });
      const bound = this.bindPins(st.ports, portNames, portNames.length, `block '${block.name.text}'`, st.portsSpan, (ref) => {
        const r = this.resolveNet(ref, { ...scope, values: outer });
        if (r) ctx.declared.add(r.local);
        return r;
      });
      if (!bound) return;
      const overrides = new Map<string, Quantity>();
      for (const o of st.overrides) {
        const q = evaluate(o.value, outer, d);
        if (q) overrides.set(o.name.text, q);
      }
      const values = new ValueScope(this.globals);
      for (const p of params) this.defineValue(values, p.name, p.value, values, overrides.get(p.name.text));
      const local = i === undefined ? st.name.text : `${st.name.text}[${i}]`;
      const ports = new Map([...bound].map(([port, net]) => [port, net.global]));
      this.expandScope(block.body, { prefix: `${scope.prefix}${local}/`, ports, values, stack: [...scope.stack, block.name.text] });
    }
  }

  /** Warns of a block port its body never uses. */
  private checkPortsUsed(block: BlockStmt): void {
    const used = new Set<string>();
    const see = (ref: NetRef | undefined) => {
      if (ref && !ref.index) used.add(ref.name.text);
    };
    for (const st of block.body) {
      if (st.kind === 'stage') {
        see(st.out);
        for (const item of st.items) {
          if (item.kind === 'load') see(item.to);
          else if (item.kind === 'cathode') see(item.net);
          else if (item.kind === 'screen') see(item.to);
          else if (item.kind === 'input') {
            see(item.from);
            see(item.pulldown?.to);
          }
        }
      } else if (st.kind === 'part' || st.kind === 'instance') {
        const pins = st.kind === 'part' ? st.pins : st.ports;
        for (const p of pins) see(p.net);
      }
    }
    for (const port of block.ports) {
      if (!used.has(port.text)) this.diagnostics.push(warning('port-unused', `port '${port.text}' of block '${block.name.text}' is not used inside it`, port.span));
    }
  }
}

interface ScopeContext {
  scope: Scope;
  /** Local net names that exist in this scope (ports, stage outputs, part pins). */
  declared: Set<string>;
  /** Nets a stage reads, checked against `declared` when the scope is done. */
  pending: { ref: ResolvedNet; span: SourceSpan }[];
  /** Takes a name for a stage, part or instance; false (and a diagnostic) when it is taken already. */
  claim: (name: string, span: SourceSpan, what: string) => boolean;
}

/** One diagnostic per problem and place: a problem inside a block shows once, not once per instance. */
function dedupe(diagnostics: Diagnostic[]): Diagnostic[] {
  const seen = new Map<string, { d: Diagnostic; count: number }>();
  const out: Diagnostic[] = [];
  for (const d of diagnostics) {
    const key = `${d.code}|${d.span?.file}|${d.span?.start.offset}|${d.span?.end.offset}|${d.message}`;
    const hit = seen.get(key);
    if (hit) {
      hit.count++;
      continue;
    }
    const entry = { d: { ...d, notes: [...d.notes] }, count: 1 };
    seen.set(key, entry);
    out.push(entry.d);
  }
  for (const { d, count } of seen.values()) if (count > 1) d.notes.push(`reported once; it occurs ${count} times (once per block instance)`);
  return out;
}
