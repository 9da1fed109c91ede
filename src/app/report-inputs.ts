import type { AlarmsConfig, AlarmTransition } from '../alarms/index.js';
import type { CompiledFatigue } from '../config/compile-fatigue.js';
import { remainingLifeYears, REMAINING_LIFE_ASSUMPTIONS } from '../fatigue/detail.js';
import type { FatigueSnapshot } from '../pipeline/fatigue-stage.js';
import type { QuantityLimits, ReportAlarmTransition, ReportFatigue, ReportFatigueDetail } from '../report/types.js';

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

/** A fatigue snapshot (the replay's end) in the report's shape, with the comparison run's when given. Pure. */
export function reportFatigue(cfg: CompiledFatigue, s: FatigueSnapshot, comparison?: { cfg: CompiledFatigue; snapshot: FatigueSnapshot }): ReportFatigue {
  return {
    atMs: s.nowMs,
    details: reportFatigueDetails(cfg, s),
    assumptions: REMAINING_LIFE_ASSUMPTIONS,
    ...(comparison === undefined ? {} : { comparison: reportFatigueDetails(comparison.cfg, comparison.snapshot) }),
  };
}

function reportFatigueDetails(cfg: CompiledFatigue, s: FatigueSnapshot): ReportFatigueDetail[] {
  const byId = new Map(cfg.details.map((d) => [d.id, d]));
  return s.details.map(({ id, groupId, figures: f }) => {
    const d = byId.get(id)!;
    const life = remainingLifeYears(f.damage, f.damagePerDay);
    return {
      id, groupId, location: d.location, describe: d.describe, curve: d.params.curve,
      damage: f.damage, damagePerDay: Number.isFinite(f.damagePerDay) ? f.damagePerDay : null, rateWindowS: f.rateWindowS,
      remainingLifeYears: Number.isNaN(life) ? null : life, cycles: f.cycles, monitoredS: f.monitoredS, notMonitoredS: f.notMonitoredS,
      breaks: f.breaks, binWidthMPa: d.params.binWidthMPa, counts: f.histogramCounts,
    };
  });
}
