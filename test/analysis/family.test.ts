import { describe, expect, it } from 'vitest';
import { familyDesigns, gateDesigns } from '../../bench/family.js';
import { runFamily } from '../../bench/familyOracle.js';

/**
 * `check` against the truth on a subset of the oracle family (bench/family.ts): small
 * random designs, every stage different, each solved whole at every corner of its
 * tolerance box and at random points inside it. The oracle is the definition of worst
 * case over a tolerance box (the extreme over every admissible set of part values,
 * approximated from inside by every corner and sampled interior points); a reported
 * level may never be better than a level the whole circuit really takes, and a latch
 * holds exactly when both its states exist at every point. `npm run bench` runs the whole
 * family and records the figures in docs/PERFORMANCE.md.
 */
describe('check against exhaustive corners of a family of small random designs', () => {
  // Twelve designs: four latches, four fan-outs, four chains, each with ten to fourteen toleranced parameters.
  const result = runFamily(familyDesigns(2026015, 12), 30);

  it('never reports a level better than one the whole circuit takes at a corner or inside the box', () => {
    expect(result.levels).toBeGreaterThan(60);
    expect(result.optimistic.map((l) => `${l.design} ${l.net} ${l.level}: reported ${l.reported}, truth ${l.truth}`)).toEqual([]);
  });

  it('reports levels within 0.1 V of the truth at the median and 0.5 V at worst, over the designs that hold (the issue\'s figures)', () => {
    expect(result.median).toBeLessThanOrEqual(0.1);
    expect(result.worst).toBeLessThanOrEqual(0.5);
  });

  it('fails nothing by a bound alone: every FAIL carries a witness', () => {
    expect(Object.keys(result.statuses).filter((k) => k.startsWith('fail/') && k !== 'fail/witness')).toEqual([]);
    expect(result.statuses['fail/witness']).toBeGreaterThan(5);
  });

  it('says a latch holds exactly when both of its states exist at every point, and decides every one', () => {
    expect(result.latches).toBe(4);
    expect(result.undecidedLatches).toEqual([]);
    expect(result.falseNotHolding).toEqual([]);
    expect(result.falseHolding).toEqual([]);
    // The family is not easy by construction: some latches hold and some do not.
    const truths = result.comparisons.flatMap((c) => (c.latch ? [c.latch.truth] : []));
    expect(truths).toContain(true);
    expect(truths).toContain(false);
  });

  it('gives every failure it decided by corners a witness that re-solving the whole design reproduces', () => {
    expect(result.witnesses).toBeGreaterThan(5);
    expect(result.unreproduced).toEqual([]);
    // Every FAIL decided by corners carries its witness.
    const failed = result.comparisons.flatMap((c) => c.verdicts).filter((v) => v.status === 'fail' && v.basis === 'witness');
    expect(failed.every((v) => v.witness === true)).toBe(true);
  });
});

describe('check against exhaustive corners of gates whose levels depend on buttons pressed together', () => {
  // Four designs of the gate family: every corner in each of the four button states (neither, either, both).
  const result = runFamily(gateDesigns(2026016, 4), 20);

  it('never reports a level better than the truth, and stays within 0.1 V at the median and 0.5 V at worst', () => {
    expect(result.levels).toBeGreaterThan(30);
    expect(result.optimistic.map((l) => `${l.design} ${l.net} ${l.level}: reported ${l.reported}, truth ${l.truth}`)).toEqual([]);
    expect(result.median).toBeLessThanOrEqual(0.1);
    expect(result.worst).toBeLessThanOrEqual(0.5);
  });

  it('fails nothing by a bound alone, and every witness reproduces', () => {
    expect(Object.keys(result.statuses).filter((k) => k.startsWith('fail/') && k !== 'fail/witness')).toEqual([]);
    expect(result.unreproduced).toEqual([]);
  });
});
