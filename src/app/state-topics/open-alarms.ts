import { z } from 'zod';
import type { Alarm, AlarmTransition } from '../../alarms/types.js';
import { orderedAlarms } from '../live-page/page-state.js';
import type { OpenAlarmCounts } from '../presence.js';

/**
 * The open alarms (every state but `closed`) as the processor keeps them for the broker's retained
 * list (`strainward/{structure}/state/alarms`) and the presence counts. Fed with the engine's
 * visible alarms at start and every transition after; bounded by the engine's own alarms.
 */
export class OpenAlarms {
  private readonly open = new Map<string, Alarm>();

  /** The alarms restored from the engine's state file. */
  seed(alarms: readonly Alarm[]): void {
    for (const a of alarms) if (a.state !== 'closed') this.open.set(a.id, a);
  }

  /** Returns whether the list changed. */
  apply(transitions: readonly AlarmTransition[]): boolean {
    for (const t of transitions) {
      if (t.alarm.state === 'closed') this.open.delete(t.alarm.id);
      else this.open.set(t.alarm.id, t.alarm);
    }
    return transitions.length > 0;
  }

  /** Most severe first, structural before health, then newest. */
  list(): Alarm[] {
    return orderedAlarms(this.open.values());
  }

  /** Counts by level name, every configured level present, most severe first. */
  counts(levels: readonly string[]): OpenAlarmCounts {
    const by_level: Record<string, number> = {};
    for (const l of [...levels].reverse()) by_level[l] = 0;
    let unacknowledged = 0;
    for (const a of this.open.values()) {
      by_level[a.level] = (by_level[a.level] ?? 0) + 1;
      if (a.acknowledgement === null) unacknowledged++;
    }
    return { total: this.open.size, by_level, unacknowledged };
  }
}

const iso = z.iso.datetime();

/** One open alarm on the retained list: the alarm message's names (src/alarms/routing/format.ts), units explicit. */
export const OpenAlarmEntrySchema = z.object({
  alarm_id: z.string().min(1),
  alarm_class: z.enum(['structural', 'health']),
  rule: z.string(),
  level: z.string().min(1),
  state: z.enum(['active_unacknowledged', 'active_acknowledged', 'cleared_unacknowledged']),
  zone: z.string(),
  location: z.string(),
  subject: z.record(z.string(), z.string().nullable()),
  quantity: z.string(),
  /** In `units`; null when the check has no value. */
  value: z.number().nullable(),
  limit: z.number().nullable(),
  units: z.string(),
  since: iso,
  last_change: iso,
  action: z.string(),
  raise_count: z.number().int().nonnegative(),
  acknowledged_by: z.string().nullable(),
  acknowledged_at: iso.nullable(),
});

/** The retained list of open alarms (`state_topics.alarms_topic`), republished on every transition. */
export const OpenAlarmsStateSchema = z.object({
  schema: z.literal('strainward.open-alarms/1'),
  structure: z.string().min(1),
  /** Client id of the processor that keeps the list: `status` tells whether it is still running. */
  processor: z.string().min(1),
  /** Processor time of the list, ISO 8601 UTC. */
  at: iso,
  /** Open alarms in all. */
  count: z.number().int().nonnegative(),
  /** Entries in `alarms`: fewer than `count` when the least severe were left out to fit `state_topics.max_message_bytes`. */
  listed: z.number().int().nonnegative(),
  alarms: z.array(OpenAlarmEntrySchema),
});

export type OpenAlarmEntry = z.infer<typeof OpenAlarmEntrySchema>;
export type OpenAlarmsState = z.infer<typeof OpenAlarmsStateSchema>;

function subjectFields(a: Alarm): Record<string, string | null> {
  const s = a.subject;
  if (s.kind === 'group') return { kind: 'group', group_id: s.groupId };
  if (s.kind === 'logger') return { kind: 'logger', logger_id: s.loggerId };
  if (s.kind === 'component') return { kind: 'component', component: s.component };
  if (s.kind === 'detail') return { kind: 'detail', detail_id: s.detailId, group_id: s.groupId };
  return { kind: 'channel', logger_id: s.loggerId, channel_id: s.channelId, group_id: s.groupId };
}

/**
 * The retained message's body, as JSON text of at most `maxBytes` (UTF-8): a list the broker
 * refuses (its max_packet_size) would leave the old one standing, so the least severe entries are
 * left out instead, `count` still saying how many are open. Pure.
 */
export function openAlarmsMessage(alarms: readonly Alarm[], who: { structure: string; processor: string }, atMs: number, maxBytes: number): string {
  const body = openAlarmsState(alarms, who, atMs);
  const entries = body.alarms.map((e) => JSON.stringify(e));
  const head = (listed: number) => JSON.stringify({ ...body, listed, alarms: [] }).slice(0, -2); // up to `"alarms":[`
  let listed = entries.length;
  let size = Buffer.byteLength(head(listed)) + 2 + entries.reduce((n, e) => n + Buffer.byteLength(e) + 1, 0);
  while (listed > 0 && size > maxBytes) size -= Buffer.byteLength(entries[--listed]) + 1;
  return `${head(listed)}${entries.slice(0, listed).join(',')}]}`;
}

/** The retained message's body, every open alarm listed. Pure. */
export function openAlarmsState(alarms: readonly Alarm[], who: { structure: string; processor: string }, atMs: number): OpenAlarmsState {
  const iso8601 = (ms: number) => new Date(ms).toISOString();
  return {
    schema: 'strainward.open-alarms/1', structure: who.structure, processor: who.processor, at: iso8601(atMs), count: alarms.length, listed: alarms.length,
    alarms: alarms.map((a): OpenAlarmEntry => ({
      alarm_id: a.id, alarm_class: a.alarmClass, rule: a.ruleId, level: a.level, state: a.state as OpenAlarmEntry['state'],
      zone: a.zone, location: a.location, subject: subjectFields(a), quantity: a.quantity, value: a.value, limit: a.limit, units: a.units,
      since: iso8601(a.sinceMs), last_change: iso8601(a.lastChangeMs), action: a.action, raise_count: a.raiseCount,
      acknowledged_by: a.acknowledgement?.user ?? null, acknowledged_at: a.acknowledgement === null ? null : iso8601(a.acknowledgement.atMs),
    })),
  };
}
