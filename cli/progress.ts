import type { Progress } from '../lib/progress.js';
import type { CliIo } from './io.js';

/** A run shorter than this shows no bar at all: a bar that flashes for a moment is noise. */
export const PROGRESS_AFTER_MS = 2000;

/** A progress display for a long run, and the function to end it. */
export interface ProgressDisplay {
  progress: Progress | undefined;
  stop: () => void;
}

/** "1m05s" or "12s". */
function duration(seconds: number): string {
  const s = Math.max(0, Math.round(seconds));
  return s >= 60 ? `${Math.floor(s / 60)}m${String(s % 60).padStart(2, '0')}s` : `${s}s`;
}

/**
 * The time left in a phase, from its own rate so far: the time spent in the phase times
 * the share of it still to do. Undefined before anything is done, where any figure would be
 * a guess (cli-progress's own estimate, from its first few updates, opened a 22 s run with
 * "55m45s left").
 */
export function timeLeft(elapsedMs: number, done: number, total: number): string {
  if (done <= 0 || total <= done) return '';
  const seconds = ((elapsedMs / 1000) * (total - done)) / done;
  return seconds < 1 ? 'under a second left' : `about ${duration(seconds)} left`;
}

/**
 * A bar on stderr for a run that takes longer than `PROGRESS_AFTER_MS`, on a terminal
 * only (nothing on a pipe, nothing in tests that capture output). The bar is cli-progress
 * (it handles the terminal's width and redraws), loaded here only when stderr is a
 * terminal; it appears once the run has lasted two seconds, and each phase restarts it with
 * its own name, count and estimate.
 */
export async function progressDisplay(io: CliIo, what: string): Promise<ProgressDisplay> {
  if (!io.stderrIsTTY) return { progress: undefined, stop: () => {} };
  const { SingleBar } = await import('cli-progress');
  const start = performance.now();
  const bar = new SingleBar({ stream: process.stderr, format: `${what}: {phase} [{bar}] {value}/{total} {left}`, hideCursor: true, clearOnComplete: true });
  let shown = false;
  let phase = '';
  let phaseStart = start;
  const progress: Progress = (name, done, total) => {
    const now = performance.now();
    if (name !== phase) {
      phase = name;
      phaseStart = now;
    }
    const payload = { phase, left: timeLeft(now - phaseStart, done, total) };
    if (!shown) {
      if (now - start < PROGRESS_AFTER_MS) return;
      shown = true;
      bar.start(total, done, payload);
      return;
    }
    bar.setTotal(total);
    bar.update(done, payload);
  };
  return { progress, stop: () => shown && bar.stop() };
}

/** Runs `work` with a progress display (see `progressDisplay`), ended however the work ends. */
export async function withProgress<T>(io: CliIo, what: string, work: (progress: Progress | undefined) => T): Promise<T> {
  const display = await progressDisplay(io, what);
  try {
    return work(display.progress);
  } finally {
    display.stop();
  }
}
