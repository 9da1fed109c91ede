/**
 * One `strainward replay` in a process of its own, so its memory is measured alone: runs the CLI's
 * main() with the arguments given and prints one JSON line with the wall and CPU time of the
 * replay (module loading excluded), the peak and the median RSS sampled every 50 ms (the peak
 * catches a collection that came late on a busy machine; the median is the working size), and the
 * live heap after a full collection at the end (with --expose-gc).
 * Usage: node --import tsx --expose-gc bench/support/replay-child.ts <replay arguments...>
 */
import { main } from '../../src/cli/main.js';
import { liveHeapMb, RssSampler, round } from './measure.js';

const args = process.argv.slice(2);
const rss = new RssSampler(50);
const samples: number[] = [];
const sampling = setInterval(() => samples.push(rss.sample()), 50);
const cpu0 = process.cpuUsage();
const t0 = performance.now();
const lines: string[] = [];
const write = process.stderr.write.bind(process.stderr);
process.stderr.write = ((s: string | Uint8Array) => { lines.push(String(s)); return true; }) as typeof process.stderr.write;
const code = await main(['node', 'strainward', 'replay', ...args]);
process.stderr.write = write;
const wallS = (performance.now() - t0) / 1000;
const c = process.cpuUsage(cpu0);
rss.stop();
clearInterval(sampling);
samples.sort((a, b) => a - b);
const summary = lines.join('').match(/replayed (\d+) messages: (\d+) frames, (\d+) results/);
console.log(JSON.stringify({
  exit_code: code, messages: Number(summary?.[1] ?? NaN), frames: Number(summary?.[2] ?? NaN), results: Number(summary?.[3] ?? NaN),
  wall_s: round(wallS, 2), cpu_s: round((c.user + c.system) / 1e6, 2), peak_rss_mb: round(rss.peak_mb), median_rss_mb: round(samples[samples.length >> 1] ?? Number.NaN), live_heap_mb: round(liveHeapMb()),
  stderr_tail: lines.join('').split('\n').filter(Boolean).slice(-3),
}));
