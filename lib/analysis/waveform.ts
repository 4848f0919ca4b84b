import { DIMENSIONLESS, SECONDS, VOLTS, describeDimension, parseUnitSuffix, sameDimension, type Dimension } from '../netlist/units.js';

/** A voltage over time, to drive an input during a simulation in time. */
export interface Waveform {
  /** The text it was read from. */
  text: string;
  /** Volts at time t (seconds). */
  at(t: number): number;
  /** Times in [0, stop] where its slope changes: the simulation lands a step on each. */
  corners(stop: number): number[];
  /** Times at which each pulse starts (leaves idle) up to `stop`: a counter's state is judged just before each. Empty for other shapes. */
  pulseStarts(stop: number): number[];
  /** The clock period (seconds); undefined for other shapes. */
  period?: number;
  /** The same clock with another period, its percentages following it. */
  withPeriod?(period: number): Waveform;
}

/** The shapes a waveform can take, for help texts. */
export const WAVEFORM_FORMS = [
  '150V (a steady level)',
  'clock(IDLE, ACTIVE, period=1ms, width=25%, delay=0, edge=1%, count=N)',
  'pulse(IDLE, ACTIVE, at=10us, width=5us, edge=0.1us)',
  'points(0s 0V, 1us 10V, …) (straight lines, held after the last point)',
];

type Read<T> = { value: T } | { error: string };

/**
 * A number with an optional unit suffix (`10us`, `4.7 pF`); a bare number is in SI units;
 * `%` only where `percentOf` is given. `what` names the value in the error.
 */
export function parseQuantity(text: string, dim: Dimension, what: string, percentOf?: (fraction: number) => number): Read<number> {
  const m = /^(-?(?:\d+(?:\.\d*)?|\.\d+)(?:e[-+]?\d+)?)\s*(\S*)$/i.exec(text.trim());
  const unit = m ? parseUnitSuffix(m[2]!) : undefined;
  if (!m || !unit) return { error: `${what}: '${text.trim()}' is not a number with a unit` };
  const n = Number(m[1]) * unit.scale;
  if (m[2] === '%') return percentOf ? { value: percentOf(n) } : { error: `${what}: a percentage means nothing here` };
  if (!sameDimension(unit.dim, dim) && !sameDimension(unit.dim, DIMENSIONLESS)) return { error: `${what}: '${text.trim()}' is not in ${describeDimension(dim)}` };
  return { value: n };
}

/** Splits `name(a, b, k=v)` into positional and named arguments. */
function call(text: string): { name: string; positional: string[]; named: Map<string, string> } | undefined {
  const m = /^([a-z]+)\s*\((.*)\)$/is.exec(text.trim());
  if (!m) return undefined;
  const positional: string[] = [];
  const named = new Map<string, string>();
  for (const arg of m[2]!.split(',').map((a) => a.trim())) {
    if (arg === '') continue;
    const kv = /^([a-z]+)\s*=\s*(.+)$/i.exec(arg);
    if (kv) named.set(kv[1]!.toLowerCase(), kv[2]!);
    else positional.push(arg);
  }
  return { name: m[1]!.toLowerCase(), positional, named };
}

/** Straight lines through (time, volts) points in time order, held before the first and after the last. */
function piecewise(text: string, points: [number, number][]): Waveform {
  return {
    text,
    at(t) {
      if (t <= points[0]![0]) return points[0]![1];
      for (let i = 1; i < points.length; i++) {
        const [t1, v1] = points[i]!;
        if (t <= t1) {
          const [t0, v0] = points[i - 1]!;
          return t1 === t0 ? v1 : v0 + ((v1 - v0) * (t - t0)) / (t1 - t0);
        }
      }
      return points[points.length - 1]![1];
    },
    corners: (stop) => points.map(([t]) => t).filter((t) => t > 0 && t <= stop),
    pulseStarts: () => [],
  };
}

interface ClockShape {
  idle: number;
  active: number;
  period: number;
  /** Seconds. */
  width: number;
  delay: number;
  edge: number;
  count: number;
  /** Which of width, delay and edge were given as percentages of the period. */
  relative: { width: boolean; delay: boolean; edge: boolean };
}

function clock(text: string, c: ClockShape): Waveform {
  const start = (k: number) => c.delay + k * c.period;
  const shape = (t: number): number => {
    if (t < c.delay) return c.idle;
    const k = Math.floor((t - c.delay) / c.period);
    if (k >= c.count) return c.idle;
    const s = t - start(k);
    const ramp = (u: number) => c.idle + (c.active - c.idle) * u;
    if (s < c.edge) return ramp(s / c.edge);
    if (s < c.width) return c.active;
    if (s < c.width + c.edge) return ramp(1 - (s - c.width) / c.edge);
    return c.idle;
  };
  const each = (stop: number, offsets: number[]) => {
    const out: number[] = [];
    for (let k = 0; k < c.count && start(k) <= stop; k++) for (const o of offsets) if (start(k) + o <= stop && start(k) + o >= 0) out.push(start(k) + o);
    return out;
  };
  return {
    text,
    at: shape,
    corners: (stop) => each(stop, [0, c.edge, c.width, c.width + c.edge]).filter((t) => t > 0),
    pulseStarts: (stop) => each(stop, [0]),
    period: c.period,
    withPeriod(period) {
      const f = period / c.period;
      const r = c.relative;
      const moved = { width: r.width ? c.width * f : c.width, delay: r.delay ? c.delay * f : c.delay, edge: r.edge ? c.edge * f : c.edge };
      // Times given in seconds stay, unless the pulse would no longer fit the period: then the whole shape shrinks with it.
      const fits = moved.width >= moved.edge && moved.width + moved.edge <= period;
      const shape = fits ? moved : { width: c.width * f, delay: c.delay * f, edge: c.edge * f };
      return clock(`${text} at period ${period}`, { ...c, ...shape, period });
    },
  };
}

