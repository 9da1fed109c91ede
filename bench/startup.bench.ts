/**
 * bench:startup - wall time of `strainward --help` (target under 0.5 s) and of one `calc` (target
 * under 1 s), each a fresh process through bin/strainward.mjs as a user starts it (the npm script
 * builds dist/ first, so that is the compiled JavaScript), over several runs, interleaved with
 * `node -e 0` (the in-run baseline: what node itself costs on this machine now) and with the same
 * two commands from the sources through tsx (STRAINWARD_SOURCE=1), which is what the loader costs.
 * The machine is shared, so medians are the figures and the load average is printed with them,
 * and each process also reports the CPU it used (user + system, bench/support/report-cpu.mjs),
 * which the load hardly changes: on an idle machine the wall time comes close to it.
 * Last line: {"bench":"startup","help_median_s":...,"calc_median_s":...,"help_ratio":...,"help_tsx_ratio":...,...}
 */
import { spawnSync } from 'node:child_process';
import { loadavg } from 'node:os';
import { fileURLToPath } from 'node:url';

const RUNS = Number(process.env.SW_BENCH_RUNS ?? 7);
const BIN = 'bin/strainward.mjs';
const CALC = ['calc', '-c', 'config/brannock-mere.yaml', '-g', 'flange-south-mid1', '-r', 'lg-span1/ch04=512.5', '-t', '14.2'];
const FROM_SOURCE = { STRAINWARD_SOURCE: '1' };
const CASES: Record<string, { args: string[]; env?: Record<string, string> }> = {
  baseline: { args: ['-e', '0'] },
  help: { args: [BIN, '--help'] },
  calc: { args: [BIN, ...CALC] },
  help_tsx: { args: [BIN, '--help'], env: FROM_SOURCE },
  calc_tsx: { args: [BIN, ...CALC], env: FROM_SOURCE },
};
const TARGET_S: Record<string, number> = { help: 0.5, calc: 1 };

const REPORT_CPU = fileURLToPath(new URL('./support/report-cpu.mjs', import.meta.url));

/** Wall time of one run, and the CPU the process reported using, seconds. */
function timeOnce({ args, env }: { args: string[]; env?: Record<string, string> }): { wall: number; cpu: number } {
  const t0 = process.hrtime.bigint();
  const r = spawnSync(process.execPath, ['--import', REPORT_CPU, ...args], { stdio: ['ignore', 'pipe', 'pipe', 'pipe'], encoding: 'utf8', env: { ...process.env, ...env } });
  const wall = Number(process.hrtime.bigint() - t0) / 1e9;
  if (r.status !== 0) throw new Error(`node ${args.join(' ')} exited ${r.status}: ${r.stderr}`);
  return { wall, cpu: Number(String(r.output[3]).trim()) / 1e6 };
}

const median = (xs: number[]): number => {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 === 1 ? s[m] : (s[m - 1] + s[m]) / 2;
};
const round3 = (x: number): number => Math.round(x * 1000) / 1000;

const load = loadavg()[0];
for (const c of Object.values(CASES)) timeOnce(c); // warm the file cache (and a compile cache, if any)
const times: Record<string, number[]> = Object.fromEntries(Object.keys(CASES).map((name) => [name, []]));
const cpu: Record<string, number[]> = Object.fromEntries(Object.keys(CASES).map((name) => [name, []]));
for (let i = 0; i < RUNS; i++) {
  for (const [name, c] of Object.entries(CASES)) {
    const t = timeOnce(c);
    times[name].push(t.wall);
    cpu[name].push(t.cpu);
  }
}

const figures: Record<string, number | boolean | string> = { bench: 'startup', runs: RUNS, load_1min: round3(load) };
for (const name of Object.keys(CASES)) {
  const med = median(times[name]);
  figures[`${name}_median_s`] = round3(med);
  figures[`${name}_min_s`] = round3(Math.min(...times[name]));
  figures[`${name}_cpu_median_s`] = round3(median(cpu[name]));
  console.log(`${name.padEnd(9)} median ${med.toFixed(3)} s  min ${Math.min(...times[name]).toFixed(3)} s  max ${Math.max(...times[name]).toFixed(3)} s  cpu ${median(cpu[name]).toFixed(3)} s${TARGET_S[name] ? `  (target under ${TARGET_S[name]} s)` : ''}`);
}
for (const name of Object.keys(TARGET_S)) {
  figures[`${name}_ratio`] = round3(median(times[name]) / median(times.baseline));
  figures[`${name}_tsx_ratio`] = round3(median(times[`${name}_tsx`]) / median(times.baseline));
  figures[`${name}_meets_target`] = median(times[name]) < TARGET_S[name];
}
console.log(JSON.stringify(figures));
