/**
 * bench:startup - wall time of `strainward --help` (target under 0.5 s) and of one `calc` (target
 * under 1 s), each a fresh process through bin/strainward.mjs as a user starts it, over several runs,
 * interleaved with `node -e 0` (the in-run baseline: what node itself costs on this machine now).
 * The machine is shared, so medians are the figures and the load average is printed with them.
 * Last line: {"bench":"startup","help_median_s":...,"calc_median_s":...,"help_ratio":...,...}
 */
import { spawnSync } from 'node:child_process';
import { loadavg } from 'node:os';

const RUNS = Number(process.env.SW_BENCH_RUNS ?? 7);
const BIN = 'bin/strainward.mjs';
const CASES: Record<string, string[]> = {
  baseline: ['-e', '0'],
  help: [BIN, '--help'],
  calc: [BIN, 'calc', '-c', 'config/brannock-mere.yaml', '-g', 'flange-south-mid1', '-r', 'lg-span1/ch04=512.5', '-t', '14.2'],
};
const TARGET_S: Record<string, number> = { help: 0.5, calc: 1 };

function timeOnce(args: string[]): number {
  const t0 = process.hrtime.bigint();
  const r = spawnSync(process.execPath, args, { stdio: ['ignore', 'pipe', 'pipe'], encoding: 'utf8' });
  const s = Number(process.hrtime.bigint() - t0) / 1e9;
  if (r.status !== 0) throw new Error(`node ${args.join(' ')} exited ${r.status}: ${r.stderr}`);
  return s;
}

const median = (xs: number[]): number => {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 === 1 ? s[m] : (s[m - 1] + s[m]) / 2;
};
const round3 = (x: number): number => Math.round(x * 1000) / 1000;

const load = loadavg()[0];
for (const args of Object.values(CASES)) timeOnce(args); // warm the file cache (and a compile cache, if any)
const times: Record<string, number[]> = { baseline: [], help: [], calc: [] };
for (let i = 0; i < RUNS; i++) for (const [name, args] of Object.entries(CASES)) times[name].push(timeOnce(args));

const figures: Record<string, number | boolean | string> = { bench: 'startup', runs: RUNS, load_1min: round3(load) };
for (const name of Object.keys(CASES)) {
  const med = median(times[name]);
  figures[`${name}_median_s`] = round3(med);
  figures[`${name}_min_s`] = round3(Math.min(...times[name]));
  console.log(`${name.padEnd(8)} median ${med.toFixed(3)} s  min ${Math.min(...times[name]).toFixed(3)} s  max ${Math.max(...times[name]).toFixed(3)} s${TARGET_S[name] ? `  (target under ${TARGET_S[name]} s)` : ''}`);
}
for (const name of Object.keys(TARGET_S)) {
  figures[`${name}_ratio`] = round3(median(times[name]) / median(times.baseline));
  figures[`${name}_meets_target`] = median(times[name]) < TARGET_S[name];
}
console.log(JSON.stringify(figures));
