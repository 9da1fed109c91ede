import type { Alarm, AlarmTransition } from '../types.js';
import type { EngineState } from './state.js';

/**
 * Escalate every active, unacknowledged alarm that has waited afterMs at its tier, one tier at a
 * time, up to the last tier its routes have (tierCount). Cleared alarms do not escalate: they
 * wait, visible, for an acknowledgement. Mutates the alarms in `state`; returns the transitions.
 */
export function escalate(
  state: EngineState,
  nowMs: number,
  afterMs: number,
  tierCount: (alarm: Alarm) => number,
): AlarmTransition[] {
  const out: AlarmTransition[] = [];
  for (const alarm of Object.values(state.alarms)) {
    if (alarm.state !== 'active_unacknowledged') continue;
    if (nowMs - alarm.tierSinceMs < afterMs) continue;
    if (alarm.tier + 1 >= tierCount(alarm)) continue;
    alarm.tier += 1;
    alarm.tierSinceMs = nowMs;
    out.push({ kind: 'escalated', atMs: nowMs, alarm: structuredClone(alarm) });
  }
  return out;
}
