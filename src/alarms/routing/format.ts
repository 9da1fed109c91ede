import type { AlarmTransition } from '../types.js';

/** JSON body of an alarm message (MQTT and webhook). snake_case, units explicit. */
export interface AlarmMessageBody {
  schema: 'strainward.alarm/1';
  transition: AlarmTransition['kind'];
  at: string;
  alarm_id: string;
  structure: string;
  zone: string;
  location: string;
  subject: Record<string, string | null>;
  alarm_class: 'structural' | 'health';
  rule: string;
  quantity: string;
  value: number | null;
  limit: number | null;
  units: string;
  level: string;
  level_index: number;
  previous_level: string | null;
  state: string;
  since: string;
  trend_per_s: number | null;
  action: string;
  raise_count: number;
  repeat_count: number;
  suppressed_count: number;
  tier: number;
  acknowledged_by: string | null;
  /** Why, as the acknowledging user wrote it. */
  acknowledged_reason: string | null;
  text: string;
}

const iso = (ms: number): string => new Date(ms).toISOString();

/** A number short enough to read: 4 significant digits. */
export function readable(v: number): string {
  return Number.isInteger(v) && Math.abs(v) < 1e6 ? String(v) : String(Number(v.toPrecision(4)));
}

function subjectText(t: AlarmTransition): string {
  const s = t.alarm.subject;
  if (s.kind === 'group') return `group ${s.groupId}`;
  if (s.kind === 'logger') return `logger ${s.loggerId}`;
  if (s.kind === 'component') return `processor ${s.component}`;
  if (s.kind === 'detail') return `fatigue detail ${s.detailId} (group ${s.groupId})`;
  return `logger ${s.loggerId} channel ${s.channelId}${s.groupId === null ? '' : ` (group ${s.groupId})`}`;
}

/**
 * One line a crew can act on: level and change, structure and where, quantity, value, limit,
 * units, since when, trend, action.
 */
export function alarmText(t: AlarmTransition): string {
  const a = t.alarm;
  const u = a.units === '' || a.units === '1' ? '' : ` ${a.units}`;
  const value = a.value === null ? 'no value' : `${readable(a.value)}${u}`;
  const limit = a.limit === null ? '' : ` (limit ${readable(a.limit)}${u})`;
  const trend = a.trendPerS === null ? '' : `, trend ${a.trendPerS >= 0 ? '+' : ''}${readable(a.trendPerS)}${u}/s`;
  const change = t.kind === 'level_changed' ? `level ${t.previousLevel} -> ${a.level}` : t.kind.replace('_', ' ');
  const ack = a.acknowledgement === null ? '' : `, acknowledged by ${a.acknowledgement.user}`;
  return (
    `[${a.level.toUpperCase()}] ${change}: ${a.structureId} ${a.zone}, ${a.location} (${subjectText(t)}): ` +
    `${a.quantity} ${value}${limit}${trend}, since ${iso(a.sinceMs)}${ack}. Action: ${a.action} [${a.id}]`
  );
}

/** The JSON message body of a transition. Pure. */
export function alarmMessage(t: AlarmTransition): AlarmMessageBody {
  const a = t.alarm;
  const s = a.subject;
  return {
    schema: 'strainward.alarm/1', transition: t.kind, at: iso(t.atMs), alarm_id: a.id, structure: a.structureId,
    zone: a.zone, location: a.location,
    subject: s.kind === 'group' ? { kind: 'group', group_id: s.groupId }
      : s.kind === 'logger' ? { kind: 'logger', logger_id: s.loggerId }
      : s.kind === 'component' ? { kind: 'component', component: s.component }
      : s.kind === 'detail' ? { kind: 'detail', detail_id: s.detailId, group_id: s.groupId }
      : { kind: 'channel', logger_id: s.loggerId, channel_id: s.channelId, group_id: s.groupId },
    alarm_class: a.alarmClass, rule: a.ruleId, quantity: a.quantity, value: a.value, limit: a.limit, units: a.units,
    level: a.level, level_index: a.levelIndex, previous_level: t.previousLevel ?? null, state: a.state,
    since: iso(a.sinceMs), trend_per_s: a.trendPerS, action: a.action, raise_count: a.raiseCount,
    repeat_count: a.repeatCount, suppressed_count: a.suppressedCount, tier: a.tier,
    acknowledged_by: a.acknowledgement?.user ?? null, acknowledged_reason: a.acknowledgement?.reason ?? null, text: alarmText(t),
  };
}
