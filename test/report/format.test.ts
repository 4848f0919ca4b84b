import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { formatReading, wrap } from '../../lib/report/format.js';

/** True when some line ends in a number whose unit opens the next line: the split issue #17 (item 7) asks to end. */
function splitsNumberFromUnit(lines: string[]): boolean {
  return lines.some((line, i) => i + 1 < lines.length && /(?:^|\s)[-±]?\d+(?:\.\d+)?$/.test(line) && /^\s*(?:[kMmµnp]?[VAWΩFs]|Hz|%)(?:[\s,.:;)]|$)/.test(lines[i + 1]!));
}

describe('wrap', () => {
  it("keeps the Monte Carlo interval's number with its unit at a line's end (the README's '99.0 / % to 99.3 %')", () => {
    const text = 'Monte Carlo: 10,000 samples (uniform, seed 7): yield 99.2 %, 95 % interval 99.0 % to 99.3 %: the share of builds in which every judged net keeps 1.50 V and every latch keeps both states.';
    expect(wrap(text, 80)).toEqual([
      'Monte Carlo: 10,000 samples (uniform, seed 7): yield 99.2 %, 95 % interval',
      '  99.0 % to 99.3 %: the share of builds in which every judged net keeps 1.50 V',
      '  and every latch keeps both states.',
    ]);
  });

  it('moves a number to the next line with its unit when only the number would fit, for volts, kilohms, percent and negative volts', () => {
    for (const quantity of ['2.01 V', '220 kΩ', '12 %', '-12 V', '4.7 µs', '10 kHz']) {
      const [number] = quantity.split(' ');
      const head = 'The plate of the first stage sits at';
      // The width at which the number alone would still fit on the first line.
      const width = head.length + 1 + number!.length;
      const lines = wrap(`${head} ${quantity} when the rail is low.`, width);
      expect(lines[0], quantity).toBe(head);
      expect(lines[1]?.startsWith(`  ${quantity} `), quantity).toBe(true);
      expect(splitsNumberFromUnit(lines), quantity).toBe(false);
    }
  });

  it('glues only a number that stands alone: a name ending in a digit may end a line', () => {
    expect(wrap('the tube V1 V at rest', 8)).toEqual(['the tube', '  V1 V', '  at', '  rest']);
    expect(wrap('stage q1 V is low', 8)).toEqual(['stage q1', '  V is', '  low']);
  });

  it('prints plain spaces, squeezing every run of white space (a no-break space in the text included) as it always did', () => {
    expect(wrap('  a\u00a0b \t c\n12 V', 80)).toEqual(['a b c 12 V']);
    expect(wrap('', 80)).toEqual([]);
    expect(wrap('a b', 80).join('')).not.toContain('\u00a0');
  });

  it('changes nothing but where lines break, never splits a number from its unit, and keeps within the width all it can', () => {
    const word = fc.oneof(
      fc.constantFrom('the', 'plate', 'grid', 'keeps', 'margin', 'V1', 'q2', 'at', 'to', 'interval', 'a-rather-long-word-for-its-line'),
      fc.tuple(fc.constantFrom('2.01', '-12', '220', '99.0', '1,000', '0'), fc.constantFrom('V', 'kΩ', '%', 'ms', 'mA', 'pF')).map(([n, u]) => `${n} ${u}`),
    );
    fc.assert(
      fc.property(fc.array(word, { minLength: 1, maxLength: 40 }), fc.integer({ min: 8, max: 80 }), fc.constantFrom('', '  ', '    '), (words, width, indent) => {
        const text = words.join(' ');
        const lines = wrap(text, width, indent);
        expect(lines.map((l, i) => (i === 0 ? l : l.slice(indent.length))).join(' ')).toBe(text);
        expect(lines.slice(1).every((l) => l.startsWith(indent))).toBe(true);
        expect(splitsNumberFromUnit(lines)).toBe(false);
        // A line past the width holds one piece that could not be broken: a long word or a number with its unit.
        for (const l of lines) if (l.length > width) expect(l.trimStart().split(' ').length).toBeLessThanOrEqual(2);
      }),
      { numRuns: 500, seed: 20261217 },
    );
  });
});

describe('readings a builder could take', () => {
  it('show a cut-off section as 0 A and 0 W alike, not 0 A beside femtowatts (a bench meter reads nothing below a picoamp: common practice, no source)', () => {
    expect(formatReading(6e-17, 'A')).toBe('0 A');
    expect(formatReading(6e-17 * 24, 'W')).toBe('0 W');
    expect(formatReading(608e-6, 'A')).toBe('608 µA');
    expect(formatReading(-2e-9, 'A')).toBe('-2 nA');
  });
});
