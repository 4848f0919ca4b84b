import fc from 'fast-check';

/**
 * Random designs that are valid but odd, written in the design language itself (see
 * docs/LANGUAGE.md): rails of both signs, library and home-made tube types at the ends of
 * their parameters, inverter chains, NOR gates, latches, fan-outs, instance arrays (now
 * and then of about a thousand cells), drives with and without source resistance, switches
 * and buttons (one of them shorting a stiff drive to ground or a rail), diodes with extreme
 * parameters, capacitors, screens, cathodes tied to rails and grids tied straight to a rail.
 *
 * Every choice is drawn through fast-check (`fc.gen`), so a run is fixed by its seed and a
 * failing design shrinks: counts shrink towards fewer parts, and each "odd" choice towards
 * the plain one. The harness that runs the designs is `tools/fuzz.ts`.
 */

/** What the harness needs to know of a generated design to build commands for it. */
export interface FuzzDesign {
  text: string;
  /** Rails by name (volts), for `sweep --rail`. */
  rails: { name: string; volts: number }[];
  /** Push buttons, for `step --sequence "press B; release B"`. */
  buttons: string[];
  /** Drives, for `pulse --input D=…`: name and level (volts). */
  drives: { name: string; volts: number }[];
  /** Instances placed by arrays, a rough measure of size. */
  arrayCells: number;
}

export interface FuzzDesignOptions {
  /** Motifs (chains, gates, latches, …) at most; tiny designs take 1. */
  maxMotifs?: number;
  /** Chance that an instance array is long (up to `longArray` cells). */
  longArrayChance?: number;
  longArray?: number;
}

/** The library designations the generator copies, by kind (`tubemargin tubes` lists them). */
const LIBRARY: { designation: string; pentode: boolean }[] = [
  { designation: '12AU7', pentode: false },
  { designation: '12AX7', pentode: false },
  { designation: '12AT7', pentode: false },
  { designation: '6DJ8', pentode: false },
  { designation: '6SN7', pentode: false },
  { designation: '6CG7', pentode: false },
  { designation: '6AU6', pentode: true },
  { designation: '6CB6', pentode: true },
];

/** One draw source over `fc.gen`: every method shrinks towards its first, plainest answer. */
class Draw {
  constructor(private readonly g: fc.GeneratorValue) {}

  int(min: number, max: number): number {
    return this.g(fc.integer, { min, max });
  }

  /** True with probability p; shrinks to false. */
  chance(p: number): boolean {
    return this.int(0, 9999) >= 10000 - Math.round(p * 10000);
  }

  pick<T>(xs: readonly T[]): T {
    return xs[this.int(0, xs.length - 1)]!;
  }

  /** Uniform in [min, max], on a grid of 10⁴ steps; shrinks to min. */
  uniform(min: number, max: number): number {
    return min + ((max - min) * this.int(0, 10000)) / 10000;
  }

  /** Log-uniform in [min, max] (both above zero); shrinks to min. */
  log(min: number, max: number): number {
    return Math.exp(this.uniform(Math.log(min), Math.log(max)));
  }

  /** A plain value most of the time; now and then an extreme one, or exactly an end of the extreme range. */
  value(plain: [number, number], extreme: [number, number], odd = 0.1): number {
    if (!this.chance(odd)) return this.log(plain[0], plain[1]);
    const how = this.int(0, 2);
    return how === 0 ? this.log(extreme[0], extreme[1]) : how === 1 ? extreme[0] : extreme[1];
  }
}

/** A number as the language reads it: four significant digits, exponent form where needed. */
export function num(x: number): string {
  const s = Number(x.toPrecision(4)).toString();
  return s;
}

const pct = (fraction: number) => `${num(Math.round(fraction * 1000) / 10)} %`;

interface TypeInfo {
  /** How a stage names it: a type of the design, or a quoted library designation. */
  ref: string;
  pentode: boolean;
}

/**
 * The ranges the language accepts for model and diode constants (docs/LANGUAGE.md, the
 * `value-out-of-range` diagnostic); odd designs use their ends.
 */
