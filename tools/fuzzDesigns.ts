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

/** The circuits a design is made of. */
export type Motif = 'chain' | 'nor' | 'latch' | 'fanout' | 'array' | 'raw';
export const MOTIFS: readonly Motif[] = ['chain', 'nor', 'latch', 'fanout', 'array', 'raw'];

export interface FuzzDesignOptions {
  /** The motifs to draw from (all by default). */
  motifs?: readonly Motif[];
  /** Motifs (chains, gates, latches, …) at most; tiny designs take 1. */
  maxMotifs?: number;
  /** Chance that an instance array is long (up to `longArray` cells). */
  longArrayChance?: number;
  longArray?: number;
}

/** The library designations the generator copies, by kind (`tubemargin tubes` lists them). */
const LIBRARY: { designation: string; pentode: boolean; koren: boolean }[] = [
  { designation: '12AU7', pentode: false, koren: true },
  { designation: '12AX7', pentode: false, koren: true },
  { designation: '12AT7', pentode: false, koren: true },
  { designation: '6DJ8', pentode: false, koren: true },
  { designation: '6SN7', pentode: false, koren: false },
  { designation: '6CG7', pentode: false, koren: false },
  { designation: '6AU6', pentode: true, koren: true },
  { designation: '6CB6', pentode: true, koren: true },
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
  return Number(x.toPrecision(4)).toString();
}

/** SI multipliers the language reads, by power of ten. */
const MULTIPLIERS: [number, string][] = [
  [-12, 'p'],
  [-9, 'n'],
  [-6, 'u'],
  [-3, 'm'],
  [3, 'k'],
  [6, 'M'],
  [9, 'G'],
];

/** Unit symbols by place (the language also takes the place's unit implied). */
export type Unit = 'Ω' | 'F' | 'V' | 'W' | 'A';

const pct = (fraction: number) => `${num(Math.round(fraction * 1000) / 10)} %`;

interface TypeInfo {
  /** How a stage names it: a type of the design, or a quoted library designation. */
  ref: string;
  pentode: boolean;
}

/**
 * The ranges the language accepts (docs/LANGUAGE.md, the `value-out-of-range` diagnostic):
 * odd designs use their ends, and now and then step just past one.
 */
