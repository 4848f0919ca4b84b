import type { Design, TubeSection } from '../design/model.js';
import { findLibraryEntry } from '../models/library.js';
import { evaluateTube, P, R } from '../models/tubeEquations.js';
import type { OperatingPoint } from '../solve/operatingPoint.js';
import type { LevelChain } from './levelChain.js';
import { searchVertex } from './vertex.js';

/** Resistors may dissipate half their rating (common practice, no source). */
export const DERATING = 0.5;

export interface SectionRating {
  section: string;
  model: string;
  /** Plate and screen dissipation at the corner that makes the plate dissipation largest (watts). */
  plateWatts: number;
  screenWatts: number;
  /** The handbook maxima, for library types. */
  plateRating: number | undefined;
  screenRating: number | undefined;
  ok: boolean;
}

export interface ResistorRating {
  resistor: string;
  /** Power at the nominal operating point, and the most at the corners of largest plate dissipation (watts); NaN when neither was solved. */
  watts: number;
  rating: number;
  /** Power as a share of the rating; above the derating (50 %) is over. */
  share: number;
  ok: boolean;
}

export interface HeaterBudget {
  /** Tube type (model name) and its library designation. */
  model: string;
  designation: string;
  /** Envelopes: sections of the type over sections per envelope, rounded up. */
  envelopes: number;
  volts: number;
  amps: number;
  /**
   * Heaters in series across each rail above the heater voltage, every envelope in exactly
   * one string: as few strings as the rail allows, as even as can be, so a rail has one
   * entry (every string alike) or two (strings of k and of k − 1 heaters), each with how
   * many strings of that length and the dropping resistor each of them needs.
   */
  strings: { rail: string; perString: number; strings: number; droppingOhms: number; droppingWatts: number }[];
}

export interface Ratings {
  sections: SectionRating[];
  resistors: ResistorRating[];
  /** Current drawn from each rail at the nominal operating point (amps; negative: the rail takes current in). */
  rails: { rail: string; volts: number; amps: number; watts: number }[];
  heaters: HeaterBudget[];
  /** Cathode followers: the heater–cathode voltage at their highest nominal output against the rating (heaters at 0 V). */
  followers: { section: string; volts: number; rating: number | undefined; ok: boolean }[];
  ok: boolean;
}

/**
 * Ratings and budgets. Plate and screen dissipation of every driving section in worst
 * case: for each case where the section conducts, the vertex of the local region that
 * makes its plate dissipation largest (linearised by finite differences, solved exactly,
 * re-checked), against the library's maxima. Resistor power at the nominal operating
 * point and at those corners, against half the rating (derating, common practice, no
 * source). Current drawn from every rail at the nominal operating point. The heater
 * budget of every library type: envelopes, heater voltage and current, and series strings
 * across each rail with the dropping resistor each needs. Cathode followers' heater–
 * cathode voltage at their nominal output, heaters taken at 0 V.
 */
