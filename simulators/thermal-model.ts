import type { Scenario } from './scenario.js';

/**
 * Daily temperature cycle of the invented deck, degC, as harmonic curves of the scenario hour.
 * Air peaks mid-afternoon; the thin steel follows air quickly (small lag, some sun on the south
 * girder); the slab top takes the sun and peaks later and higher; the soffit lags by hours and
 * swings less, so the slab top is warmer than the soffit in the afternoon (a positive gradient)
 * and cooler before dawn. Shapes and coefficients are invented for the demo scenario.
 */
export interface DeckTemperatures {
  air: number;
  slabTop: number;
  slabBottom: number;
  steelNorth: number;
  steelSouth: number;
}

export type SensorRole = keyof DeckTemperatures;

/** Scenario hour of day (0..24, may exceed 24: callers use it periodically) at t_s seconds into the run. */
export function scenarioHour(scn: Scenario, t_s: number): number {
  const startHour = (((scn.start_ms % 86_400_000) + 86_400_000) % 86_400_000) / 3_600_000;
  return startHour + (t_s / scn.day_s) * 24;
}

const wave = (hour: number, peakHour: number) => Math.cos((2 * Math.PI * (hour - peakHour)) / 24);

/** True temperatures at t_s seconds into the run. Allocates one small object. */
export function deckTemperatures(scn: Scenario, t_s: number): DeckTemperatures {
  const h = scenarioHour(scn, t_s);
  const { mean_degC: m, amplitude_degC: a } = scn.temperature;
  return {
    air: m + a * wave(h, 15),
    steelNorth: m + 1.05 * a * wave(h, 15.3),
    steelSouth: m + 0.8 + 1.3 * a * wave(h, 14.8),
    slabTop: m + 1.5 + 1.6 * a * wave(h, 15.5),
    slabBottom: m + 0.3 + 0.5 * a * wave(h, 19),
  };
}

/** Which curve a temperature sensor follows, from its id (unknown ids follow air). */
export function sensorRole(sensorId: string): SensorRole {
  if (sensorId.includes('slab-top')) return 'slabTop';
  if (sensorId.includes('slab-bottom') || sensorId.includes('soffit')) return 'slabBottom';
  if (sensorId.includes('steel')) return sensorId.includes('south') ? 'steelSouth' : 'steelNorth';
  return 'air';
}
