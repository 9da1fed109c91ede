import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { alarmsRaisedTwice, doubleHolds, holdSpans, startHarness, type Harness } from '../../scripts/cluster/harness.js';

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

/**
 * Three processors share three work units (three copies of the invented deck) through etcd leases
 * (3 members), one Mosquitto with persistence, one VictoriaMetrics. A unit's holder is killed
 * (SIGKILL) while its loggers publish, then the etcd leader. Nothing published may be lost, no unit
 * held by two processors at once, no alarm raised twice.
 */
describe('work units under etcd leases, processors and an etcd member killed', () => {
  let h: Harness;
  beforeAll(async () => { h = await startHarness({ processors: 3, structures: 3, etcdMembers: 3, leaseTtl_s: 2 }); }, 120_000);
  afterAll(async () => { await h?.close(); }, 60_000);

  it('takes a killed holder\'s unit over, and loses, doubles and repeats nothing', async () => {
    // Balanced: with three members the fair share is one unit each.
    const deadline = Date.now() + 40_000;
    let holders = await h.allHeld();
    while (new Set([...holders.values()].map((r) => r!.processor)).size < 3) {
      expect(Date.now()).toBeLessThan(deadline);
      await sleep(200);
      holders = await h.allHeld();
    }
    const from = h.publishers.map((p) => p.nextSeq);
    for (const p of h.publishers) { p.startThermal(); p.startScans(10); }
    await sleep(4000);

    const victim = holders.get(h.units[0])!.processor;
    const killedAt = new Map<string, number>();
    killedAt.set(victim, Date.now());
    await h.processors[Number(victim.slice(1)) - 1].kill();
    let newHolder = victim;
    while (newHolder === victim) {
      await sleep(50);
      const now = await h.holders().catch(() => null);
      newHolder = now?.get(h.units[0])?.processor ?? victim;
      expect(Date.now() - killedAt.get(victim)!).toBeLessThan(60_000);
    }
    const takeover_s = (Date.now() - killedAt.get(victim)!) / 1000;
    await sleep(3000);

    const leader = await h.etcd.leader();
    h.etcd.kill(leader);
    await sleep(6000);

    for (const p of h.publishers) p.stopScans();
    for (const p of h.publishers) expect(await p.drained()).toBe(0);
    const figures = [];
    for (let i = 0; i < h.structures.length; i++) {
      const to = h.publishers[i].nextSeq - 1;
      let f = await h.count(i, from[i], to);
      const until = Date.now() + 60_000;
      while (f.lost > 0 && Date.now() < until) { await sleep(1000); f = await h.count(i, from[i], to); }
      figures.push(f);
    }
    const spans = await holdSpans(h.logFiles, killedAt);
    console.log(JSON.stringify({ takeover_s, victim, newHolder, figures, holds: spans.length }));
    for (const f of figures) {
      expect(f.published).toBeGreaterThan(100);
      expect(f.lost).toBe(0);
    }
    // The killed holder's unit went to a survivor; every unit is held at the end.
    expect(newHolder).not.toBe(victim);
    expect([...(await h.allHeld()).values()].every((r) => r !== null && r.processor !== victim)).toBe(true);
    expect(doubleHolds(spans)).toEqual([]);
    expect(await alarmsRaisedTwice(h.root)).toEqual([]);
  }, 240_000);
});
