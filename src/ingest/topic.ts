/**
 * Topic layout: where the structure and the logger sit in an MQTT topic.
 * A pattern is a topic whose levels may be the placeholders `{structure}` and `{logger}`
 * (each exactly once, each a whole level), e.g. the default `strainward/{structure}/{logger}/scan`.
 */
import { z } from 'zod';
import type { Rejection } from '../model/rejection.js';

export const DEFAULT_TOPIC_PATTERN = 'strainward/{structure}/{logger}/scan';

/** A validated pattern, split into levels once at configuration time. Immutable. */
export interface TopicPattern {
  readonly source: string;
  readonly levels: readonly string[];
  readonly structureLevel: number;
  readonly loggerLevel: number;
}

const countOf = (s: string, part: string) => s.split(part).length - 1;

/** Zod schema of a topic pattern string; its output is the compiled `TopicPattern`. */
export const topicPatternSchema = z
  .string()
  .min(1, 'topic pattern must not be empty')
  .superRefine((p, ctx) => {
    const fail = (message: string) => ctx.addIssue({ code: 'custom', message, input: p });
    if (p.includes('+') || p.includes('#')) fail('topic pattern must not contain MQTT wildcards (+ or #)');
    for (const name of ['{structure}', '{logger}']) {
      const n = countOf(p, name);
      if (n !== 1) fail(`topic pattern must contain ${name} exactly once (found ${n})`);
    }
    const levels = p.split('/');
    if (levels.some((l) => l === '')) fail('topic pattern must not have empty levels');
    for (const l of levels) {
      if (/[{}]/.test(l) && l !== '{structure}' && l !== '{logger}') {
        fail(`topic level "${l}": a placeholder must be a whole level, and only {structure} and {logger} exist`);
      }
    }
  })
  .transform((p): TopicPattern => {
    const levels = p.split('/');
    return { source: p, levels, structureLevel: levels.indexOf('{structure}'), loggerLevel: levels.indexOf('{logger}') };
  });

/** Compile a pattern; throws a ZodError naming every problem. */
export function compileTopicPattern(pattern: string = DEFAULT_TOPIC_PATTERN): TopicPattern {
  return topicPatternSchema.parse(pattern);
}

/** A match is shared between calls for the same topic: never mutate it. */
export type TopicMatch =
  | { readonly ok: true; readonly structureId: string; readonly loggerId: string }
  | { ok: false; rejection: Rejection };

// Not a closure inside parseTopic: that was one function object made per message.
const unknownTopic = (topic: string, reason: string): TopicMatch => ({
  ok: false,
  rejection: { code: 'unknown_topic', path: '', reason: `topic "${topic}" ${reason}` },
});

/**
 * Topics that matched, per pattern: a logger publishes on the same topic every scan, so splitting
 * it again each time (an array and four strings) is work and garbage for nothing. Bounded: past
 * TOPIC_CACHE_LIMIT topics (far more loggers than a structure has) it starts afresh.
 */
const matched = new WeakMap<TopicPattern, Map<string, TopicMatch>>();
export const TOPIC_CACHE_LIMIT = 4096;

/** Split a topic into structure and logger ids, or an `unknown_topic` rejection. Pure (its cache aside: same answer). */
export function parseTopic(pattern: TopicPattern, topic: string): TopicMatch {
  let cache = matched.get(pattern);
  const hit = cache?.get(topic);
  if (hit !== undefined) return hit;
  const match = splitTopic(pattern, topic);
  if (match.ok) {
    if (cache === undefined) matched.set(pattern, (cache = new Map()));
    if (cache.size >= TOPIC_CACHE_LIMIT) cache.clear();
    cache.set(topic, match);
  }
  return match;
}

function splitTopic(pattern: TopicPattern, topic: string): TopicMatch {
  const levels = topic.split('/');
  if (levels.length !== pattern.levels.length) {
    return unknownTopic(topic, `has ${levels.length} levels, pattern "${pattern.source}" has ${pattern.levels.length}`);
  }
  for (let i = 0; i < levels.length; i++) {
    if (i === pattern.structureLevel || i === pattern.loggerLevel) {
      if (levels[i] === '') return unknownTopic(topic, `has an empty level ${i + 1}`);
    } else if (levels[i] !== pattern.levels[i]) {
      return unknownTopic(topic, `does not match pattern "${pattern.source}" at level ${i + 1}`);
    }
  }
  return { ok: true, structureId: levels[pattern.structureLevel], loggerId: levels[pattern.loggerLevel] };
}

/** Subscription filter for one structure: every logger, e.g. `strainward/brannock-mere/+/scan`. */
export function subscriptionFilter(pattern: TopicPattern, structureId: string): string {
  if (/[+#/]/.test(structureId) || structureId === '') {
    throw new RangeError(`structure id "${structureId}" cannot be a topic level (empty, or has + # /)`);
  }
  return pattern.levels
    .map((l, i) => (i === pattern.structureLevel ? structureId : i === pattern.loggerLevel ? '+' : l))
    .join('/');
}

/** The topic a given logger publishes on (for simulators and tests). */
export function formatTopic(pattern: TopicPattern, structureId: string, loggerId: string): string {
  return pattern.levels
    .map((l, i) => (i === pattern.structureLevel ? structureId : i === pattern.loggerLevel ? loggerId : l))
    .join('/');
}
