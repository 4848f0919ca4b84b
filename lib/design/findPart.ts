import { error, type Diagnostic } from '../source/diagnostic.js';
import { didYouMean } from '../source/suggest.js';
import type { Design, Part, PartType } from './model.js';

/**
 * Looks a part up by its full name, as a command-line option names it (`--close S1`,
 * `--close bed[2]/START`). A missing part, or one of another type than asked for, is an
 * `unknown-part` diagnostic with the closest name of the right type.
 *
 * Example: `findPart(d, 'STRT', 'switch')` in a design with switch `START` gives a
 * diagnostic whose note is "did you mean 'START'?".
 */
export function findPart<T extends PartType>(design: Design, name: string, type?: T): { part: Extract<Part, { type: T }> } | { diagnostic: Diagnostic } {
  const candidates = design.parts.filter((p) => type === undefined || p.type === type);
  const part = candidates.find((p) => p.name === name);
  if (part) return { part: part as Extract<Part, { type: T }> };
  const other = design.parts.find((p) => p.name === name);
  const what = type === undefined ? 'part' : type === 'tube' ? 'section' : type;
  const message = other ? `'${name}' is a ${other.type}, not a ${what}` : `the design has no ${what} '${name}'`;
  return { diagnostic: error('unknown-part', message, undefined, didYouMean(name, candidates.map((p) => p.name))) };
}
