import { AckUserSchema } from '../alarms/ack.js';
import type { RezeroConfig } from './schema.js';

const fill = (pattern: string, structureId: string, user: string): string => pattern.replaceAll('{structure}', structureId).replaceAll('{user}', user);

/** The topic one user publishes rezero requests on. */
export function rezeroTopic(cfg: RezeroConfig, structureId: string, user: string): string {
  return fill(cfg.command_topic, structureId, user);
}

/** The filter the processor subscribes to for every user's requests (`{user}` as `+`). */
export function rezeroSubscription(cfg: RezeroConfig, structureId: string): string {
  return fill(cfg.command_topic, structureId, '+');
}

/** Where the processor answers one user's requests. */
export function rezeroVerdictTopic(cfg: RezeroConfig, structureId: string, user: string): string {
  return fill(cfg.verdict_topic, structureId, user);
}

/**
 * The user a topic names if it is one of this structure's rezero request topics, else null;
 * prepared once, a prefix test turns a scan topic away (as the acknowledgement matcher does).
 */
export function rezeroUserMatcher(cfg: RezeroConfig, structureId: string): (topic: string) => string | null {
  const [before, after] = fill(cfg.command_topic, structureId, '\u0000').split('\u0000');
  return (topic) => {
    if (topic.length <= before.length + after.length || !topic.startsWith(before) || !topic.endsWith(after)) return null;
    const user = topic.slice(before.length, topic.length - after.length);
    return !user.includes('/') && AckUserSchema.safeParse(user).success ? user : null;
  };
}
