import { describe, expect, it } from 'vitest';
import { ackTopic, buildAckCommand, parseAckPayload } from '../../src/alarms/ack.js';
import { mosquittoAckAcl } from '../../src/alarms/acl.js';
import { config } from './fixtures.js';

describe('acknowledgement command', () => {
  const cfg = config();
  it('builds the CLI command and parses it back', () => {
    const cmd = buildAckCommand(cfg, 'brannock-mere', { alarmId: 'brannock-mere:vm-girder:g:S1-MID-G2:1', user: 'eng-ashdown', reason: 'crew on site' });
    expect(cmd.topic).toBe('strainward/brannock-mere/alarms/ack');
    expect(JSON.parse(cmd.payload)).toEqual({ alarm_id: 'brannock-mere:vm-girder:g:S1-MID-G2:1', user: 'eng-ashdown', reason: 'crew on site' });
    expect(parseAckPayload(new TextEncoder().encode(cmd.payload), 42)).toEqual({
      ok: true, ack: { type: 'ack', alarmId: 'brannock-mere:vm-girder:g:S1-MID-G2:1', user: 'eng-ashdown', reason: 'crew on site', atMs: 42 },
    });
    expect(ackTopic(cfg, 'other')).toBe('strainward/other/alarms/ack');
  });
  it('refuses bad payloads with a reason naming the field, never throwing', () => {
    expect(parseAckPayload('{', 1)).toMatchObject({ ok: false, refusal: { code: 'invalid_command', reason: 'payload is not JSON' } });
    const r = parseAckPayload('{"alarm_id":"x","user":"eng-ashdown"}', 1);
    expect(r).toMatchObject({ ok: false, refusal: { code: 'invalid_command', alarmId: 'x', user: 'eng-ashdown' } });
    expect(r.ok ? '' : r.refusal.reason).toMatch(/^reason:/);
    expect(parseAckPayload('{"alarm_id":"x","user":"u","reason":"r","extra":1}', 1).ok).toBe(false);
    expect(() => buildAckCommand(cfg, 'brannock-mere', { alarmId: '', user: 'u', reason: 'r' })).toThrow(/alarm_id/);
  });
});

describe('mosquitto ACL snippet', () => {
  it('grants the command topic to the ack role for writing and to the processor for reading only', () => {
    const acl = mosquittoAckAcl({
      commandTopic: 'strainward/brannock-mere/alarms/ack', ackUsers: ['eng-ashdown'], processorUser: 'sw-processor',
      notifyTopicFilter: 'strainward/brannock-mere/notify/#',
    });
    expect(acl.split('\n')).toEqual([
      '# strainward: alarm acknowledgement commands',
      'user sw-processor',
      'topic read strainward/brannock-mere/alarms/ack',
      'topic write strainward/brannock-mere/notify/#',
      '',
      'user eng-ashdown',
      'topic write strainward/brannock-mere/alarms/ack',
      'topic read strainward/brannock-mere/notify/#',
      '',
    ]);
    expect(() => mosquittoAckAcl({ commandTopic: 't', ackUsers: ['bad user'], processorUser: 'p', notifyTopicFilter: 'n' })).toThrow(/bad user/);
  });
});
