import { describe, expect, it } from 'vitest';
import { presenceMessage, presenceTopic, startPresence } from '../../src/app/presence.js';

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
