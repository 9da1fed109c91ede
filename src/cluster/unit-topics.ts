import { formatTopic, subscriptionFilter, type TopicPattern } from '../ingest/topic.js';

/** The intake's topic filters: every logger of the structure, or a unit's loggers one by one. */
export function intakeFilters(pattern: TopicPattern, structureId: string, unitLoggers: readonly string[] | undefined): string[] {
  return unitLoggers === undefined ? [subscriptionFilter(pattern, structureId)] : unitLoggers.map((l) => formatTopic(pattern, structureId, l));
}

/** A unit's own part (spool, capture, database...) named with the unit, so two units' faults are two alarms. */
export function unitComponent(component: string, unit: { id: string } | undefined): string {
  return unit === undefined ? component : `${component}@${unit.id}`;
}

/** A string field of a JSON command payload ('' when absent, not a string, or not JSON). */
function payloadString(payload: Uint8Array, field: string): string {
  try {
    const v: unknown = JSON.parse(Buffer.from(payload).toString('utf8'));
    const x = typeof v === 'object' && v !== null ? (v as Record<string, unknown>)[field] : undefined;
    return typeof x === 'string' ? x : '';
  } catch {
    return '';
  }
}

/** The alarm id an acknowledgement command names ('' when the payload says none). */
export const commandAlarmId = (payload: Uint8Array): string => payloadString(payload, 'alarm_id');

/** The group a rezero request names ('' when the payload names none, or is not JSON). */
export const requestGroupId = (payload: Uint8Array): string => payloadString(payload, 'group_id');

/** What a unit is, as the live job needs it (src/config/load-runtime.ts `unit`). */
export interface UnitIdentity {
  id: string;
  loggers: readonly string[];
  groups: readonly string[];
  /** The structure's first unit also answers commands naming nothing any unit has. */
  first: boolean;
  /** Every logger and group of the whole structure. */
  structureLoggers: readonly string[];
  structureGroups: readonly string[];
}

/**
 * Whether an alarm belongs to a unit. Alarm ids are `<structure>:<rule>:<subject>:<seq>` with the
 * subject `g:<group>`, `c:<logger>/<channel>`, `l:<logger>` or `p:<component>`
 * (src/alarms/engine/lifecycle.ts). A group is the unit's when its loggers are; a command whose id
 * names no subject of any unit (a typo, an unknown id) is answered by the structure's first unit,
 * so that every command gets exactly one verdict.
 */
export function ownsAlarm(alarmId: string, structureId: string, unit: UnitIdentity): boolean {
  const rest = alarmId.startsWith(`${structureId}:`) ? alarmId.slice(structureId.length + 1) : null;
  const m = rest === null ? null : /^[^:]+:([gclp]):(.+):\d+$/.exec(rest);
  if (m === null) return unit.first;
  const [, kind, subject] = m;
  const logger = kind === 'c' ? subject.split('/')[0] : subject;
  if (kind === 'c' || kind === 'l') return unit.loggers.includes(logger) || (unit.first && !unit.structureLoggers.includes(logger));
  if (kind === 'g') return unit.groups.includes(subject) || (unit.first && !unit.structureGroups.includes(subject));
  const at = subject.lastIndexOf('@');
  return at < 0 ? unit.first : subject.slice(at + 1) === unit.id;
}

/**
 * Whether a unit answers a rezero request for `groupId`: every unit of a split structure hears
 * every request, and only the unit that has the group decides it; a request naming no group of
 * any unit (unknown, misspelt, no group at all, not JSON) is refused by the structure's first unit
 * (the first in the cluster file's `split` list), so every request gets exactly one verdict.
 */
export function ownsGroup(groupId: string, unit: UnitIdentity): boolean {
  return unit.groups.includes(groupId) || (unit.first && !unit.structureGroups.includes(groupId));
}
