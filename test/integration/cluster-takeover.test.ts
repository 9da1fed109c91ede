import { cp } from 'node:fs/promises';
import { basename, join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { checkClusterStatus } from '../../src/cli/cluster-status.js';
import { alarmsRaised, alarmsRaisedTwice, doubleHolds, holdSpans, startHarness, type Harness, type HarnessOptions } from '../../scripts/cluster/harness.js';

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
const t0 = Date.now();
/** Progress on the test's output: where a slow or stuck run spent its time. */
const step = (what: string) => console.log(`${((Date.now() - t0) / 1000).toFixed(1)} s: ${what}`);

/** Waits until the three processors hold one unit each (the fair share with three members). */
async function balanced(h: Harness): Promise<Map<string, { processor: string } | null>> {
  const deadline = Date.now() + 40_000;
  let holders = await h.allHeld();
  while (new Set([...holders.values()].map((r) => r!.processor)).size < h.processors.length) {
    if (Date.now() > deadline) throw new Error(`not balanced: ${JSON.stringify(Object.fromEntries(holders))}`);
    await sleep(200);
    holders = await h.allHeld();
  }
  return holders;
}

/**
 * Heavy vehicles on every copy of the deck, s from the simulator's start: the first just before the
 * first kill, so the killed holder has raised the steel groups' alarms on scans its successor gets
 * again; the alarms hold for their 30 s off-delay.
 */
const HEAVY_AT_S = [2];

type Fault = (killedAt: Map<string, number>) => Promise<void>;

/**
 * `crashed`: a database node killed with SIGKILL and started again. It loses what it had taken in
 * but not yet written to its disk (its own buffering, seconds); its replica keeps everything, and
 * vmagent delivers what the node missed while it was down. Its losses must lie in that window.
 * The simulator publishes every structure (as a process), the faults run in turn, then each
 * database node is asked for every scan the broker confirmed.
 */
async function run(h: Harness, faults: Fault[], crashed: { vm: number; window: () => [number, number] } | null = null) {
  const holders = await balanced(h);
  step('balanced');
  const sim = h.startSimulator({ heavyAtS: HEAVY_AT_S });
  await sim.publishing();
  step('simulator publishing');
  await sleep(3000);
  const killedAt = new Map<string, number>();
  // The holder of the first unit is killed first; the time until a survivor holds it is the takeover.
  const victim = holders.get(h.units[0])!.processor;
  killedAt.set(victim, Date.now());
  await h.processors[Number(victim.slice(1)) - 1].kill();
  let newHolder = victim;
  while (newHolder === victim) {
    await sleep(50);
    newHolder = (await h.holders().catch(() => null))?.get(h.units[0])?.processor ?? victim;
    if (Date.now() - killedAt.get(victim)! > 60_000) throw new Error('no takeover within 60 s');
  }
  const takeover_s = (Date.now() - killedAt.get(victim)!) / 1000;
  step(`${victim} killed, ${newHolder} took over in ${takeover_s} s`);
  await sleep(3000);
  for (const [i, fault] of faults.entries()) { await fault(killedAt); step(`fault ${i + 1} done`); await sleep(4000); }
  const { summary, published } = await sim.stop();
  step(`simulator stopped: ${JSON.stringify(summary)}`);
  // Every publish confirmed before the end: an unconfirmed one is never counted as published.
  expect(summary.unconfirmed).toBe(0);
  const figures = [];
  for (let vm = 0; vm < h.vms.length; vm++) {
    // The crashed node is given 5 s in all (its losses are bounded, not waited out); the others until complete.
    const until = Date.now() + (vm === crashed?.vm ? 5_000 : 90_000);
    for (let i = 0; i < h.structures.length; i++) {
      let f = await h.count(i, published, vm);
      while (f.lost > 0 && Date.now() < until) { await sleep(500); f = await h.count(i, published, vm); }
      figures.push({ vm, ...f });
      step(`counted ${JSON.stringify({ vm, ...f })}`);
    }
  }
  const spans = await holdSpans(h.logFiles, killedAt);
  const raised = await alarmsRaised(h.root);
  const raisedTwice = await alarmsRaisedTwice(h.root);
  console.log(JSON.stringify({ takeover_s, victim, newHolder, figures, holds: spans.length, alarms_raised: raised, raised_twice: raisedTwice }));
  expect(summary.confirmed).toBe(figures.filter((f) => f.vm === 0).reduce((n, f) => n + f.published, 0));
  for (const f of figures) {
    expect(f.published).toBeGreaterThan(100);
    if (f.vm !== crashed?.vm) expect(f.lost).toBe(0);
    // Stored once per series and timestamp, however often a scan was delivered.
    expect(f.duplicated).toBe(0);
  }
  if (crashed !== null) {
    const [t0, t1] = crashed.window();
    const inWindow = h.structures.map((st) => [...(published.get(st.structureId)?.values() ?? [])]
      .reduce((n, bySeq) => n + [...bySeq.values()].filter((ts) => ts >= t0 && ts <= t1).length, 0));
    figures.filter((f) => f.vm === crashed.vm).forEach((f, i) => expect(f.lost).toBeLessThanOrEqual(inWindow[i]));
  }
  expect(newHolder).not.toBe(victim);
  expect([...(await h.allHeld()).values()].every((r) => r !== null && r.processor !== victim)).toBe(true);
  expect(doubleHolds(spans)).toEqual([]);
  // The heavy vehicle raised the steel groups' alarms on every copy: the check below is not empty-handed.
  expect(raised).toBeGreaterThanOrEqual(h.structures.length);
  expect(raisedTwice).toEqual([]);
}

function cluster(name: string, o: HarnessOptions, faults: (h: Harness, crash: { at: number; back: number }) => Fault[], crashedVm: number | null, after?: (h: Harness) => Promise<void>) {
  describe(name, () => {
    let h: Harness;
    beforeAll(async () => { h = await startHarness(o); step('harness up'); }, 180_000);
    afterAll(async () => {
      // The processors' logs, kept for whoever reads a failure (test-artifacts/ is not committed).
      const artifacts = join('test-artifacts', `cluster-${o.broker ?? 'mosquitto'}`);
      if (h) await Promise.all([...h.logFiles, join(h.root, 'simulator.log')].map((f) => cp(f, join(artifacts, basename(f)), { recursive: true }).catch(() => {})));
      // The units' alarm logs too (what the check of double raises read).
      if (h) await cp(join(h.root, 'shared'), join(artifacts, 'shared'), { recursive: true, filter: (src) => !/\.[a-z]+$/.test(src) || src.endsWith('alarms.ndjson') }).catch(() => {});
      await h?.close();
      step('harness closed');
    }, 120_000);
    it('takes a killed holder\'s unit over, and loses, doubles and repeats nothing', async () => {
      const crash = { at: 0, back: 0 };
      // What a crashed node may lose: the seconds before its kill it had not yet written, and its downtime.
      await run(h, faults(h, crash), crashedVm === null ? null : { vm: crashedVm, window: () => [crash.at - 10_000, crash.back] });
      await after?.(h);
    }, 300_000);
  });
}

/**
 * Three processors share three work units (three copies of the invented deck) through etcd leases
 * (3 members). Nothing the broker acknowledged may be lost, no unit held by two processors at
 * once, no alarm raised twice.
 */
cluster('one Mosquitto: a processor killed, then the etcd leader', { processors: 3, structures: 3, etcdMembers: 3 }, (h) => [
  async () => { h.etcd.kill(await h.etcd.leader()); },
], null, async (h) => {
  // `status --cluster` lists every unit with its holder; once no processor is left, each unit is named as held by nobody (exit 4).
  const lines: string[] = [];
  const units = await checkClusterStatus(h.clusterFile, { json: false, waitMs: 2000 }, (l) => lines.push(l));
  expect(units.map((u) => u.unit).sort()).toEqual([...h.units].sort());
  expect(units.every((u) => u.holder !== null && u.age_s! >= 0)).toBe(true);
  expect(lines.every((l) => / held by p[123] for \d+\.\d s/.test(l))).toBe(true);
  for (const p of h.processors) await p.kill();
  await sleep(3 * 2000);
  const err = await checkClusterStatus(h.clusterFile, { json: true, waitMs: 2000 }, () => {}).then(() => null, (e: Error) => e);
  expect(err?.name).toBe('SilentProcessorError');
  expect(err?.message).toBe(`3 of 3 units have no holder: ${h.units.join(', ')}`);
});

cluster('a 3-node NATS cluster and 2 VictoriaMetrics nodes behind vmagent: a processor, a NATS node, a database node, the etcd leader killed',
  { processors: 3, structures: 3, etcdMembers: 3, broker: 'nats', databases: 2 }, (h, crash) => [
    async () => { h.nats!.kill(h.nats!.nodes[1]); },
    async () => { crash.at = Date.now(); h.killVm(1); await sleep(3000); await h.restartVm(1); crash.back = Date.now(); },
    async () => { h.etcd.kill(await h.etcd.leader()); },
  ], 1);
