import type { FitResult } from '../models/fit.js';
import { wrap } from './format.js';

/** The first words of every model file `fit` writes: `fit -o` overwrites only a file that starts so. */
export const FIT_MARK = '# Fitted by tubemargin fit';

/** The JSON form of a fit. */
export interface FitJson {
  schema: 'tubemargin.fit/1';
  model: Record<string, number | string>;
  perTube: Record<string, number>;
  spread: number;
  trustedPlateVolts: [number, number];
  rmsError: number;
  readings: number;
}

export function fitToJson(fit: FitResult): FitJson {
  return { schema: 'tubemargin.fit/1', model: { ...fit.model }, perTube: fit.perTube, spread: fit.spread, trustedPlateVolts: fit.trustedPlateVolts, rmsError: fit.rmsError, readings: fit.readings };
}

const sig = (x: number) => Number(x.toPrecision(6)).toString();

/**
 * The fit as design-language text to `include`: comments saying where it came from, the
 * plate voltages to trust it over and each tube's factor, then one `type` statement with
 * the fitted parameters and the spread the tubes showed (at least 1 %).
 *
 * Example: `type BENCH koren-triode { mu = 21.5068, ex = 1.30041, kg1 = 1175.61, kp = 83.9831, kvb = 305.439, spread = 12 % }`.
 */
export function fitToText(fit: FitResult, name: string, source: string): string {
  const { kind, ...params } = fit.model;
  const fields = Object.entries(params).map(([k, v]) => `${k} = ${sig(v as number)}`);
  const spread = Math.max(1, Math.ceil(fit.spread * 100));
  const tubes = Object.entries(fit.perTube).map(([t, f]) => `${t} ${f.toFixed(3)}`);
  const about = `${FIT_MARK} (${kind}) from ${source}: ${fit.readings} readings of ${tubes.length} tube${tubes.length === 1 ? '' : 's'}, plate ${sig(fit.trustedPlateVolts[0])}–${sig(fit.trustedPlateVolts[1])} V (trust it there, not beyond), RMS error ${(fit.rmsError * 100).toFixed(2)} %. Perveance factor of each tube against the type: ${tubes.join(', ')}.`;
  return [...wrap(about.slice(2), 78, '').map((l) => `# ${l}`), `type ${name} ${kind} { ${[...fields, `spread = ${spread} %`].join(', ')} }`, ''].join('\n');
}
