import { describe, expect, it } from 'vitest';
import { assessPresence, presenceMessage, presenceTopic, startPresence } from '../../src/app/presence.js';

const who = { processor: 'sw-1', structure: 'brannock-mere', every_s: 0.05 };

describe('processor presence', () => {
  it('fills the topic pattern, and an empty pattern switches presence off', () => {
    expect(presenceTopic('strainward/{structure}/processor/{client_id}', 'brannock-mere', 'sw-1')).toBe('strainward/brannock-mere/processor/sw-1');
    expect(presenceTopic('', 'brannock-mere', 'sw-1')).toBeNull();
  });

  it('writes the state, who, the time in ISO 8601 UTC and the counters', () => {
    expect(JSON.parse(presenceMessage('online', who, Date.UTC(2026, 11, 2, 0, 0, 0), { frames: 3, database_reachable: null }))).toEqual({
      state: 'online', processor: 'sw-1', structure: 'brannock-mere', at: '2026-12-02T00:00:00.000Z', every_s: 0.05, frames: 3, database_reachable: null,
    });
  });

  it('publishes online at once and every period, retained at QoS 1, goes on after a failed publish, and ends with stopped', async () => {
    const sent: Array<{ state: string; frames: number; retain: boolean | undefined; qos: number | undefined }> = [];
    const errors: unknown[] = [];
    let frames = 0;
    let calls = 0;
    const presence = startPresence(async (_topic, payload, opts) => {
      if (++calls === 2) throw new Error('broker away');
      const m = JSON.parse(String(payload)) as { state: string; frames: number };
      sent.push({ state: m.state, frames: m.frames, retain: opts?.retain, qos: opts?.qos });
    }, 't', who, () => ({ frames: frames++ }), Date.now, (e) => errors.push(e));
    await new Promise((r) => setTimeout(r, 180));
    await presence.stop();
    expect(errors).toHaveLength(1);
    expect(sent.length).toBeGreaterThanOrEqual(3); // the first, then heartbeats after the failed one, then stopped
    expect(sent[0]).toEqual({ state: 'online', frames: 0, retain: true, qos: 1 });
    expect(sent.at(-1)!.state).toBe('stopped');
    expect(sent.slice(0, -1).every((m) => m.state === 'online' && m.retain === true)).toBe(true);
  });
});

describe('assessPresence: is the processor computing?', () => {
  const NOW = Date.UTC(2026, 11, 2, 1, 0, 0);
  const msg = (state: string, ageS: number, extra: Record<string, unknown> = {}) => ({
    topic: 'strainward/brannock-mere/processor/sw-1',
    payload: new TextEncoder().encode(JSON.stringify({ state, processor: 'sw-1', structure: 'brannock-mere', at: new Date(NOW - ageS * 1000).toISOString(), every_s: 10, ...extra })),
  });
  const one = (m: { topic: string; payload: Uint8Array }) => assessPresence([m], NOW)[0];

  it('online and younger than twice its period is healthy; older is stale', () => {
    expect(one(msg('online', 19.9))).toMatchObject({ state: 'online', healthy: true, reason: '' });
    expect(one(msg('online', 19.9)).age_s).toBeCloseTo(19.9, 9);
    expect(one(msg('online', 20.1))).toMatchObject({ healthy: false, reason: 'no status for 20.1 s (every 10 s expected)' });
  });

  it('offline (the last will) and stopped are not healthy, whatever their age', () => {
    expect(one(msg('offline', 0))).toMatchObject({ healthy: false, reason: 'offline: the broker reported the connection lost (last will)' });
    expect(one(msg('stopped', 0))).toMatchObject({ healthy: false, reason: 'stopped' });
  });

  it('alarms disabled and synthetic loggers are warnings of a healthy processor; none otherwise', () => {
    expect(one(msg('online', 1)).warnings).toEqual([]);
    const w = one(msg('online', 1, { alarms_disabled: true, synthetic_loggers: ['lg-span1', 'lg-thermal'] }));
    expect(w.healthy).toBe(true);
    expect(w.warnings).toHaveLength(2);
    expect(w.warnings[0]).toMatch(/^alarms are DISABLED \(structure file: alarms: \{ disabled: true \}\)/);
    expect(w.warnings[1]).toBe('SYNTHETIC (simulated) data from lg-span1, lg-thermal: results and alarms from it describe no real structure');
  });

  it('an unreadable status is not healthy, and says why', () => {
    expect(one({ topic: 't/x', payload: new TextEncoder().encode('{oops') })).toMatchObject({ processor: 'x', state: 'unreadable', healthy: false, reason: 'unreadable status (not JSON)' });
    expect(one(msg('sleeping', 0)).reason).toMatch(/^unreadable status \(state: /);
  });
});
