import type { Point } from '../../model/point.js';
import { ALARM_STATE_CODES, type AlarmTransition } from '../types.js';

/** Numeric code per transition kind (field `transition_code`). */
export const TRANSITION_CODES: Readonly<Record<AlarmTransition['kind'], number>> = {
  raised: 1, level_changed: 2, acknowledged: 3, cleared: 4, escalated: 5, suppressed_flapping: 6,
};

/**
 * A transition as a database point: measurement `sw_alarm`, identifiers in tags, numeric fields
 * only (value and limit omitted when absent). Pure.
 */
export function transitionToPoint(t: AlarmTransition): Point {
  const a = t.alarm;
  const s = a.subject;
  const tags: Record<string, string> = {
    structure: a.structureId, zone: a.zone, alarm_id: a.id, rule: a.ruleId, alarm_class: a.alarmClass,
    level: a.level, transition: t.kind, state: a.state, quantity: a.quantity,
  };
  if (s.kind === 'group') tags.group = s.groupId;
  else if (s.kind === 'component') tags.component = s.component;
  else if (s.kind === 'detail') { tags.detail = s.detailId; tags.group = s.groupId; }
  else {
    tags.logger = s.loggerId;
    if (s.kind === 'channel') {
      tags.channel = s.channelId;
      if (s.groupId !== null) tags.group = s.groupId;
    }
  }
  const fields: Record<string, number> = {
    level_index: a.levelIndex, state_code: ALARM_STATE_CODES[a.state], transition_code: TRANSITION_CODES[t.kind],
    raise_count: a.raiseCount, tier: a.tier,
  };
  if (a.value !== null && Number.isFinite(a.value)) fields.value = a.value;
  if (a.limit !== null && Number.isFinite(a.limit)) fields.limit = a.limit;
  if (a.trendPerS !== null && Number.isFinite(a.trendPerS)) fields.trend_per_s = a.trendPerS;
  return { measurement: 'sw_alarm', tags, fields, timeMs: t.atMs };
}
