import type { AlarmsConfig, Recipient, Route } from '../schema.js';
import type { Alarm } from '../types.js';

/** Routes whose every criterion matches the alarm (structure, zone, class, level). Pure. */
export function matchingRoutes(cfg: AlarmsConfig, alarm: Alarm): Route[] {
  return cfg.routes.filter((r) => {
    const m = r.match;
    return (
      (m.structure === undefined || m.structure.includes(alarm.structureId)) &&
      (m.zone === undefined || m.zone.includes(alarm.zone)) &&
      (m.alarm_class === undefined || m.alarm_class.includes(alarm.alarmClass)) &&
      (m.level === undefined || m.level.includes(alarm.level))
    );
  });
}

/** How many tiers an alarm can escalate through: the most among its routes (at least 1). */
export function tierCount(cfg: AlarmsConfig, alarm: Alarm): number {
  return Math.max(1, ...matchingRoutes(cfg, alarm).map((r) => r.tiers.length));
}

/** Recipients of the given tiers over all matching routes, each once, in route order. */
export function recipientsOfTiers(cfg: AlarmsConfig, alarm: Alarm, tiers: readonly number[]): Recipient[] {
  const ids = new Set<string>();
  for (const route of matchingRoutes(cfg, alarm)) {
    for (const t of tiers) for (const id of route.tiers[t] ?? []) ids.add(id);
  }
  return cfg.recipients.filter((r) => ids.has(r.id));
}