export function ratingsOf(design: Design, chain: LevelChain, op: OperatingPoint | undefined): Ratings {
  const modelOf = new Map(design.parts.filter((p): p is TubeSection => p.type === 'tube').map((p) => [p.name, p.model]));
  const libraryOf = (model: string) => {
    const m = design.models.find((x) => x.name === model);
    return m?.library ? findLibraryEntry(m.library) : undefined;
  };
  const sections = new Map<string, SectionRating>();
  const resistorWatts = new Map<string, number>();
  for (const r of op?.resistors ?? []) resistorWatts.set(r.name, r.watts);
  const out = new Float64Array(R.size);
  for (const net of chain.nets.values()) {
    if (net.polarity !== 'inverting') continue;
    const { problem } = chain.problem(net.region, undefined, net.kind);
    const c = problem.circuit;
    for (const k of chain.casesOf(net).low) {
      const t = net.driverPositions[k.on!]!;
      const bands = chain.bandsOf(net, k.on);
      const dissipation = (): { plate: number; screen: number } => {
        const vk = problem.volts(c.tK[t]!);
        const vak = problem.volts(c.tA[t]!) - vk;
        const vsk = c.hasScreen[t] ? problem.volts(c.tS[t]!) - vk : 0;
        evaluateTube(c.tubeParams, t * P.size, problem.volts(c.tG[t]!) - vk, vak, vsk, out, 0);
        return { plate: out[R.ia]! * vak, screen: out[R.is]! * vsk };
      };
      const memo = chain.memo(`dissipation|${net.kind}|${t}|${chain.levelKey(net, k.on)}`, () => {
        const value = (v: Float64Array) => (problem.solve(v) ? dissipation().plate : undefined);
        const found = searchVertex(bands, 'max', (v) => {
          const here = value(v);
          if (here === undefined) return undefined;
          // Slopes by forward differences: dissipation is not a node voltage, so the adjoint does not give it.
          const slopes = bands.map((b, i) => {
            const h = (b.high - b.low) * 1e-3;
            if (h === 0) return 0;
            const moved = Float64Array.from(v);
            moved[i] = v[i]! + h <= b.high ? v[i]! + h : v[i]! - h;
            const there = value(moved);
            return there === undefined ? 0 : (there - here) / (moved[i]! - v[i]!);
          });
          problem.solve(v);
          return { value: here, slopes };
        });
        if (!found?.vertex || !problem.solve(found.vertex)) return undefined;
        const d = dissipation();
        // Resistor power at this corner, by position in the region (names are put back per net).
        const watts: number[] = [];
        for (let e = 0; e < c.gA.length; e++) {
          if (c.gPart[e]! < 0) continue;
          const dv = problem.volts(c.gA[e]!) - problem.volts(c.gB[e]!);
          watts.push(dv * dv * c.gS[e]!);
        }
        return { ...d, watts };
      });
      if (!memo) continue;
      const name = net.drivers[k.on!]!;
      const entry = libraryOf(modelOf.get(name)!);
      const have = sections.get(name);
      if (!have || memo.plate > have.plateWatts) {
        const plateRating = entry?.ratings.plateWatts;
        const screenRating = entry?.ratings.screenWatts;
        sections.set(name, {
          section: name,
          model: modelOf.get(name)!,
          plateWatts: memo.plate,
          screenWatts: memo.screen,
          plateRating,
          screenRating,
          ok: (plateRating === undefined || memo.plate <= plateRating) && (screenRating === undefined || memo.screen <= screenRating),
        });
      }
      const resistorsHere = net.region.parts.filter((p) => p.type === 'resistor');
      resistorsHere.forEach((p, i) => resistorWatts.set(p.name, Math.max(resistorWatts.get(p.name) ?? 0, memo.watts[i] ?? 0)));
    }
  }
  const resistors: ResistorRating[] = design.parts.flatMap((p) => {
    if (p.type !== 'resistor') return [];
    // Unmeasured (no nominal operating point, and in no region's corner) is not 0 W: it cannot pass.
    const watts = resistorWatts.get(p.name) ?? NaN;
    return [{ resistor: p.name, watts, rating: p.watts, share: watts / p.watts, ok: watts <= DERATING * p.watts }];
  });
  const rails = design.rails.map((r) => {
    const amps = op ? railCurrent(design, op, r.name) : NaN;
    return { rail: r.name, volts: r.volts, amps, watts: amps * r.volts };
  });
  const heaters: HeaterBudget[] = [];
  for (const m of design.models) {
    const entry = m.library ? findLibraryEntry(m.library) : undefined;
    const count = [...modelOf.values()].filter((x) => x === m.name).length;
    if (!entry || count === 0) continue;
    const envelopes = Math.ceil(count / entry.sectionsPerEnvelope);
    const { heaterVolts: hv, heaterAmps: ha } = entry.ratings;
    const strings = design.rails
      .filter((r) => Math.abs(r.volts) >= hv)
      .flatMap((r) => {
        const most = Math.min(envelopes, Math.floor(Math.abs(r.volts) / hv));
        const count = Math.ceil(envelopes / most);
        const short = Math.floor(envelopes / count);
        const long = envelopes - short * count;
        const group = (strings: number, perString: number) => {
          const drop = Math.abs(r.volts) - perString * hv;
          return { rail: r.name, perString, strings, droppingOhms: drop / ha, droppingWatts: drop * ha };
        };
        return [...(long > 0 ? [group(long, short + 1)] : []), ...(count - long > 0 ? [group(count - long, short)] : [])];
      });
    heaters.push({ model: m.name, designation: entry.designation, envelopes, volts: hv, amps: ha, strings });
  }
  const followers = [...chain.index.follower].map((s) => {
    const section = chain.index.sections.get(s)!;
    const volts = op?.nodes.get(section.cathode) ?? NaN;
    const rating = libraryOf(section.model)?.ratings.heaterCathodeVolts;
    return { section: s, volts, rating, ok: rating === undefined || !(Math.abs(volts) > rating) };
  });
  const all = [...sections.values()].sort((a, b) => b.plateWatts - a.plateWatts);
  return { sections: all, resistors: resistors.sort((a, b) => (Number.isNaN(a.share) || Number.isNaN(b.share) ? Number(Number.isNaN(b.share)) - Number(Number.isNaN(a.share)) : b.share - a.share)), rails, heaters, followers, ok: all.every((s) => s.ok) && resistors.every((r) => r.ok) && followers.every((f) => f.ok) };
}

/** The current a rail gives out at an operating point: through the resistors and into the plates, screens and cathodes of sections on it. */
function railCurrent(design: Design, op: OperatingPoint, rail: string): number {
  const partOf = new Map(design.parts.map((p) => [p.name, p]));
  let amps = 0;
  for (const r of op.resistors) {
    const p = partOf.get(r.name);
    if (p?.type !== 'resistor') continue;
    if (p.a === rail) amps += r.amps;
    if (p.b === rail) amps -= r.amps;
  }
  for (const t of op.tubes) {
    const p = partOf.get(t.name);
    if (p?.type !== 'tube') continue;
    if (p.plate === rail) amps += t.plateAmps;
    if (p.screen === rail) amps += t.screenAmps;
    if (p.cathode === rail) amps -= t.plateAmps + t.gridAmps + t.screenAmps;
  }
  return amps;
}
