import type { HealthCheck } from '../schema.js';
import type { AlarmSubject } from '../types.js';
import type { EngineContext, RawEvaluation } from './evaluate.js';
import type { AlarmDescriptor } from './lifecycle.js';

/** What the crew should do when a health check fires and the configuration gives no text. */
export const DEFAULT_HEALTH_ACTIONS: Readonly<Record<HealthCheck, string>> = {
  no_data: 'Check the logger power, modem and network link: its results are missing.',
  channel_missing: 'Check the gauge wiring and the logger channel: no reading arrives.',
  flatline: 'Check the gauge and its channel: the reading has stopped changing.',
  spike: 'Check the gauge cable and connectors for intermittent contact or interference.',
  out_of_range: 'Check the gauge for an open circuit, a short or a saturated input.',
  clock_offset: 'Check the logger clock and its time synchronisation: readings are joined by their timestamps.',
  sequence_restart: 'Check the logger power supply and its event log: its scan counter keeps restarting (reboots).',
  messages_refused: 'Check the logger program and its channel map: its messages are refused (see the dead letters for the reason).',
  residual_high: 'Check the rosette elements: their readings do not fit one strain state.',
  temperature_stale: 'Check the temperature sensor and its logger: stresses use an old or default temperature.',
  result_incomplete: 'Check the missing or out-of-range elements of this group.',
  component_fault: 'Check the processor host (free disk space, storage errors): data is held at the broker or lost until it works.',
};

/** Descriptor of a health alarm. */
export function healthDescriptor(
  ctx: EngineContext,
  check: HealthCheck,
  subjectKey: string,
  subject: AlarmSubject,
  zone: string,
  location: string,
  quantity: string,
  units: string,
): AlarmDescriptor {
  return {
    key: `${check}|${subjectKey}`, subjectKey, ruleId: check, alarmClass: 'health', subject, zone, location,
    quantity, units, action: ctx.cfg.health[check].action ?? DEFAULT_HEALTH_ACTIONS[check],
  };
}

/** A single-level health evaluation (raw 0 or 1). */
export function healthEvaluation(
  ctx: EngineContext,
  check: HealthCheck,
  present: boolean,
  tMs: number,
  value: number | null,
  limit: number | null,
): RawEvaluation {
  const c = ctx.cfg.health[check];
  return {
    raw: present ? 1 : 0, tMs, onDelayMs: 0, offDelayMs: c.off_delay_s * 1000,
    levelNames: [c.level ?? ctx.cfg.health.level], value, limitOf: () => limit, trendPerS: null,
  };
}