const ACCEPTED = {
  mu: [0.5, 1000],
  ex: [1, 3],
  kg1: [1, 1e6],
  kg2: [1, 1e7],
  kp: [1, 1e4],
  kvb: [1e-3, 1e7],
  kvbPentode: [1e-3, 1e4],
  k: [1e-7, 1],
  rgi: [10, 1e8],
  is: [1e-18, 1e-2],
  n: [0.5, 10],
  rs: [0, 1e6],
} as const satisfies Record<string, readonly [number, number]>;

/** Resistances: plain 1 kΩ–1 MΩ, extreme 1e-12–1e12 Ω. */
const RES_PLAIN: [number, number] = [1e3, 1e6];
const RES_EXTREME: [number, number] = [1e-12, 1e12];

class Builder {
  readonly lines: string[] = [];
  readonly rails: { name: string; volts: number }[] = [];
  readonly buttons: string[] = [];
  readonly drives: { name: string; volts: number }[] = [];
  readonly types: TypeInfo[] = [];
  /** Nets with a DC path to a rail that a grid may be fed from. */
  readonly signals: string[] = [];
  arrayCells = 0;
  private counter = 0;

  constructor(
    readonly d: Draw,
    readonly options: Required<FuzzDesignOptions>,
  ) {}

  fresh(prefix: string): string {
    return `${prefix}${this.counter++}`;
  }

  res(odd = 0.08): string {
    return num(this.d.value(RES_PLAIN, RES_EXTREME, odd));
  }

  /**
   * A model or diode constant: plain most of the time, else anywhere in the range the
   * language accepts or exactly at one of its ends, and rarely just outside it (a design
   * that must be turned away with a diagnostic).
   */
  param(field: keyof typeof ACCEPTED, plain: [number, number], odd = 0.15): number {
    const [min, max] = ACCEPTED[field];
    if (this.d.chance(0.005)) return this.d.pick([min / 10, max * 10, min === 0 ? -1 : -min]);
    return this.d.value(plain, [min === 0 ? 1e-12 : min, max], odd);
  }

  /** An optional tolerance tail, 0–50 %. */
  tol(): string {
    if (!this.d.chance(0.3)) return '';
    return ` tol ${pct(this.d.pick([0, 0.5, this.d.uniform(0, 0.5)]))}`;
  }

  positiveRail(): string {
    const pos = this.rails.filter((r) => r.volts > 0);
    if (pos.length === 0 || this.d.chance(0.05)) return this.d.pick(['gnd', ...this.rails.map((r) => r.name)]);
    return this.d.pick(pos).name;
  }

  negativeRail(): string {
    const neg = this.rails.filter((r) => r.volts < 0);
    if (neg.length === 0 || this.d.chance(0.1)) return this.d.pick(['gnd', ...this.rails.map((r) => r.name)]);
    return this.d.pick(neg).name;
  }

  anyRail(): string {
    return this.d.pick(['gnd', ...this.rails.map((r) => r.name)]);
  }

  signal(): string {
    if (this.signals.length === 0 || this.d.chance(0.05)) return this.anyRail();
    return this.d.pick(this.signals);
  }

  // ---- header: rails, types, defaults -------------------------------------------------

  header(): void {
    const d = this.d;
    if (d.chance(0.3)) this.lines.push(`title "fuzz ${this.d.int(0, 99999)}"`);
    const count = d.int(1, 4);
    for (let i = 0; i < count; i++) {
      const name = i === 0 ? 'bp' : i === 1 ? 'bias' : this.fresh('r');
      // First rail positive, second negative, the rest of either sign; now and then extreme.
      const sign = i === 0 ? (d.chance(0.05) ? -1 : 1) : i === 1 ? (d.chance(0.1) ? 1 : -1) : d.pick([1, -1]);
      const magnitude = d.value(i === 0 ? [12, 300] : [3, 150], [1e-3, 1e4], 0.06);
      const volts = sign * Number(magnitude.toPrecision(4));
      let line = `rail ${name} = ${num(volts)} V`;
      if (d.chance(0.6)) line += ` tol ${pct(d.pick([0.05, 0, 0.5, d.uniform(0, 0.5)]))}`;
      if (d.chance(0.2)) line += ` source ${this.res(0.3)}`;
      this.lines.push(line);
      this.rails.push({ name, volts });
    }
    const types = d.int(0, 3);
    for (let i = 0; i < types; i++) this.type();
    if (this.types.length === 0 || d.chance(0.2)) {
      const lib = d.pick(LIBRARY);
      this.types.push({ ref: `"${lib.designation}"`, pentode: lib.pentode });
    }
    if (d.chance(0.5)) {
      const fields: string[] = [];
      if (d.chance(0.5)) fields.push(`tolerance = ${pct(d.uniform(0, 0.5))}`);
      if (d.chance(0.5)) fields.push(`margin = ${num(d.value([0.5, 5], [1e-6, 1e3]))} V`);
      if (d.chance(0.2)) fields.push(`rating = ${num(d.value([0.25, 2], [1e-9, 1e6]))} W`);
      if (d.chance(0.2)) fields.push(`stray = ${num(d.value([1e-12, 1e-10], [1e-18, 1e-3]))} F`);
      if (d.chance(0.3)) fields.push(`tube = ${this.types[0]!.ref}`);
      this.lines.push(`defaults { ${fields.join(', ')} }`);
    }
  }

