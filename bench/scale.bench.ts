/**
 * Scale-out figures (`npm run bench:scale`): for 1, 2 and 3 processors sharing three work units
 * (three copies of the invented deck) through etcd leases, one Mosquitto and VictoriaMetrics on
 * this machine (scripts/cluster/harness.ts): the simulator (a process of its own) publishes the
 * three copies live at RATE_FACTOR times their configured scan rates; scans/s through the cluster,
 * then a processor killed (SIGKILL) half way and the time until its unit is held again (with one
 * processor: by the same processor started again), scans lost and duplicated (of every scan the
 * broker confirmed, over every logger), and overlapping holds. The 2-core machine limits the
 * throughput; the takeover and loss figures are what counts.
 * Last printed line: one JSON object.
 */
import { doubleHolds, holdSpans, startHarness } from '../scripts/cluster/harness.js';

/** The deck's loggers scan 21.2 times a second together (config/brannock-mere.yaml); this many times that, per copy. */
const RATE_FACTOR = 20;
const PUBLISH_S = 10;
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

interface Figures { processors: number; offered_scans_per_s: number; scans_per_s: number; takeover_s: number; lost: number; duplicated: number; unconfirmed: number; double_holders: number }

async function measure(processors: number): Promise<Figures> {
  const h = await startHarness({ processors, structures: 3, etcdMembers: 1 });
  try {
    // Until every unit is held and, with several processors, spread over them.
    for (let i = 0; i < 300; i++) {
      const holders = await h.allHeld();
      if (new Set([...holders.values()].map((r) => r!.processor)).size === Math.min(processors, 3)) break;
      await sleep(100);
    }
    const sim = h.startSimulator({ rateFactor: RATE_FACTOR, durationS: PUBLISH_S, heavyAtS: [] });
    await sim.publishing();
    const t0 = Date.now();
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
    const { summary, published } = await sim.finished();
    // Scans/s: every published scan stored, over the time from the first publish to the last stored.
    let lost = 0;
    let duplicated = 0;
    let stored = 0;
    for (let i = 0; i < h.structures.length; i++) {
      let f = await h.count(i, published);
      const until = Date.now() + 90_000;
      while (f.lost > 0 && Date.now() < until) { await sleep(250); f = await h.count(i, published); }
      lost += f.lost;
      duplicated += f.duplicated;
      stored += f.stored;
    }
    const elapsed_s = (Date.now() - t0) / 1000;
    const spans = await holdSpans(h.logFiles, processors === 1 ? new Map() : killedAt);
    const figures = {
      processors, offered_scans_per_s: summary.scans / (summary.wallMs / 1000), scans_per_s: stored / elapsed_s, takeover_s, lost, duplicated,
      unconfirmed: summary.unconfirmed, double_holders: doubleHolds(spans).length,
    };
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
  offered_scans_per_s: runs.map((r) => round(r.offered_scans_per_s, 1)),
  scans_per_s: runs.map((r) => round(r.scans_per_s, 1)),
  takeover_s: runs.map((r) => round(r.takeover_s)),
  takeover_s_max: round(Math.max(...runs.map((r) => r.takeover_s))),
  lost: runs.reduce((n, r) => n + r.lost, 0),
  duplicated: runs.reduce((n, r) => n + r.duplicated, 0),
  unconfirmed: runs.reduce((n, r) => n + r.unconfirmed, 0),
  double_holders: runs.reduce((n, r) => n + r.double_holders, 0),
  // Against the in-run baseline of one processor.
  ratio_scans_per_s_to_one_processor: runs.map((r) => round(r.scans_per_s / runs[0].scans_per_s, 3)),
}));