/**
 * Reads a waveform, our own small notation (see `WAVEFORM_FORMS`): a steady level, a
 * clock, one pulse, or straight lines through points. Times take s, ms, us (µs) or ns; a
 * clock's width, delay and edge may be percentages of its period, and then follow it when
 * the period changes (the speed search), while times in seconds stay unless the pulse
 * would no longer fit (then the whole shape follows the period). A clock's width, delay
 * and edge default to 50 %, 0 and 1 % of its period. An edge is the time of each straight
 * ramp between the levels; it must be above zero.
 *
 * Example: `clock(150V, 0V, period=2ms, width=25%)` idles at 150 V and pulls to 0 V for
 * the first quarter of every 2 ms, with ramps of 1 % of the period (the default edge).
 */
export function parseWaveform(text: string): Read<Waveform> {
  const volts = (t: string, what: string) => parseQuantity(t, VOLTS, what);
  const level = volts(text, 'a level');
  if ('value' in level) return { value: piecewise(text, [[0, level.value]]) };
  const c = call(text);
  if (!c) return { error: `'${text}' is no waveform: ${WAVEFORM_FORMS.join('; ')}` };
  const errors: string[] = [];
  const take = <T>(r: Read<T>, fallback: T): T => ('value' in r ? r.value : (errors.push(r.error), fallback));
  const known = (names: string[]) => {
    for (const k of c.named.keys()) if (!names.includes(k)) errors.push(`${c.name}() takes ${names.join(', ')}, not '${k}'`);
  };
  const seconds = (key: string, fallback: number, percentOf?: (f: number) => number) => {
    const t = c.named.get(key);
    return t === undefined ? fallback : take(parseQuantity(t, SECONDS, key, percentOf), fallback);
  };
  switch (c.name) {
    case 'clock':
    case 'pulse': {
      if (c.positional.length !== 2) return { error: `${c.name}() takes two levels first, IDLE and ACTIVE: ${c.name}(150V, 0V, …)` };
      const idle = take(volts(c.positional[0]!, 'the idle level'), 0);
      const active = take(volts(c.positional[1]!, 'the active level'), 0);
      if (c.name === 'pulse') {
        known(['at', 'width', 'edge']);
        const at = seconds('at', 0);
        const width = seconds('width', NaN);
        const edge = seconds('edge', width / 100);
        if (!(width > 0)) errors.push('pulse() needs a width above zero: width=5us');
        if (!(edge > 0) || edge > width) errors.push('a pulse edge must be above zero and no longer than its width');
        if (!(at >= 0)) errors.push('a pulse starts at a time of 0 or later');
        if (errors.length > 0) return { error: errors.join('; ') };
        // One pulse is a clock of one period that never repeats; it has no period to shorten.
        const { period: _p, withPeriod: _w, ...once } = clock(text, { idle, active, period: at + width + edge + 1, width, delay: at, edge, count: 1, relative: { width: false, delay: false, edge: false } });
        return { value: once };
      }
      known(['period', 'width', 'delay', 'edge', 'count']);
      const period = seconds('period', NaN);
      if (!(period > 0)) return { error: errors[0] ?? 'clock() needs a period above zero: period=1ms' };
      const share = (f: number) => f * period;
      const width = seconds('width', period / 2, share);
      const delay = seconds('delay', 0, share);
      const edge = seconds('edge', period / 100, share);
      const isPercent = (key: string) => (c.named.get(key) ?? '%').trim().endsWith('%');
      const countText = c.named.get('count');
      const count = countText === undefined ? Infinity : Number(countText);
      if (!(Number.isInteger(count) || count === Infinity) || count < 1) errors.push(`count: '${countText}' is not a whole number of pulses`);
      if (!(edge > 0)) errors.push('a clock edge must be above zero');
      if (!(width >= edge) || width + edge > period) errors.push('a clock pulse (width, then its falling edge) must fit in the period, and be no shorter than an edge');
      if (!(delay >= 0)) errors.push('a clock delay is 0 or more');
      if (errors.length > 0) return { error: errors.join('; ') };
      return { value: clock(text, { idle, active, period, width, delay, edge, count, relative: { width: isPercent('width'), delay: isPercent('delay'), edge: isPercent('edge') } }) };
    }
    case 'points': {
      known([]);
      const pts = c.positional.map((p) => {
        const [t, v] = p.split(/\s+/);
        return [take(parseQuantity(t ?? '', SECONDS, 'a point time'), 0), take(volts(v ?? '', 'a point level'), 0)] as [number, number];
      });
      if (pts.length === 0) errors.push('points() needs at least one point: points(0s 0V, 1us 10V)');
      for (let i = 1; i < pts.length; i++) if (!(pts[i]![0] > pts[i - 1]![0])) errors.push('the points must go forward in time');
      if (errors.length > 0) return { error: errors.join('; ') };
      return { value: piecewise(text, pts) };
    }
    default:
      return { error: `'${c.name}' is no waveform: ${WAVEFORM_FORMS.join('; ')}` };
  }
}
