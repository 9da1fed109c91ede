import { describe, expect, it } from 'vitest';
import { ackSubscription, ackTopic, ackUserOfTopic, ackVerdictTopic, buildAckCommand, parseAckPayload } from '../../src/alarms/ack.js';
import { mosquittoAcl } from '../../src/alarms/acl.js';
import { AlarmsConfigSchema } from '../../src/alarms/schema.js';
import { config, configInput } from './fixtures.js';

describe('acknowledgement command', () => {
  const cfg = config();
  const id = 'brannock-mere:vm-girder:g:S1-MID-G2:1';
  it('builds the CLI command on the user\'s own topic and parses it back with the user from the topic', () => {
    const cmd = buildAckCommand(cfg, 'brannock-mere', { alarmId: id, user: 'eng-ashdown', reason: 'crew on site' });
    expect(cmd.topic).toBe('strainward/brannock-mere/alarms/ack/eng-ashdown');
    expect(JSON.parse(cmd.payload)).toEqual({ alarm_id: id, user: 'eng-ashdown', reason: 'crew on site' });
    expect(parseAckPayload(new TextEncoder().encode(cmd.payload), 42, 'eng-ashdown')).toEqual({
      ok: true, ack: { type: 'ack', alarmId: id, user: 'eng-ashdown', reason: 'crew on site', atMs: 42 },
    });
    expect(ackTopic(cfg, 'other', 'u1')).toBe('strainward/other/alarms/ack/u1');
    expect(ackSubscription(cfg, 'other')).toBe('strainward/other/alarms/ack/+');
    expect(ackVerdictTopic(cfg, 'other', 'u1')).toBe('strainward/other/alarms/ack-verdict/u1');
  });
  it('takes the user from the topic; a payload naming someone else is refused as identity_mismatch', () => {
    const r = parseAckPayload(JSON.stringify({ alarm_id: id, user: 'duty-engineer-1', reason: 'r' }), 7, 'instr-tech-1');
    expect(r).toMatchObject({ ok: false, refusal: { code: 'identity_mismatch', user: 'instr-tech-1', alarmId: id } });
    expect(r.ok ? '' : r.refusal.reason).toMatch(/names user "duty-engineer-1" but the command came on the topic of "instr-tech-1"/);
    // Without a user in the payload the topic's user acknowledges.
    expect(parseAckPayload(JSON.stringify({ alarm_id: id, reason: 'r' }), 7, 'instr-tech-1')).toMatchObject({ ok: true, ack: { user: 'instr-tech-1' } });
  });
  it('finds the user of a command topic, and nothing in other topics', () => {
    expect(ackUserOfTopic(cfg, 'brannock-mere', 'strainward/brannock-mere/alarms/ack/eng-ashdown')).toBe('eng-ashdown');
    expect(ackUserOfTopic(cfg, 'brannock-mere', 'strainward/brannock-mere/alarms/ack')).toBeNull();
    expect(ackUserOfTopic(cfg, 'brannock-mere', 'strainward/other/alarms/ack/eng-ashdown')).toBeNull();
    expect(ackUserOfTopic(cfg, 'brannock-mere', 'strainward/brannock-mere/alarms/ack/eng ashdown')).toBeNull();
    expect(ackUserOfTopic(cfg, 'brannock-mere', 'strainward/brannock-mere/alarms/ack/a/b')).toBeNull();
  });
  it('refuses a command topic without {user} as a whole level, with a message saying why', () => {
    const bad = AlarmsConfigSchema.safeParse(configInput({ acknowledgement: { allowed_users: { structural: [], health: [] }, command_topic: 'strainward/{structure}/alarms/ack' } }));
    expect(bad.success).toBe(false);
    expect(JSON.stringify(bad.error?.issues)).toMatch(/needs \{user\} as one whole topic level/);
  });
  it('refuses bad payloads with a reason naming the field, never throwing', () => {
    expect(parseAckPayload('{', 1, 'u')).toMatchObject({ ok: false, refusal: { code: 'invalid_command', reason: 'payload is not JSON', user: 'u' } });
    const r = parseAckPayload('{"alarm_id":"x","user":"eng-ashdown"}', 1, 'eng-ashdown');
    expect(r).toMatchObject({ ok: false, refusal: { code: 'invalid_command', alarmId: 'x', user: 'eng-ashdown' } });
    expect(r.ok ? '' : r.refusal.reason).toMatch(/^reason:/);
    expect(parseAckPayload('{"alarm_id":"x","user":"u","reason":"r","extra":1}', 1, 'u').ok).toBe(false);
    expect(() => buildAckCommand(cfg, 'brannock-mere', { alarmId: '', user: 'u', reason: 'r' })).toThrow(/alarm_id/);
    expect(() => buildAckCommand(cfg, 'brannock-mere', { alarmId: 'x', user: 'a/b', reason: 'r' })).toThrow(/user/);
  });
});

describe('broker ACL', () => {
  const acl = mosquittoAcl({
    processorUser: 'sw-processor', loggers: { 'lg-a': 'strainward/deck/lg-a/scan' },
    presenceFilter: 'strainward/deck/processor/+', deadLetterTopic: 'strainward/deck/deadletter',
    notifyFilters: ['strainward/deck/notify/crew-a'], ackPattern: 'strainward/deck/alarms/ack/%u', verdictPattern: 'strainward/deck/alarms/ack-verdict/%u',
    crews: { 'crew-a': ['strainward/deck/notify/crew-a'] }, acknowledgers: ['eng-a'], viewers: ['viewer-a'],
  });
  const block = (user: string) => {
    const lines = acl.split('\n');
    const start = lines.indexOf(`user ${user}`);
    const end = lines.indexOf('', start);
    return lines.slice(start + 1, end);
  };
  it('grants each role exactly what the live job needs', () => {
    expect(block('sw-processor')).toEqual([
      'topic read strainward/deck/lg-a/scan', 'topic read strainward/deck/alarms/ack/+', 'topic write strainward/deck/alarms/ack-verdict/+',
      'topic readwrite strainward/deck/processor/+', 'topic write strainward/deck/notify/crew-a', 'topic write strainward/deck/deadletter',
    ]);
    expect(block('lg-a')).toEqual(['topic write strainward/deck/lg-a/scan']);
    expect(block('crew-a')).toEqual(['topic read strainward/deck/notify/crew-a']);
    expect(block('eng-a')).toEqual([
      'topic write strainward/deck/alarms/ack/eng-a', 'topic read strainward/deck/alarms/ack-verdict/eng-a',
      'topic read strainward/deck/notify/crew-a', 'topic read strainward/deck/processor/+',
    ]);
    expect(block('viewer-a').some((l) => l.startsWith('topic write'))).toBe(false);
    expect(acl).not.toMatch(/^pattern/m);
  });
  it('refuses a login an ACL line cannot hold', () => {
    expect(() => mosquittoAcl({
      processorUser: 'p', loggers: {}, presenceFilter: null, deadLetterTopic: null, notifyFilters: [], ackPattern: 'a/%u', verdictPattern: 'v/%u',
      crews: {}, acknowledgers: ['bad user'], viewers: [],
    })).toThrow(/bad user/);
  });
});
