import { Chalk, type ChalkInstance } from 'chalk';
import type { CliIo } from './io.js';

/**
 * The colour policy: colour only on a terminal with NO_COLOR unset; FORCE_COLOR forces it
 * (FORCE_COLOR=0 turns it off), following the conventions of no-color.org and of chalk.
 */
export function chalkFor(io: CliIo, stream: 'stdout' | 'stderr'): ChalkInstance {
  const force = io.env.FORCE_COLOR;
  let on: boolean;
  if (force !== undefined && force !== '') on = force !== '0' && force !== 'false';
  else on = (stream === 'stdout' ? io.stdoutIsTTY : io.stderrIsTTY) && (io.env.NO_COLOR === undefined || io.env.NO_COLOR === '');
  return new Chalk({ level: on ? 1 : 0 });
}
