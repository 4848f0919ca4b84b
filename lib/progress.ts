/**
 * How a long analysis tells its caller how far it has got: `done` of `total` units of the
 * phase named `phase` (a check's "levels, round 2", a sweep's "points"). The library never
 * draws anything; the command line turns these calls into a bar on a terminal.
 * `total` may be an estimate that grows as the work finds out how much is left (a
 * bisection that has not yet bracketed its answer).
 */
export type Progress = (phase: string, done: number, total: number) => void;