const ACCEPTED = {
  ohms: [1e-3, 1e12],
  farads: [1e-18, 1],
  watts: [1e-6, 1e5],
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

/** Resistances: plain 1 kΩ–1 MΩ, odd anywhere from 1 mΩ to 1 TΩ, and past both ends (down to 1e-12 Ω) now and then. */
const RES_PLAIN: [number, number] = [1e3, 1e6];

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

  /**
   * A value written in one of the forms the language reads: a plain number, an SI
   * multiplier with or without the unit (`33 k`, `33k`, `33 kΩ`, `4.7 nF`), the resistor
   * code of IEC 60062 (`4k7`), a sum in parentheses, or a `let` value defined just before.
   */
  quantity(x: number, unit: Unit, named = true): string {
    const d = this.d;
    const form = d.int(0, named ? 19 : 18);
    if (form < 11 || x === 0) return num(x);
    if (form < 17) {
      const near = MULTIPLIERS.filter(([p]) => Math.abs(Math.log10(Math.abs(x)) - p) < 3);
      if (near.length === 0) return num(x);
      const [power, prefix] = d.pick(near);
      const mantissa = num(x / 10 ** power);
      if (/e/.test(mantissa)) return num(x);
      const symbol = unit === 'Ω' ? d.pick(['Ω', 'ohm', 'ohms']) : unit;
      // The resistor code: the multiplier letter stands for the decimal point (4k7 is 4.7 kΩ).
      if (form === 16 && unit === 'Ω' && /\./.test(mantissa) && Number(mantissa) >= 1 && 'kMG'.includes(prefix)) return mantissa.replace('.', prefix);
      return d.pick([`${mantissa} ${prefix}`, `${mantissa}${prefix}`, `${mantissa} ${prefix}${symbol}`]).trimEnd();
    }
    if (form < 19) return `(${num(x / 4)} + ${num((3 * x) / 4)})`;
    const name = this.fresh('v');
    this.lines.push(`let ${name} = ${num(x)}${unit === 'Ω' ? '' : ` ${unit}`}`);
    return name;
  }

  res(odd = 0.03, named = true): string {
    return this.quantity(this.param('ohms', RES_PLAIN, odd, [1e-12, 1e13]), 'Ω', named);
  }

  /**
   * A model or diode constant: plain most of the time, else anywhere in the range the
   * language accepts or exactly at one of its ends, and rarely just outside it (a design
   * that must be turned away with a diagnostic).
   */
  param(field: keyof typeof ACCEPTED, plain: [number, number], odd = 0.15, past: number[] = []): number {
    const [min, max] = ACCEPTED[field];
    // Resistances are many to a design: step past their range less often, so most designs still load.
    if (this.d.chance(field === 'ohms' ? 0.0015 : 0.005)) return this.d.pick([min / 10, max * 10, min === 0 ? -1 : -min, ...past]);
    return this.d.value(plain, [min === 0 ? 1e-12 : min, max], odd);
  }

  /** Optional tails of a resistor: a tolerance of 0–50 %, a power rating. */
  tol(): string {
    let tail = '';
    if (this.d.chance(0.3)) tail += ` tol ${pct(this.d.pick([0, 0.5, this.d.uniform(0, 0.5)]))}`;
    if (this.d.chance(0.05)) tail += ` rating ${this.quantity(this.param('watts', [0.125, 2]), 'W')}`;
    return tail;
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
      if (d.chance(0.2)) line += ` source ${this.res(0.1)}`;
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
      if (d.chance(0.5)) fields.push(`margin = ${this.quantity(d.value([0.5, 5], [1e-6, 1e3]), 'V')}`);
      if (d.chance(0.2)) fields.push(`rating = ${this.quantity(this.param('watts', [0.25, 2]), 'W')}`);
      if (d.chance(0.2)) fields.push(`stray = ${this.quantity(this.param('farads', [1e-12, 1e-10]), 'F')}`);
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
      if (d.chance(0.2) && lib.koren) field('ex', [1.2, 1.6]);
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
    if (d.chance(0.2)) fields.push(`rgi = ${this.quantity(this.param('rgi', [500, 1e4]), 'Ω')}`);
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
      if (d.chance(0.15)) item += ` speedup ${this.quantity(this.param('farads', [10e-12, 200e-12]), 'F')}`;
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
    // A drive (40 %), a switch (20 %), a button (35 %), a stiff drive a button can short (5 %).
    const roll = d.int(0, 19);
    const how = roll < 8 ? 0 : roll < 12 ? 1 : roll < 19 ? 2 : 3;
    if (how === 0 || how === 3) {
      const name = this.fresh('DR');
      const volts = Number(d.pick([d.uniform(-20, 50), 0, d.value([1, 300], [1e-6, 1e4], 0.2) * d.pick([1, -1])]).toPrecision(4));
      let line = `drive ${name} (${net}) ${num(volts)} V`;
      if (d.chance(0.4)) line += ` tol ${pct(d.uniform(0, 0.5))}`;
      const stiff = how === 3 || !d.chance(0.5);
      if (!stiff) line += ` source ${this.res(0.2)}`;
      this.lines.push(line);
      this.drives.push({ name, volts });
      if (how === 3 || d.chance(0.03)) {
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
    // A parameter's default cannot name a value of the block; an override can name a global one.
    this.lines.push(`  param rl = ${this.res(0.03, false)}`);
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
      // Resistors 30 %, capacitors, diodes and sections 20 % each, contacts 10 % (a contact between two fixed voltages is a short the design is refused for).
      const roll = d.int(0, 9);
      const what = roll < 3 ? 0 : roll < 5 ? 1 : roll < 7 ? 2 : roll < 8 ? 3 : 4;
      const a = this.signal();
      const b = d.chance(0.5) ? this.signal() : this.anyRail();
      if (what === 0) this.lines.push(`resistor ${this.fresh('R')} (${a}, ${b}) ${this.res(0.3)}${this.tol()}`);
      else if (what === 1) this.lines.push(`capacitor ${this.fresh('C')} (${a}, ${b}) ${this.quantity(this.param('farads', [1e-12, 1e-6]), 'F')}${d.chance(0.3) ? ` tol ${pct(d.uniform(0, 0.5))}` : ''}`);
      else if (what === 2) {
        const fields: string[] = [];
        if (d.chance(0.6)) fields.push(`is = ${this.quantity(this.param('is', [1e-12, 1e-6], 0.4), 'A')}`);
        if (d.chance(0.6)) fields.push(`n = ${num(this.param('n', [1, 2], 0.4))}`);
        if (d.chance(0.6)) fields.push(`rs = ${d.chance(0.1) ? '0' : this.quantity(this.param('rs', [1, 100], 0.4), 'Ω')}`);
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
 * `sampleDesigns(1, 1)[0].text` holds a line `rail bp = … V`, types, and stages or parts.
 */
export function fuzzDesigns(options: FuzzDesignOptions = {}): fc.Arbitrary<FuzzDesign> {
  const settings: Required<FuzzDesignOptions> = { motifs: MOTIFS, maxMotifs: 5, longArrayChance: 0.02, longArray: 1000, ...options };
  return fc.gen().map((g) => {
    const b = new Builder(new Draw(g), settings);
    b.header();
    const motifs = b.d.int(1, settings.maxMotifs);
    for (let i = 0; i < motifs; i++) {
      b[b.d.pick(settings.motifs)]();
    }
    return { text: b.lines.join('\n') + '\n', rails: b.rails, buttons: b.buttons, drives: b.drives, arrayCells: b.arrayCells };
  });
}

/** `count` designs from `seed`, the same every time. */
export function sampleDesigns(seed: number, count: number, options: FuzzDesignOptions = {}): FuzzDesign[] {
  return fc.sample(fuzzDesigns(options), { seed, numRuns: count, unbiased: true });
}
