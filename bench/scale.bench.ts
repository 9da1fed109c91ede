/**
 * Scale-out figures (`npm run bench:scale`): for 1, 2 and 3 processors sharing three work units
 * (three copies of the invented deck) through etcd leases, one Mosquitto and VictoriaMetrics on
 * this machine (scripts/cluster/harness.ts): scans/s through the cluster at a steady offer, then a
 * processor killed (SIGKILL) and the time until its unit is held again (with one processor: by the
 * same processor started again), messages lost and duplicated, and overlapping holds. The 2-core
 * machine limits the throughput; the takeover and loss figures are what counts.
 * Last printed line: one JSON object.
 */
import { doubleHolds, holdSpans, startHarness } from '../scripts/cluster/harness.js';

const RATE_PER_STRUCTURE = 100;
const PUBLISH_S = 10;
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

interface Figures { processors: number; scans_per_s: number; takeover_s: number; lost: number; duplicated: number; double_holders: number }

async function measure(processors: number): Promise<Figures> {
  const h = await startHarness({ processors, structures: 3, etcdMembers: 1 });
  try {
    // Until every unit is held and, with several processors, spread over them.
    for (let i = 0; i < 300; i++) {
      const holders = await h.allHeld();
      if (new Set([...holders.values()].map((r) => r!.processor)).size === Math.min(processors, 3)) break;
      await sleep(100);
    }
    const from = h.publishers.map((p) => p.nextSeq);
    for (const p of h.publishers) p.startThermal();
    const t0 = Date.now();
    for (const p of h.publishers) p.startScans(RATE_PER_STRUCTURE);
    await sleep(PUBLISH_S * 1000 / 2);
    // A holder killed half way through the offer.
    const victim = (await h.holders()).get(h.units[0])!.processor;
    const index = Number(victim.slice(1)) - 1;
    const killedAt = new Map([[victim, Date.now()]]);
    await h.processors[index].kill();
    if (processors === 1) await h.processors[index].start(); // nobody else to take over: the same one, started again
    let takeover_s = Number.NaN;
    for (;;) {
      const holder = (await h.holders().catch(() => null))?.get(h.units[0]);
      if (holder && (holder.processor !== victim || (processors === 1 && holder.since_ms > killedAt.get(victim)!))) { takeover_s = (Date.now() - killedAt.get(victim)!) / 1000; break; }
      if (Date.now() - killedAt.get(victim)! > 60_000) break;
      await sleep(20);
    }
    await sleep(Math.max(0, t0 + PUBLISH_S * 1000 - Date.now()));
    for (const p of h.publishers) p.stopScans();
    for (const p of h.publishers) await p.drained();
    // Scans/s: every published scan stored, over the time from the first publish to the last stored.
    let lost = 0;
    let duplicated = 0;
    let published = 0;
    for (let i = 0; i < h.structures.length; i++) {
      const to = h.publishers[i].nextSeq - 1;
      let f = await h.count(i, from[i], to);
      const until = Date.now() + 90_000;
      while (f.lost > 0 && Date.now() < until) { await sleep(500); f = await h.count(i, from[i], to); }
      lost += f.lost;
      duplicated += f.duplicated;
      published += f.published;
    }
    const elapsed_s = (Date.now() - t0) / 1000;
    const spans = await holdSpans(h.logFiles, processors === 1 ? new Map() : killedAt);
    const figures = { processors, scans_per_s: published / elapsed_s, takeover_s, lost, duplicated, double_holders: doubleHolds(spans).length };
    console.log(JSON.stringify(figures));
    return figures;
  } finally {
    await h.close();
  }
}

const runs: Figures[] = [];
for (const n of [1, 2, 3]) runs.push(await measure(n));
const round = (x: number, d = 2) => Math.round(x * 10 ** d) / 10 ** d;
console.log(JSON.stringify({
  bench: 'scale',
  processors: runs.map((r) => r.processors),
  offered_scans_per_s: RATE_PER_STRUCTURE * 3,
  scans_per_s: runs.map((r) => round(r.scans_per_s, 1)),
  takeover_s: runs.map((r) => round(r.takeover_s)),
  takeover_s_max: round(Math.max(...runs.map((r) => r.takeover_s))),
  lost: runs.reduce((n, r) => n + r.lost, 0),
  duplicated: runs.reduce((n, r) => n + r.duplicated, 0),
  double_holders: runs.reduce((n, r) => n + r.double_holders, 0),
  // Against the in-run baseline of one processor.
  ratio_scans_per_s_to_one_processor: runs.map((r) => round(r.scans_per_s / runs[0].scans_per_s, 3)),
}));
