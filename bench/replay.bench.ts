/**
 * bench:replay - a capture of the simulated deck replayed to line-protocol files with the alarms
 * on, as `strainward replay` does, each run in a process of its own: a short capture (1 h of the
 * deck) and a long one (6 h), and a 10-minute one for the start-up figure (the heap is still
 * growing to its working size then). Rate = scans replayed per second of wall time of the long run
 * (and per CPU second, which a shared machine disturbs less); memory = peak RSS of each, which must
 * not grow with the length of the capture, and the live heap after a full collection at the end
 * (a leak shows there). The bar is 10,000 scans/s (issue 12).
 * `--cpu-prof` writes a CPU profile of the long run into var/bench-profiles/.
 * Last line: {"bench":"replay","scans_per_s":...,"rss_short_mb":...,"rss_long_mb":...,"ratio_long_to_short":...}
 */
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { round } from './support/measure.js';
import { replayInChild } from './support/run-child.js';
import { simulatedCapture, STRUCTURE_FILE } from './support/sim-capture.js';

const STARTUP_S = 600;
const SHORT_S = 3600;
const LONG_S = 21600;
const BAR = 10_000;
const profile = process.argv.includes('--cpu-prof');
const log = (s: string) => console.log(s);

const startup = await simulatedCapture(STARTUP_S, 1, log);
const short = await simulatedCapture(SHORT_S, 1, log);
const long = await simulatedCapture(LONG_S, 1, log);
const out = await mkdtemp(join(tmpdir(), 'sw-bench-replay-'));
const run = async (dir: string, name: string, flags: string[] = []) => {
  const r = await replayInChild(['--capture', dir, '-s', STRUCTURE_FILE, '--out', join(out, name), '--run-tag', name], flags);
  if (r.exit_code !== 0) throw new Error(`replay of ${dir} exited ${r.exit_code}: ${JSON.stringify(r)}`);
  log(`${name}: ${r.messages} scans in ${r.wall_s} s (${r.cpu_s} s CPU): ${Math.round(r.messages / r.wall_s)} scans/s, ${Math.round(r.messages / r.cpu_s)} per CPU second; peak RSS ${r.peak_rss_mb} MB (median ${r.median_rss_mb} MB), live heap at the end ${r.live_heap_mb} MB`);
  return r;
};
try {
  const z = await run(startup.dir, 'ten-minutes');
  const s = await run(short.dir, 'short');
  const l = await run(long.dir, 'long', profile ? ['--cpu-prof', '--cpu-prof-dir=var/bench-profiles'] : []);
  const scansPerS = l.messages / l.wall_s;
  console.log(JSON.stringify({
    bench: 'replay', scans_per_s: Math.round(scansPerS), scans_per_cpu_s: Math.round(l.messages / l.cpu_s), bar_scans_per_s: BAR,
    ratio_to_bar: round(scansPerS / BAR, 2), rss_short_mb: s.peak_rss_mb, rss_long_mb: l.peak_rss_mb, ratio_long_to_short: round(l.peak_rss_mb / s.peak_rss_mb, 2),
    median_rss_short_mb: s.median_rss_mb, median_rss_long_mb: l.median_rss_mb,
    live_heap_short_mb: s.live_heap_mb, live_heap_long_mb: l.live_heap_mb, rss_10min_mb: z.peak_rss_mb, short_scans: s.messages, long_scans: l.messages,
    short_scans_per_s: Math.round(s.messages / s.wall_s), profiled: profile,
  }));
} finally {
  await rm(out, { recursive: true, force: true });
}
