import { describe, expect, it } from 'vitest';
import { compileTopicPattern, formatTopic, parseTopic, subscriptionFilter, TOPIC_CACHE_LIMIT, topicPatternSchema } from '../../src/ingest/topic.js';

describe('topic pattern', () => {
  const pattern = compileTopicPattern();

  it('parses the default layout into structure and logger', () => {
    expect(parseTopic(pattern, 'strainward/brannock-mere/span1-north/scan')).toEqual({
      ok: true,
      structureId: 'brannock-mere',
      loggerId: 'span1-north',
    });
  });

  it('answers a topic seen before alike, per pattern, and past its cache bound still right', () => {
    const other = compileTopicPattern('site/{logger}/raw/{structure}');
    const first = parseTopic(pattern, 'strainward/brannock-mere/span1-north/scan');
    expect(parseTopic(pattern, ['strainward', 'brannock-mere', 'span1-north', 'scan'].join('/'))).toBe(first);
    // The same text under another pattern is that pattern's answer, not the cached one.
    expect(parseTopic(other, 'strainward/brannock-mere/span1-north/scan').ok).toBe(false);
    for (let i = 0; i <= TOPIC_CACHE_LIMIT; i++) expect(parseTopic(pattern, `strainward/s/lg-${i}/scan`)).toEqual({ ok: true, structureId: 's', loggerId: `lg-${i}` });
    expect(parseTopic(pattern, 'strainward/brannock-mere/span1-north/scan')).toEqual(first);
  });

  it('builds the per-structure subscription filter and a logger topic', () => {
    expect(subscriptionFilter(pattern, 'brannock-mere')).toBe('strainward/brannock-mere/+/scan');
    expect(formatTopic(pattern, 'brannock-mere', 'pier-temp')).toBe('strainward/brannock-mere/pier-temp/scan');
    expect(() => subscriptionFilter(pattern, 'a/b')).toThrow(RangeError);
  });

  it('supports other layouts, placeholders in any order', () => {
    const p = compileTopicPattern('site/{logger}/raw/{structure}');
    expect(parseTopic(p, 'site/L1/raw/brannock-mere')).toEqual({ ok: true, structureId: 'brannock-mere', loggerId: 'L1' });
    expect(subscriptionFilter(p, 'brannock-mere')).toBe('site/+/raw/brannock-mere');
  });

  it('refuses topics that do not fit, with unknown_topic and a reason', () => {
    expect(parseTopic(pattern, 'strainward/brannock-mere/span1-north')).toEqual({
      ok: false,
      rejection: {
        code: 'unknown_topic',
        path: '',
        reason: 'topic "strainward/brannock-mere/span1-north" has 3 levels, pattern "strainward/{structure}/{logger}/scan" has 4',
      },
    });
    const r = parseTopic(pattern, 'strainward/brannock-mere/span1-north/status');
    expect(r.ok ? '' : r.rejection.reason).toBe(
      'topic "strainward/brannock-mere/span1-north/status" does not match pattern "strainward/{structure}/{logger}/scan" at level 4',
    );
    const empty = parseTopic(pattern, 'strainward//span1-north/scan');
    expect(empty.ok ? '' : empty.rejection.reason).toBe('topic "strainward//span1-north/scan" has an empty level 2');
  });

  it('validates patterns, listing every problem', () => {
    const r = topicPatternSchema.safeParse('a/+/{logger}/{logger}/#');
    expect(r.success).toBe(false);
    expect(r.error!.issues.map((i) => i.message)).toEqual([
      'topic pattern must not contain MQTT wildcards (+ or #)',
      'topic pattern must contain {structure} exactly once (found 0)',
      'topic pattern must contain {logger} exactly once (found 2)',
    ]);
    expect(topicPatternSchema.safeParse('x/{structure}-{logger}').error!.issues.map((i) => i.message)).toEqual([
      'topic level "{structure}-{logger}": a placeholder must be a whole level, and only {structure} and {logger} exist',
    ]);
    expect(topicPatternSchema.safeParse('x//{structure}/{logger}').error!.issues.map((i) => i.message)).toEqual([
      'topic pattern must not have empty levels',
    ]);
    expect(() => compileTopicPattern('{structure}/{site}/{logger}')).toThrow(/only \{structure\} and \{logger\}/);
  });
});
