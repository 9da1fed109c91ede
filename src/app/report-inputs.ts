import type { AlarmsConfig, AlarmTransition } from '../alarms/index.js';
import type { QuantityLimits, ReportAlarmTransition } from '../report/types.js';

/** An alarm transition in the report's shape (the report takes a small local record). Pure. */
export function reportAlarm(t: AlarmTransition): ReportAlarmTransition {
  const a = t.alarm;
  const s = a.subject;
  return {
    time_ms: t.atMs,
    alarm_id: a.id,
    class: a.alarmClass,
    state: a.state,
    level: a.level,
    group_id: s.kind === 'group' || s.kind === 'detail' ? s.groupId : s.kind === 'channel' ? s.groupId ?? undefined : undefined,
    channel: s.kind === 'channel' ? `${s.loggerId}/${s.channelId}` : s.kind === 'logger' ? s.loggerId : undefined,
    quantity: a.quantity,
    value: a.value ?? undefined,
    limit: a.limit ?? undefined,
    message: `${t.kind}${a.value !== null ? `: ${a.quantity} ${round(a.value)} ${a.units}` : ''}${a.limit !== null ? ` (limit ${round(a.limit)})` : ''}`,
  };
}

/** Alarm bands for the report's plots from the limit rules of a configuration. Pure. */
export function reportLimits(cfg: AlarmsConfig | null): QuantityLimits {
  const limits: QuantityLimits = {};
  for (const r of cfg?.rules ?? []) {
    if (r.kind !== 'limit') continue;
    const groups = r.scope.kind === 'groups' ? r.scope.group_ids : undefined;
    const bands = (limits[r.quantity] ??= []);
    for (const th of r.thresholds) {
      bands.push({ level: th.level, ...(r.direction === 'above' ? { upper: th.value } : { lower: th.value }), ...(groups ? { groups } : {}) });
    }
  }
  return limits;
}

const round = (v: number): string => (Math.abs(v) >= 100 ? v.toFixed(0) : Math.abs(v) >= 1 ? v.toFixed(2) : v.toPrecision(3));