  /** A home-made tube type: its own kind with drawn parameters, or a library type with overrides. */
  type(): void {
    const d = this.d;
    const name = this.fresh('T');
    const fields: string[] = [];
    let pentode: boolean;
    let head: string;
    const kind = d.int(0, 3);
    const field = (f: keyof typeof ACCEPTED, plain: [number, number]) => fields.push(`${f} = ${num(this.param(f, plain))}`);
    if (kind === 0) {
      const lib = d.pick(LIBRARY);
      pentode = lib.pentode;
      head = `type ${name} like "${lib.designation}"`;
      if (d.chance(0.3)) field('mu', [5, 100]);
      if (d.chance(0.2) && !lib.designation.startsWith('6SN7') && lib.designation !== '6CG7') field('ex', [1.2, 1.6]);
    } else if (kind === 1) {
      pentode = false;
      head = `type ${name} koren-triode`;
      field('mu', [5, 100]);
      field('ex', [1.2, 1.6]);
      field('kg1', [300, 3000]);
      field('kp', [50, 700]);
      field('kvb', [1, 400]);
    } else if (kind === 2) {
      pentode = true;
      head = `type ${name} koren-pentode`;
      field('mu', [10, 50]);
      field('ex', [1.2, 1.5]);
      field('kg1', [300, 3000]);
      field('kg2', [1000, 5000]);
      field('kp', [20, 200]);
      fields.push(`kvb = ${num(this.param('kvbPentode', [0.5, 50]))}`);
    } else {
      pentode = false;
      head = `type ${name} child-langmuir`;
      field('mu', [5, 100]);
      field('k', [1e-4, 3e-3]);
    }
    if (d.chance(0.2)) field('rgi', [500, 1e4]);
    if (d.chance(0.35)) fields.push(`vgamma = ${num(d.chance(0.03) ? d.pick([-2.5, 2.5, -100]) : d.pick([d.uniform(-2, 2), -2, 2, 0]))} V`);
    if (d.chance(0.3)) fields.push(`spread = ${pct(d.pick([d.uniform(0, 0.5), 0, 0.5]))}`);
    this.lines.push(fields.length > 0 || kind !== 0 ? `${head} { ${fields.join(', ')} }` : head);
    this.types.push({ ref: name, pentode });
  }

  // ---- stages ---------------------------------------------------------------------------

  /** The text of a stage driving `out` from `inputs`, with everything a stage may say. */
  stageText(out: string, inputs: string[], load = this.res(), loadRail = this.positiveRail()): string {
    const d = this.d;
    const t = d.pick(this.types);
    const items = [`tube ${t.ref}`, `load ${load}${this.tol()} to ${loadRail}`];
    if (t.pentode) items.push(d.chance(0.7) ? `screen ${this.positiveRail()}` : `screen ${this.res()} to ${this.positiveRail()}`);
    if (d.chance(0.08)) items.push(`cathode ${this.anyRail()}`);
    for (const input of inputs) {
      if (d.chance(0.06)) {
        // A grid tied straight to a net, or to a rail.
        items.push(`input ${d.chance(0.5) ? this.anyRail() : input} direct`);
        continue;
      }
      let item = `input ${input} series ${this.res()}${this.tol()}`;
      if (d.chance(0.15)) item += ` speedup ${num(d.value([10e-12, 200e-12], [1e-18, 1]))}`;
      if (d.chance(0.85)) item += ` pulldown ${this.res()}${this.tol()} to ${this.negativeRail()}`;
      items.push(item);
    }
    return `stage ${out} { ${items.join('; ')} }`;
  }

