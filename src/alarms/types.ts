import type { GroupResult } from '../model/result.js';
import type { LoggerFrame } from '../model/raw-message.js';
import type { Rejection } from '../model/rejection.js';

/** Time passing, from the injected clock (epoch ms): drives no-data, escalation. */
export interface Tick {
  type: 'tick';
  nowMs: number;
}

/** An acknowledgement command (already schema-checked at the MQTT boundary). */
export interface Ack {
  type: 'ack';
  alarmId: string;
  user: string;
  reason: string;
  atMs: number;
}

/**
 * A part of the processor itself failing or recovering, as its adapter reports it (e.g. the
 * spool cannot be written): an instrument-health alarm, since data is held or lost meanwhile.
 */
export interface ComponentFault {
  type: 'component';
  /** Which part, e.g. `spool`. */
  component: string;
  /** Why it fails, readable; null once it works again. */
  failure: string | null;
  atMs: number;
}

/**
 * A logger's message the decoder refused (it is dead-lettered, never data): evidence about the
 * logger all the same, e.g. a scan dated ahead of the processor's clock says its clock is wrong.
 */
export interface RefusedMessage {
  type: 'refused';
  loggerId: string;
  /** The logger's timestamp when it could be read, epoch ms; else null. */
  timeMs: number | null;
  arrivalMs: number;
  codes: readonly Rejection['code'][];
}

/**
 * The fatigue figures of every detail at one logger time (a snapshot of the fatigue stage, on its
 * write grid): the fatigue rules judge them.
 */
export interface FatigueInput {
  type: 'fatigue';
  atMs: number;
  details: readonly FatigueDetailSample[];
}

export interface FatigueDetailSample {
  detailId: string;
  groupId: string;
  location: string;
  /** Miner's sum so far (residue as half cycles). */
  damage: number;
  /** Over the recent rate window, per monitored day; NaN while unknown. */
  damagePerDay: number;
  /** Monitored time the rate is taken over, s. */
  rateWindowS: number;
}

/** Everything the alarm engine consumes; each carries its own time. */
export type AlarmInput =
  | { type: 'result'; result: GroupResult }
  | { type: 'frame'; frame: LoggerFrame }
  | Tick
  | Ack
  | ComponentFault
  | RefusedMessage
  | FatigueInput;

/** What the engine needs to know of a group (from the structure configuration). */
export interface GroupInfo {
  zone: string;
  /** Where it is, readable on site, e.g. "span 1, bottom flange at midspan, girder G2". */
  location: string;
}

/** What the engine needs to know of one logger channel. */
export interface ChannelInfo {
  /** Group the channel's gauge belongs to; null for a channel outside any group. */
  groupId: string | null;
  location: string;
  /** Valid reading range in the channel's unit; outside it the reading is out of range. */
  validMin: number;
  validMax: number;
  /** The channel's configured unit, e.g. `micro` or `degC`. */
  unit: string;
}

export interface LoggerInfo {
  zone: string;
  location: string;
  /** Expected time between scans, seconds. */
  expectedIntervalS: number;
  /** Channel id -> channel. */
  channels: ReadonlyMap<string, ChannelInfo>;
}

/** The lookups the lead builds from the compiled structure configuration. */
export interface AlarmLookups {
  structureId: string;
  groups: ReadonlyMap<string, GroupInfo>;
  loggers: ReadonlyMap<string, LoggerInfo>;
}

export type AlarmClass = 'structural' | 'health';

/** What an alarm is about. */
export type AlarmSubject =
  | { kind: 'group'; groupId: string }
  | { kind: 'channel'; loggerId: string; channelId: string; groupId: string | null }
  | { kind: 'logger'; loggerId: string }
  | { kind: 'component'; component: string }
  /** A fatigue detail (on the group whose results give its stress). */
  | { kind: 'detail'; detailId: string; groupId: string };

/** Alarm lifecycle: raised -> acknowledged -> cleared; cleared but unacknowledged stays visible. */
export type AlarmState = 'active_unacknowledged' | 'active_acknowledged' | 'cleared_unacknowledged' | 'closed';

/** Numeric code per state for the database (`state_code`). */
export const ALARM_STATE_CODES: Readonly<Record<AlarmState, number>> = {
  active_unacknowledged: 1,
  active_acknowledged: 2,
  cleared_unacknowledged: 3,
  closed: 0,
};

/** One alarm as a crew sees it. Plain JSON (part of the engine snapshot). */
export interface Alarm {
  /** Unique per occurrence: `<structure>:<rule or check>:<subject>:<n>`. */
  id: string;
  /** Engine key `<rule or check>|<subject>`: one state machine per key. */
  key: string;
  structureId: string;
  zone: string;
  alarmClass: AlarmClass;
  /** Structural rule id, or health check name. */
  ruleId: string;
  subject: AlarmSubject;
  location: string;
  /** Quantity name (result quantity, `rate:<quantity>`, `reading`, `silence_s`...). */
  quantity: string;
  /** Latest value that drove the alarm, in `units`; null when there is none (e.g. no reading). */
  value: number | null;
  /** The limit crossed, in `units`; null when the check has no numeric limit. */
  limit: number | null;
  units: string;
  level: string;
  /** Index into `levels` (0 = least severe). */
  levelIndex: number;
  state: AlarmState;
  /** When first raised (input time, epoch ms). */
  sinceMs: number;
  lastChangeMs: number;
  /** Least-squares slope of the quantity over the trend window, units per second; null if unknown. */
  trendPerS: number | null;
  action: string;
  /** Times raised (re-raises while visible merge into this alarm). */
  raiseCount: number;
  /** Times the condition re-appeared while already active (merged repeats). */
  repeatCount: number;
  /** Routing tier reached by escalation (0 = first tier). */
  tier: number;
  tierSinceMs: number;
  flapping: boolean;
  /** Raise/clear changes swallowed while flapping. */
  suppressedCount: number;
  acknowledgement: { user: string; reason: string; atMs: number } | null;
}

export type TransitionKind =
  | 'raised'
  | 'level_changed'
  | 'acknowledged'
  | 'cleared'
  | 'escalated'
  | 'suppressed_flapping';

/** One change of one alarm, carrying the alarm as it is after the change. */
export interface AlarmTransition {
  kind: TransitionKind;
  atMs: number;
  /** A copy: later changes do not alter an emitted transition. */
  alarm: Alarm;
  /** level_changed: the level before the change. */
  previousLevel?: string;
}

/** Why an acknowledgement was refused. */
export type AckRefusalCode = 'unknown_alarm' | 'user_not_allowed' | 'already_acknowledged' | 'invalid_command' | 'identity_mismatch';

/** A refused acknowledgement, recorded (alarm log) and counted, never silently dropped. */
export interface AckRefusal {
  code: AckRefusalCode;
  alarmId: string;
  user: string;
  /** The reason the user gave. */
  userReason: string;
  /** Why it was refused, readable. */
  reason: string;
  atMs: number;
}
