import type { HealthConfig } from '../alarms/schema-health.js';
import { hampelStep, type HampelState } from '../alarms/engine/hampel.js';
import type { TemperatureHistory } from './temperature-history.js';

interface SensorState {
  hampel: HampelState;
  /** Readings of an excursion not yet judged (time ms, degC), oldest first: kept out of the history. */
  heldMs: number[];
  heldC: number[];
}

/**
 * The spike test on temperature readings (the health section's settings, unit degC), before they
 * join a sensor's history: a spike is dropped, so no result is computed from it; a reading that
 * stands out waits for the next reading before it is used (meanwhile the groups use the previous
 * one, or wait for a later one as their join says). Keyed per sensor; arrival order; no clock.
 */
export class TemperatureScreen {
  private readonly sensors = new Map<string, SensorState>();
  /** Temperature readings dropped as spikes. */
  dropped = 0;

  constructor(private readonly health: HealthConfig | undefined) {}

  /** One accepted reading of a sensor (degC): adds to `history` what may be used now. Mutates the state and the history. */
  add(sensorId: string, history: TemperatureHistory, timeMs: number, valueC: number): void {
    const h = this.health;
    if (h === undefined || !h.spike.enabled) {
      history.add(timeMs, valueC);
      return;
    }
    let st = this.sensors.get(sensorId);
    if (st === undefined) this.sensors.set(sensorId, (st = { hampel: { window: [] }, heldMs: [], heldC: [] }));
    const v = hampelStep(st.hampel, valueC, h.spike.window_samples, h.spike.k_mads, h.spike.min_deviation_by_unit.degC ?? h.spike.min_deviation);
    const ended = Math.min(v.ended, st.heldMs.length);
    for (let k = 0; k < ended; k++) {
      const t = st.heldMs.shift()!;
      const c = st.heldC.shift()!;
      if (v.spike) this.dropped++;
      else history.add(t, c);
    }
    if (v.held) {
      st.heldMs.push(timeMs);
      st.heldC.push(valueC);
    } else history.add(timeMs, valueC);
  }
}
