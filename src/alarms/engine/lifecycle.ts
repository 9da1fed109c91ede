import type { Alarm, AlarmClass, AlarmSubject, AlarmTransition } from '../types.js';
import type { EngineState, KeyState } from './state.js';
import { flappingMayClear, raiseIsFlapping, recordClear, type FlappingRule } from './flapping.js';

/** What does not change between evaluations of one key. */
export interface AlarmDescriptor {
  key: string;
  /** Subject part of the key, used in alarm ids. */
  subjectKey: string;
  ruleId: string;
  alarmClass: AlarmClass;
  subject: AlarmSubject;
  zone: string;
  location: string;
  quantity: string;
  units: string;
  action: string;
}

/** One evaluation's outcome after on/off delays. */
export interface ConditionSample {
  /** Confirmed level, null = condition gone. */
  level: { name: string; index: number } | null;
  value: number | null;
  limit: number | null;
  trendPerS: number | null;
  atMs: number;
  /** The raw condition just appeared (was absent at the previous evaluation). */
  onset: boolean;
}

const copy = (a: Alarm): Alarm => structuredClone(a);

function newAlarm(structureId: string, idFloor: number, d: AlarmDescriptor, ks: KeyState, s: ConditionSample): Alarm {
  // Above the floor: after a reset of the state, numbers restart past every one used before.
  ks.seq = Math.max(ks.seq, idFloor) + 1;
  const level = s.level!;
  return {
    id: `${structureId}:${d.ruleId}:${d.subjectKey}:${ks.seq}`,
    key: d.key, structureId, zone: d.zone, alarmClass: d.alarmClass, ruleId: d.ruleId, subject: d.subject,
    location: d.location, quantity: d.quantity, value: s.value, limit: s.limit, units: d.units,
    level: level.name, levelIndex: level.index, state: 'active_unacknowledged', sinceMs: s.atMs,
    lastChangeMs: s.atMs, trendPerS: s.trendPerS, action: d.action, raiseCount: 1, repeatCount: 0,
    tier: 0, tierSinceMs: s.atMs, flapping: false, suppressedCount: 0, acknowledgement: null,
  };
}

/**
 * Apply one evaluation to the key's alarm: raise, merge a repeat, change level, clear, or
 * swallow the change while flapping. Mutates `state.alarms` and `ks`; returns the transitions.
 */
export function applyCondition(
  structureId: string,
  flapping: FlappingRule,
  state: EngineState,
  ks: KeyState,
  d: AlarmDescriptor,
  s: ConditionSample,
): AlarmTransition[] {
  const alarm = state.alarms[d.key];
  if (alarm === undefined && s.level === null) return [];
  if (alarm === undefined) {
    const a = newAlarm(structureId, state.idFloor, d, ks, s);
    state.alarms[d.key] = a;
    if (raiseIsFlapping(ks, s.atMs, flapping)) {
      a.flapping = true;
      return [{ kind: 'suppressed_flapping', atMs: s.atMs, alarm: copy(a) }];
    }
    return [{ kind: 'raised', atMs: s.atMs, alarm: copy(a) }];
  }
  alarm.value = s.value;
  alarm.trendPerS = s.trendPerS;
  if (s.level !== null) alarm.limit = s.limit; // a clear keeps the limit it went back past
  if (alarm.flapping) return whileFlapping(flapping, state, ks, alarm, s);
  if (s.level === null) {
    if (alarm.state === 'cleared_unacknowledged') return [];
    recordClear(ks, s.atMs, flapping);
    return clear(state, alarm, s.atMs);
  }
  if (alarm.state === 'cleared_unacknowledged') {
    // A re-raise of a visible alarm merges into it.
    alarm.raiseCount += 1;
    alarm.state = 'active_unacknowledged';
    setLevel(alarm, s);
    alarm.tierSinceMs = s.atMs;
    if (raiseIsFlapping(ks, s.atMs, flapping)) {
      alarm.flapping = true;
      return [{ kind: 'suppressed_flapping', atMs: s.atMs, alarm: copy(alarm) }];
    }
    return [{ kind: 'raised', atMs: s.atMs, alarm: copy(alarm) }];
  }
  if (s.onset) alarm.repeatCount += 1;
  if (s.level.index === alarm.levelIndex) return [];
  const previousLevel = alarm.level;
  const rising = s.level.index > alarm.levelIndex;
  setLevel(alarm, s);
  if (rising) {
    // A more severe level needs a fresh acknowledgement, and restarts the escalation clock.
    alarm.state = 'active_unacknowledged';
    alarm.acknowledgement = null;
    alarm.tierSinceMs = s.atMs;
  }
  return [{ kind: 'level_changed', atMs: s.atMs, alarm: copy(alarm), previousLevel }];
}

function setLevel(alarm: Alarm, s: ConditionSample): void {
  alarm.level = s.level!.name;
  alarm.levelIndex = s.level!.index;
  alarm.lastChangeMs = s.atMs;
}

function whileFlapping(
  flapping: FlappingRule,
  state: EngineState,
  ks: KeyState,
  alarm: Alarm,
  s: ConditionSample,
): AlarmTransition[] {
  const present = s.level !== null;
  const wasQuiet = ks.quietSinceMs !== null;
  if (present && s.level!.index > alarm.levelIndex) setLevel(alarm, s);
  if (!flappingMayClear(ks, present, s.atMs, flapping)) {
    if (present === wasQuiet) alarm.suppressedCount += 1; // a swallowed raise or clear
    return [];
  }
  alarm.flapping = false;
  ks.clearsMs.length = 0;
  ks.quietSinceMs = null;
  return clear(state, alarm, s.atMs);
}

/** The condition is gone: an acknowledged alarm closes; an unacknowledged one stays visible until acknowledged. */
function clear(state: EngineState, alarm: Alarm, atMs: number): AlarmTransition[] {
  alarm.lastChangeMs = atMs;
  if (alarm.state === 'active_acknowledged') {
    alarm.state = 'closed';
    delete state.alarms[alarm.key];
  } else alarm.state = 'cleared_unacknowledged';
  return [{ kind: 'cleared', atMs, alarm: copy(alarm) }];
}
