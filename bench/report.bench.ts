/**
 * bench:report - memory of `strainward replay --report` over 30 minutes and over 24 hours of the
 * simulated deck (the standard scenario: traffic, a heavy vehicle at mid-run, every fault kind),
 * each in a process of its own: the report is gathered as the replay streams (ReportBuilder), so
 * its memory must not grow with the length of the replay. The 30-minute replay without a report
 * is the in-run baseline of what the report itself adds. RSS is the peak of samples every 50 ms
 * (and their median, the working size).
 * Last line: {"bench":"report","rss_30min_mb":...,"rss_24h_mb":...,"ratio":...}
 */
import { mkdtemp, rm, stat } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { round } from './support/measure.js';
import { replayInChild } from './support/run-child.js';
import { simulatedCapture, STRUCTURE_FILE } from './support/sim-capture.js';

const log = (s: string) => console.log(s);
const halfHour = await simulatedCapture(1800, 1, log);
const day = await simulatedCapture(86_400, 1, log);
const out = await mkdtemp(join(tmpdir(), 'sw-bench-report-'));
const run = async (dir: string, name: string, report: boolean) => {
  const html = join(out, `${name}.html`);
  const r = await replayInChild(['--capture', dir, '-s', STRUCTURE_FILE, '--out', join(out, name), '--run-tag', name, ...(report ? ['--report', html] : [])]);
  if (r.exit_code !== 0) throw new Error(`replay of ${dir} exited ${r.exit_code}: ${JSON.stringify(r)}`);
  const bytes = report ? (await stat(html)).size : 0;
  log(`${name}: ${r.messages} scans, ${r.results} results in ${r.wall_s} s (${r.cpu_s} s CPU); peak RSS ${r.peak_rss_mb} MB (median ${r.median_rss_mb} MB), live heap at the end ${r.live_heap_mb} MB${report ? `; report ${round(bytes / 1024)} KB` : ''}`);
  return { ...r, bytes };
};
try {
  const base = await run(halfHour.dir, 'half-hour-no-report', false);
  const a = await run(halfHour.dir, 'half-hour', true);
  const b = await run(day.dir, 'day', true);
  console.log(JSON.stringify({
    bench: 'report', rss_30min_mb: a.peak_rss_mb, rss_24h_mb: b.peak_rss_mb, ratio: round(b.peak_rss_mb / a.peak_rss_mb, 2),
    median_rss_30min_mb: a.median_rss_mb, median_rss_24h_mb: b.median_rss_mb, median_ratio: round(b.median_rss_mb / a.median_rss_mb, 2),
    rss_30min_without_report_mb: base.peak_rss_mb, live_heap_30min_mb: a.live_heap_mb, live_heap_24h_mb: b.live_heap_mb,
    results_30min: a.results, results_24h: b.results, report_kb_30min: round(a.bytes / 1024), report_kb_24h: round(b.bytes / 1024),
    scans_per_s_24h: Math.round(b.messages / b.wall_s),
  }));
} finally {
  await rm(out, { recursive: true, force: true });
}
