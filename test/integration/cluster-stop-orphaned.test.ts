/**
 * A processor in a cluster stops on SIGTERM in bounded time even when everything it would hand
 * back to is gone: its etcd member killed (SIGKILL) and its broker stopped. Nothing can be released
 * in an orderly way then; the lease ends by its TTL and the unacknowledged messages come back to the
 * next holder, so waiting longer gains nothing and keeps a process that looks alive.
 */
import { readFile } from 'node:fs/promises';
import { afterAll, describe, expect, it } from 'vitest';
import { STOP_DEADLINE_MS } from '../../src/cli/commands/run.js';
import { startHarness, type Harness } from '../../scripts/cluster/harness.js';

let h: Harness | undefined;
afterAll(async () => { await h?.close(); }, 60_000);

describe('cluster processor stop with etcd and broker gone', () => {
  it('exits within its stop deadline of SIGTERM (STOP_DEADLINE_MS, 15 s)', async () => {
    h = await startHarness({ processors: 1, structures: 1, etcdMembers: 1, leaseTtl_s: 2 });
    await h.allHeld(30_000);
    h.etcd.kill(h.etcd.members[0]);
    await h.broker!.stop();
    await new Promise((r) => setTimeout(r, 500));
    const asked = Date.now();
    await Promise.race([h.processors[0].stop(), new Promise((r) => setTimeout(r, 40_000))]);
    const tookS = (Date.now() - asked) / 1000;
    console.log(`stop with etcd and broker gone: ${tookS.toFixed(1)} s`);
    expect(h.processors[0].running).toBe(false);
    expect(tookS).toBeLessThan(STOP_DEADLINE_MS / 1000 + 5);
    // Once the unit is lost its connections stay down: no reconnect with the unit's client id, which
    // would knock the next holder off the broker when it comes back (mqtt.js ignores a second end()).
    const records = (await readFile(h.logFiles[0], 'utf8')).split('\n').filter((l) => l.startsWith('{')).map((l) => JSON.parse(l) as { event: string; time: number });
    const lostAt = records.find((r) => r.event === 'unit_lost')?.time;
    expect(lostAt).toBeDefined();
    const attemptsAfter = records.filter((r) => r.event === 'mqtt_error' && r.time > lostAt! + 500).length;
    expect(attemptsAfter).toBe(0);
    expect(records.some((r) => r.event === 'stop_timed_out' || r.event === 'stopped')).toBe(true);
  }, 120_000);
});
