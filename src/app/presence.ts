/**
 * The processor's own presence on the broker. Silence from the processor is itself an alarm: when
 * it is down nothing is computed and no alarm can be raised, so it says where it stands on a topic
 * of its own, retained, for the control room and any watchdog to follow:
 * - `online` with its counters, every `every_s` (a status older than two periods means it is stuck);
 * - `offline`, published by the broker itself as the last will when the process vanishes without a
 *   DISCONNECT (killed, machine or network gone);
 * - `stopped` on an orderly stop.
 */
import { z } from 'zod';
import type { Publish } from '../adapters/mqtt/connection.js';
import { problemsFromZod } from '../validation/issues.js';
import { ALARMS_DISABLED } from './alarms-decision.js';

export type PresenceState = 'online' | 'offline' | 'stopped';

/** The status message (JSON), documented in the README. */
export interface PresenceMessage {
  state: PresenceState;
  processor: string;
  structure: string;
  /** Processor time of the message, ISO 8601 UTC; for `offline`, when the will was set (the connection time). */
  at: string;
  /** Seconds between `online` messages: a reader's staleness limit is twice this. */
  every_s: number;
  /** The structure file says `alarms: { disabled: true }`: this processor raises no alarm at all. */
  alarms_disabled?: boolean;
  /** Counters since start (online and stopped only). */
  frames?: number;
  results?: number;
  rejected_messages?: number;
  held_acks?: number;
  database_reachable?: boolean | null;
  spool_fill_ratio?: number | null;
  /** The spool's own limit and the free space of the disk it is on, bytes: the disk may fill first. */
  spool_limit_bytes?: number | null;
  spool_disk_free_bytes?: number | null;
  /** Loggers seen sending `synthetic: true` (simulated) messages since start. */
  synthetic_loggers?: string[];
  /** Bytes in the spool now (results waiting for the database). */
  spool_bytes?: number | null;
  /** Dead-lettered messages' rejections by reason code (a message may carry several). */
  rejected_by_code?: Record<string, number>;
  /** Open (not closed) alarms by level; null without an alarms section. */
  open_alarms?: OpenAlarmCounts | null;
  /** The processor's own parts failing now (database, broker, spool, capture, webhooks). */
  component_faults?: ComponentFaultEntry[];
}

/** Open alarms counted for the status: `by_level` keyed by the structure's level names. */
export interface OpenAlarmCounts {
  total: number;
  by_level: Record<string, number>;
  /** Of them, not yet acknowledged by anyone. */
  unacknowledged: number;
}

/** One failing component, since when (ISO 8601 UTC, processor time) and why. */
export interface ComponentFaultEntry {
  component: string;
  failure: string;
  since: string;
}

/** Who publishes: the part of every presence message (the last will included) that never changes. */
export type PresenceIdentity = Pick<PresenceMessage, 'processor' | 'structure' | 'every_s' | 'alarms_disabled'>;

/** `{structure}` and `{client_id}` replaced; null when presence is switched off (empty pattern). */
export function presenceTopic(pattern: string, structureId: string, clientId: string): string | null {
  if (pattern === '') return null;
  return pattern.replaceAll('{structure}', structureId).replaceAll('{client_id}', clientId);
}

/** Counters of the live job's status, in the presence message's names. */
export type PresenceCounters = Pick<PresenceMessage, 'frames' | 'results' | 'rejected_messages' | 'held_acks' | 'database_reachable' | 'spool_fill_ratio'
  | 'spool_limit_bytes' | 'spool_disk_free_bytes' | 'spool_bytes' | 'rejected_by_code' | 'open_alarms' | 'component_faults' | 'synthetic_loggers'>;

export interface Presence {
  /** Publishes `stopped` (retained) and ends the heartbeat. */
  stop(): Promise<void>;
}

export function presenceMessage(state: PresenceState, who: PresenceIdentity, atMs: number, counters: PresenceCounters = {}): string {
  const message: PresenceMessage = { state, ...who, at: new Date(atMs).toISOString(), ...counters };
  return JSON.stringify(message);
}

/** Publishes `online` now and every `every_s`; a failed publish is reported, and the next one tries again. */
export function startPresence(
  publish: Publish, topic: string, who: PresenceIdentity,
  counters: () => PresenceCounters, now: () => number, onError: (err: unknown) => void,
): Presence {
  const send = (state: PresenceState) => publish(topic, presenceMessage(state, who, now(), counters()), { qos: 1, retain: true }).catch(onError);
  void send('online');
  const timer = setInterval(() => { void send('online'); }, who.every_s * 1000);
  return {
    async stop() {
      clearInterval(timer);
      await send('stopped');
    },
  };
}

/** A presence message read back from the broker (a boundary: anyone may publish there). */
export const PresenceMessageSchema = z.looseObject({
  state: z.enum(['online', 'offline', 'stopped']),
  processor: z.string().min(1),
  structure: z.string().min(1),
  at: z.iso.datetime(),
  every_s: z.number().positive(),
  alarms_disabled: z.boolean().optional(),
  synthetic_loggers: z.array(z.string()).optional(),
});

/** One processor's standing, as `strainward status` reports it. */
export interface PresenceAssessment {
  topic: string;
  processor: string;
  state: PresenceState | 'unreadable';
  /** Seconds since the message's `at`; NaN when unreadable. */
  age_s: number;
  healthy: boolean;
  /** Why not healthy, in words; empty when healthy. */
  reason: string;
  /** What a healthy processor still does not do or cannot vouch for (alarms disabled, synthetic data). */
  warnings: string[];
  /** The message itself when readable. */
  message: Record<string, unknown> | null;
}

/**
 * Judges the retained presence messages at `nowMs`. Healthy = `online` and younger than twice its
 * own period; `offline` (the last will), `stopped`, a stale `online` (stuck process, or a clock
 * gone wrong) and an unreadable payload are not. Pure.
 */
export function assessPresence(messages: ReadonlyArray<{ topic: string; payload: Uint8Array }>, nowMs: number): PresenceAssessment[] {
  return messages.map(({ topic, payload }) => {
    let json: unknown;
    try {
      json = JSON.parse(new TextDecoder().decode(payload));
    } catch {
      json = undefined;
    }
    const r = PresenceMessageSchema.safeParse(json);
    if (!r.success) {
      const why = json === undefined ? 'not JSON' : problemsFromZod(r.error).map((p) => `${p.path}: ${p.reason}`).join('; ');
      return { topic, processor: topic.split('/').pop() ?? topic, state: 'unreadable', age_s: Number.NaN, healthy: false, reason: `unreadable status (${why})`, warnings: [], message: null };
    }
    const m = r.data;
    const age_s = (nowMs - Date.parse(m.at)) / 1000;
    const stale = m.state === 'online' && age_s > 2 * m.every_s;
    const reason = m.state === 'offline' ? 'offline: the broker reported the connection lost (last will)'
      : m.state === 'stopped' ? 'stopped'
        : stale ? `no status for ${age_s.toFixed(1)} s (every ${m.every_s} s expected)` : '';
    const warnings: string[] = [];
    if (m.alarms_disabled === true) warnings.push(ALARMS_DISABLED);
    if ((m.synthetic_loggers ?? []).length > 0) warnings.push(`SYNTHETIC (simulated) data from ${m.synthetic_loggers!.join(', ')}: results and alarms from it describe no real structure`);
    return { topic, processor: m.processor, state: m.state, age_s, healthy: reason === '', reason, warnings, message: m };
  });
}