  stage(inputs: string[]): string {
    const out = this.fresh('n');
    this.lines.push(this.stageText(out, inputs));
    this.signals.push(out);
    return out;
  }

  // ---- where logic levels come from ---------------------------------------------------------

  /** A net set from outside: a drive, a switch or button with a pull-down, and now and then a button that shorts a stiff drive. */
  source(): string {
    const d = this.d;
    const net = this.fresh('in');
    const how = d.int(0, 3);
    if (how === 0 || how === 3) {
      const name = this.fresh('DR');
      const volts = Number(d.pick([d.uniform(-20, 50), 0, d.value([1, 300], [1e-6, 1e4], 0.2) * d.pick([1, -1])]).toPrecision(4));
      let line = `drive ${name} (${net}) ${num(volts)} V`;
      if (d.chance(0.4)) line += ` tol ${pct(d.uniform(0, 0.5))}`;
      const stiff = !d.chance(0.5);
      if (!stiff) line += ` source ${this.res(0.2)}`;
      this.lines.push(line);
      this.drives.push({ name, volts });
      if (how === 3 || d.chance(0.1)) {
        // A button that shorts the driven net to ground or a rail.
        const b = this.fresh('B');
        this.lines.push(`button ${b} (${net}, ${this.anyRail()})`);
        this.buttons.push(b);
      }
    } else {
      const contact = this.fresh(how === 1 ? 'S' : 'B');
      if (how === 1) this.lines.push(`switch ${contact} (${net}, ${this.positiveRail()})${d.chance(0.5) ? ' closed' : d.chance(0.5) ? ' open' : ''}`);
      else {
        this.lines.push(`button ${contact} (${net}, ${this.positiveRail()})`);
        this.buttons.push(contact);
      }
      this.lines.push(`resistor ${this.fresh('R')} (${net}, ${this.negativeRail()}) ${this.res()}${this.tol()}`);
    }
    this.signals.push(net);
    return net;
  }

  // ---- motifs -------------------------------------------------------------------------

  chain(): void {
    let net = this.signals.length > 0 && this.d.chance(0.5) ? this.signal() : this.source();
    const n = this.d.int(1, 6);
    for (let i = 0; i < n; i++) net = this.stage([net]);
  }

  nor(): void {
    const k = this.d.int(2, 4);
    const inputs: string[] = [];
    for (let i = 0; i < k; i++) inputs.push(this.signals.length > 0 && this.d.chance(0.6) ? this.signal() : this.source());
    this.stage(inputs);
  }

  latch(): void {
    const q = this.fresh('q');
    const nq = this.fresh('nq');
    const set = this.source();
    const clr = this.source();
    const load = this.res();
    const rail = this.positiveRail();
    this.lines.push(this.stageText(q, [nq, clr], load, rail));
    this.lines.push(this.stageText(nq, [q, set], load, rail));
    this.signals.push(q, nq);
  }

  fanout(): void {
    const from = this.signals.length > 0 ? this.signal() : this.source();
    const n = this.d.int(2, 12);
    for (let i = 0; i < n; i++) this.stage([from]);
  }

  /** A block of one stage placed by an instance array: a chain, a ring, or a fan-out. */
  array(): void {
    const d = this.d;
    const block = this.fresh('cell');
    const long = d.chance(this.options.longArrayChance);
    const n = long ? d.int(100, this.options.longArray) : d.int(1, 16);
    this.arrayCells += n;
    this.lines.push(`block ${block} (a, b) {`);
    this.lines.push(`  param rl = ${this.res()}`);
    this.lines.push(`  ${this.stageText('b', ['a'], 'rl')}`);
    this.lines.push('}');
    const bus = this.fresh('x');
    const shape = d.int(0, 2);
    const override = d.chance(0.3) ? ` with (rl = ${this.res()})` : '';
    if (shape === 0) {
      this.lines.push(`resistor ${this.fresh('R')} (${bus}[0], ${this.signal()}) ${this.res()}`);
      this.lines.push(`instance ${this.fresh('c')}[i in 1..${n}] of ${block} (a: ${bus}[i - 1], b: ${bus}[i])${override}`);
      this.signals.push(`${bus}[${n}]`);
    } else if (shape === 1) {
      this.lines.push(`instance ${this.fresh('c')}[i in 0..${n - 1}] of ${block} (a: ${bus}[i], b: ${bus}[(i + 1) mod ${n}])${override}`);
      this.signals.push(`${bus}[0]`);
    } else {
      const from = this.signals.length > 0 ? this.signal() : this.source();
      this.lines.push(`instance ${this.fresh('c')}[i in 1..${n}] of ${block} (a: ${from}, b: ${bus}[i])${override}`);
      this.signals.push(`${bus}[1]`);
    }
  }

