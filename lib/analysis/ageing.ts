/**
 * An ageing scenario: how far the tubes of a design may have drifted from new, on top of
 * each type's tube-to-tube spread. Every section's emission band runs from a new, strong
 * tube at full heater voltage (the worst case for a section that must stay cut off) down
 * to the weakest the scenario allows (the worst case for a section that must pull its
 * plate low).
 */
export interface AgeingScenario {
  name: string;
  summary: string;
  /** Emission at the end of life, as a fraction of new (1: new tubes). */
  endOfLife: number;
  /** Emission at the low heater voltage, as a fraction of that at nominal (1: nominal heaters). */
  heater: number;
  /** Largest cathode interface resistance of a section (ohms; 0: none). */
  interfaceOhms: number;
  /** Emission of every tube, strong and weak alike, as a fraction of that at nominal heater voltage (a supply sweep's heater setting; 1 when absent). */
  emissionScale?: number;
}

/**
 * The scenarios `check --age` offers. The numbers are stated assumptions, not laws:
 * - end of life at 60 % of new emission: tubes are commonly replaced when a tester shows
 *   60–70 % of new (common practice, no source); we take the low end;
 * - low heaters: a supply 10 % low, taken as 80 % emission (an assumption for a worn
 *   oxide cathode, whose emission falls faster with temperature than a new one's; common
 *   practice, no source);
 * - cathode interface: up to 5 kΩ in series with the cathode, "a few kΩ" for tubes held
 *   cut off for thousands of hours (common practice, no source).
 */
export const AGEING_SCENARIOS: readonly AgeingScenario[] = [
  { name: 'new', summary: 'new tubes, only the tube-to-tube spread of each type', endOfLife: 1, heater: 1, interfaceOhms: 0 },
  { name: 'aged', summary: 'tubes anywhere from new to end of life (60 % of new emission)', endOfLife: 0.6, heater: 1, interfaceOhms: 0 },
  { name: 'low-heater', summary: 'heaters 10 % low: emission down to 80 %', endOfLife: 1, heater: 0.8, interfaceOhms: 0 },
  { name: 'interface', summary: 'cathode interface layers of up to 5 kΩ in every section', endOfLife: 1, heater: 1, interfaceOhms: 5000 },
  { name: 'end-of-life', summary: 'all three at once: end-of-life emission, low heaters, cathode interface', endOfLife: 0.6, heater: 0.8, interfaceOhms: 5000 },
];

export function findScenario(name: string): AgeingScenario | undefined {
  return AGEING_SCENARIOS.find((s) => s.name === name);
}

/** A section's emission band under a scenario: [(1 − spread)·end of life·heater, 1 + spread], both ends times the emission scale. */
export function emissionBand(spread: number, scenario: AgeingScenario): { low: number; high: number } {
  const scale = scenario.emissionScale ?? 1;
  return { low: (1 - spread) * scenario.endOfLife * scenario.heater * scale, high: (1 + spread) * scale };
}

/**
 * Emission at a heater voltage `fraction` of nominal, taken as the square of the fraction
 * (0.9 gives 81 %, in line with the low-heater scenario's 80 % at 90 %): a stated
 * assumption for oxide cathodes near their rated temperature (common practice, no source).
 */
export function heaterEmission(fraction: number): number {
  return fraction * fraction;
}
