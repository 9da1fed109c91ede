import type { Ack, AckRefusal, AlarmClass, AlarmTransition } from '../types.js';
import type { EngineState } from './state.js';

/** Who may acknowledge each alarm class. */
export type AckPermissions = Readonly<Record<AlarmClass, readonly string[]>>;

/**
 * Acknowledge an alarm if the user may acknowledge its class. An active alarm becomes
 * active_acknowledged; a cleared one closes (and leaves the visible set). Mutates `state.alarms`.
 */
export function acknowledge(
  state: EngineState,
  ack: Ack,
  permissions: AckPermissions,
): { transition: AlarmTransition } | { refusal: AckRefusal } {
  const refuse = (code: AckRefusal['code'], reason: string): { refusal: AckRefusal } => ({
    refusal: { code, alarmId: ack.alarmId, user: ack.user, userReason: ack.reason, reason, atMs: ack.atMs },
  });
  const alarm = Object.values(state.alarms).find((a) => a.id === ack.alarmId);
  if (alarm === undefined) return refuse('unknown_alarm', `no visible alarm with id "${ack.alarmId}"`);
  if (!permissions[alarm.alarmClass].includes(ack.user)) {
    return refuse('user_not_allowed', `user "${ack.user}" may not acknowledge ${alarm.alarmClass} alarms`);
  }
  if (alarm.state === 'active_acknowledged') {
    return refuse('already_acknowledged', `already acknowledged by "${alarm.acknowledgement?.user}"`);
  }
  alarm.acknowledgement = { user: ack.user, reason: ack.reason, atMs: ack.atMs };
  alarm.lastChangeMs = ack.atMs;
  if (alarm.state === 'cleared_unacknowledged') {
    alarm.state = 'closed';
    delete state.alarms[alarm.key];
  } else alarm.state = 'active_acknowledged';
  return { transition: { kind: 'acknowledged', atMs: ack.atMs, alarm: structuredClone(alarm) } };
}