  /** Parts written one by one: resistors, capacitors, diodes, switches and raw sections. */
  raw(): void {
    const d = this.d;
    const n = d.int(1, 4);
    for (let i = 0; i < n; i++) {
      const what = d.int(0, 4);
      const a = this.signal();
      const b = d.chance(0.5) ? this.signal() : this.anyRail();
      if (what === 0) this.lines.push(`resistor ${this.fresh('R')} (${a}, ${b}) ${this.res(0.3)}${this.tol()}`);
      else if (what === 1) this.lines.push(`capacitor ${this.fresh('C')} (${a}, ${b}) ${num(d.value([1e-12, 1e-6], [1e-18, 1e3]))}${d.chance(0.3) ? ` tol ${pct(d.uniform(0, 0.5))}` : ''}`);
      else if (what === 2) {
        const fields: string[] = [];
        if (d.chance(0.6)) fields.push(`is = ${num(this.param('is', [1e-12, 1e-6], 0.4))}`);
        if (d.chance(0.6)) fields.push(`n = ${num(this.param('n', [1, 2], 0.4))}`);
        if (d.chance(0.6)) fields.push(`rs = ${d.chance(0.1) ? '0' : num(this.param('rs', [1, 100], 0.4))}`);
        this.lines.push(`diode ${this.fresh('D')} (${a}, ${b})${fields.length > 0 ? ` { ${fields.join(', ')} }` : ''}`);
      } else if (what === 3) {
        const s = this.fresh(d.chance(0.5) ? 'B' : 'S');
        if (s.startsWith('B')) {
          this.lines.push(`button ${s} (${a}, ${b})`);
          this.buttons.push(s);
        } else this.lines.push(`switch ${s} (${a}, ${b})${d.chance(0.5) ? ' closed' : ''}`);
      } else {
        const t = d.pick(this.types);
        const plate = this.fresh('p');
        this.lines.push(`resistor ${this.fresh('R')} (${plate}, ${this.positiveRail()}) ${this.res()}`);
        const pins = [plate, a, d.chance(0.8) ? 'gnd' : this.anyRail()];
        if (t.pentode) pins.push(this.positiveRail());
        this.lines.push(`section ${this.fresh('V')} ${t.ref} (${pins.join(', ')})`);
        this.signals.push(plate);
      }
    }
  }
}

/**
 * The fast-check arbitrary of odd but valid designs. Example:
 * `fc.sample(fuzzDesigns(), { seed: 1, numRuns: 1 })[0].text` starts `rail bp = …`.
 */
export function fuzzDesigns(options: FuzzDesignOptions = {}): fc.Arbitrary<FuzzDesign> {
  const settings: Required<FuzzDesignOptions> = { maxMotifs: 5, longArrayChance: 0.02, longArray: 1000, ...options };
  return fc.gen().map((g) => {
    const b = new Builder(new Draw(g), settings);
    b.header();
    const motifs = b.d.int(1, settings.maxMotifs);
    for (let i = 0; i < motifs; i++) {
      const m = b.d.int(0, 5);
      if (m === 0) b.chain();
      else if (m === 1) b.nor();
      else if (m === 2) b.latch();
      else if (m === 3) b.fanout();
      else if (m === 4) b.array();
      else b.raw();
    }
    return { text: b.lines.join('\n') + '\n', rails: b.rails, buttons: b.buttons, drives: b.drives, arrayCells: b.arrayCells };
  });
}

/** `count` designs from `seed`, the same every time. */
export function sampleDesigns(seed: number, count: number, options: FuzzDesignOptions = {}): FuzzDesign[] {
  return fc.sample(fuzzDesigns(options), { seed, numRuns: count, unbiased: true });
}
