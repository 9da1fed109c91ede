import type { CompiledGroup } from '../config/compile.js';
import type { TemperatureHistory } from './temperature-history.js';

/** The temperature a group uses for one frame, and how good it is. */
export interface GroupTemperature {
  /** Mean over the group's sensors that have a reading; NaN when none has. */
  valueC: number;
  /** Age of the oldest reading used, seconds; NaN when missing. */
  ageS: number;
  stale: boolean;
}

const scratch = new Float64Array(2);

/**
 * Joins a group to its sensors' temperature at the frame time. Several sensors are averaged (e.g.
 * slab top and soffit for a mid-depth cluster). Mutates and returns `out`.
 */
export function groupTemperatureAt(
  group: CompiledGroup, histories: ReadonlyMap<string, TemperatureHistory>, timeMs: number, out: GroupTemperature,
): GroupTemperature {
  const join = group.config.temperature;
  const interpolate = join.mode === 'interpolate';
  let sum = 0;
  let used = 0;
  let worstAgeMs = 0;
  for (const t of group.temperatures) {
    const h = histories.get(t.sensorId);
    if (h === undefined || !h.at(timeMs, interpolate, scratch)) continue;
    sum += scratch[0];
    used++;
    worstAgeMs = Math.max(worstAgeMs, scratch[1]);
  }
  if (used === 0) {
    out.valueC = Number.NaN;
    out.ageS = Number.NaN;
    out.stale = false;
    return out;
  }
  out.valueC = sum / used;
  out.ageS = worstAgeMs / 1000;
  out.stale = out.ageS > join.max_age_s;
  return out;
}

/**
 * True while a frame of this group should wait for a later temperature reading: interpolation is
 * configured with a wait, some sensor has nothing after the frame yet, and the wait has not run out
 * on the pipeline clock (arrival time based, so replay decides exactly as live did).
 */
export function groupWaitsForTemperature(
  group: CompiledGroup, histories: ReadonlyMap<string, TemperatureHistory>, timeMs: number, arrivalMs: number, clockMs: number,
): boolean {
  const join = group.config.temperature;
  if (join.mode !== 'interpolate' || join.max_wait_s <= 0 || group.temperatures.length === 0) return false;
  if (clockMs >= arrivalMs + join.max_wait_s * 1000) return false;
  return group.temperatures.some((t) => !(histories.get(t.sensorId)?.hasAfter(timeMs) ?? false));
}
