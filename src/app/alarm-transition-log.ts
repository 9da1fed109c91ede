import type { AlarmSubject, AlarmTransition } from '../alarms/types.js';

/** A subject in words: `group G3`, `channel L1/ch07`, `logger L1`, `component database`. */
export function subjectText(s: AlarmSubject): string {
  switch (s.kind) {
    case 'group': return `group ${s.groupId}`;
    case 'channel': return `channel ${s.loggerId}/${s.channelId}${s.groupId === null ? '' : ` (group ${s.groupId})`}`;
    case 'logger': return `logger ${s.loggerId}`;
    case 'component': return `component ${s.component}`;
    case 'detail': return `fatigue detail ${s.detailId} (group ${s.groupId})`;
  }
}

const LOGGED: ReadonlySet<AlarmTransition['kind']> = new Set(['raised', 'level_changed', 'cleared', 'acknowledged']);

/**
 * The warning lines of an alarm batch's transitions (raised, level changed, cleared,
 * acknowledged), with level, class, subject, value and limit. Escalations and flapping
 * suppression are in the alarm log file. Pure.
 */
export function transitionLogLines(transitions: readonly AlarmTransition[]): Array<[event: string, detail: Record<string, unknown>]> {
  return transitions.filter((t) => LOGGED.has(t.kind)).map((t) => {
    const a = t.alarm;
    return [`alarm_${t.kind}`, {
      alarmId: a.id, alarmLevel: a.level, class: a.alarmClass, subject: subjectText(a.subject), quantity: a.quantity,
      value: a.value, limit: a.limit, units: a.units, at: new Date(t.atMs).toISOString(),
      ...(t.previousLevel === undefined ? {} : { previousLevel: t.previousLevel }),
      ...(t.kind === 'acknowledged' && a.acknowledgement !== null ? { user: a.acknowledgement.user, reason: a.acknowledgement.reason } : {}),
    }];
  });
}
