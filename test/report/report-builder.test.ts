import { readFile } from 'node:fs/promises';
import { parse } from 'yaml';
import { describe, expect, it } from 'vitest';
import { DiscardSink } from '../../src/adapters/discard-sink.js';
import { reportAlarm } from '../../src/app/report-inputs.js';
import { replay } from '../../src/app/replay.js';
import { teeAsync } from '../../src/app/tee-messages.js';
import { compileStructure } from '../../src/config/compile.js';
import { loadStructureFile } from '../../src/config/load.js';
import type { RawMessage } from '../../src/model/raw-message.js';
import type { GroupResult, ResultQuantity } from '../../src/model/result.js';
import { compareRuns } from '../../src/report/compare.js';
import { angleFloorMPa, PLOTTED_QUANTITIES } from '../../src/report/group-accumulator.js';
import { peaksByGroup } from '../../src/report/peaks.js';
import { renderBuiltReport, renderReport } from '../../src/report/render-report.js';
import { ReportBuilder } from '../../src/report/report-builder.js';
import { downsample, findGaps, segmentsOf, type Segment } from '../../src/report/series.js';
import { SeriesAccumulator } from '../../src/report/series-accumulator.js';
import type { ReportAlarmTransition } from '../../src/report/types.js';
import { defaultScenario } from '../../simulators/default-scenario.js';
import { rawMessageOf } from '../../simulators/outputs.js';
import { createSimulation, type SimScan } from '../../simulators/run.js';

const START = Date.UTC(2026, 5, 1, 6);
const WIDTH = 860;

/** The plotted lines of one quantity from the whole array, as the report drew them before it streamed. */
function fullArraySegments(rs: readonly GroupResult[], q: ResultQuantity): Segment[] {
  const gaps = findGaps(rs.map((r) => r.timeMs), 3);
  if (q !== 'principal_angle_deg') return segmentsOf(rs, q, gaps);
  const radius = (r: GroupResult) => ((r.values.principal_1_MPa ?? 0) - (r.values.principal_2_MPa ?? 0)) / 2;
  const floor = angleFloorMPa(rs.reduce((m, r) => Math.max(m, radius(r)), 0));
  const masked = rs.map((r) => (radius(r) >= floor ? r : { ...r, values: { ...r.values, principal_angle_deg: undefined } }));
  return segmentsOf(masked, q, gaps, 180);
}

/** The scans as messages, less the pier logger's between 40 and 50 s (a pause of its link: a gap in its groups' data). */
async function* messagesOf(scans: Iterable<SimScan>): AsyncIterable<RawMessage> {
  for (const s of scans) {
    if (s.loggerId === 'lg-pier' && s.trueMs >= START + 40_000 && s.trueMs < START + 50_000) continue;
    yield rawMessageOf(s);
  }
}

describe('the report built as the replay streams', () => {
  it('equals the report built from the whole arrays of a short replay (two minutes, every fault kind, compared with a corrected configuration)', async () => {
    const structure = await loadStructureFile('config/brannock-mere.yaml');
    // The second configuration: a corrected zero of the single flange gauge (any change will do).
    const doc = parse(await readFile('config/brannock-mere.yaml', 'utf8'), { merge: true });
    doc.gauges.find((g: { id: string }) => g.id === 'sg-sm-a').zero_reading = 50;
    const corrected = compileStructure(doc);
    if (!corrected.ok) throw new Error(JSON.stringify(corrected.problems));
    const scn = defaultScenario({ seed: 3, start_ms: START, duration_s: 120, day_s: 600 });
    const [a, b] = teeAsync(messagesOf(createSimulation(structure, scn).scans()), 2, 64);
    const streamed = new ReportBuilder({ comparison: true });
    const first: GroupResult[] = [], second: GroupResult[] = [];
    const alarms: ReportAlarmTransition[] = [];
    const common = { runTag: 'r', tickMs: 1000, speed: 0, sleep: async () => {}, deadLetters: { write: async () => {} }, alarms: true };
    await Promise.all([
      replay({
        ...common, structure, messages: a, sink: new DiscardSink(), keepTransitions: false,
        onTransitions: (ts) => { for (const t of ts) { alarms.push(reportAlarm(t)); streamed.addAlarm(reportAlarm(t)); } },
        attach: (p$) => { p$.subscribe((p) => { if (p.kind === 'frame') for (const r of p.results) { first.push(r); streamed.addResult(r); } }); },
      }),
      replay({
        ...common, structure: corrected.structure, messages: b, sink: new DiscardSink(),
        attach: (p$) => { p$.subscribe((p) => { if (p.kind === 'frame') for (const r of p.results) { second.push(r); streamed.addComparisonResult(r); } }); },
      }),
    ]);
    expect(first.length).toBeGreaterThan(4000);
    expect(first.some((r) => r.flags.length > 0)).toBe(true); // the faults flag results: the peaks tables have both kinds
    expect(alarms.length).toBeGreaterThan(3);

    // Series, per group and plotted quantity: exactly the full array's lines (a two-minute series is kept whole).
    let compared = 0;
    for (const [id, g] of streamed.groups) {
      const rs = first.filter((r) => r.groupId === id).sort((x, y) => x.timeMs - y.timeMs);
      expect(g.gaps()).toEqual(findGaps(rs.map((r) => r.timeMs), 3));
      expect(g.count).toBe(rs.length);
      for (const q of PLOTTED_QUANTITIES) {
        const full = fullArraySegments(rs, q);
        expect(g.has(q), `${id} ${q}`).toBe(rs.some((r) => Number.isFinite(r.values[q] ?? Number.NaN)));
        if (!g.has(q)) continue;
        expect(downsample(g.segments(q), streamed.fromMs, streamed.toMs, WIDTH), `${id} ${q}`).toEqual(downsample(full, streamed.fromMs, streamed.toMs, WIDTH));
        compared++;
      }
    }
    expect(compared).toBeGreaterThan(40);
    expect(streamed.groups.get('web-north-pier')!.gaps()).toEqual([{ fromMs: expect.any(Number), toMs: expect.any(Number) }]); // the pier logger's 10 s pause
    // Peaks: exactly peaksByGroup over the whole array.
    expect([...streamed.groups.values()].map((g) => g.peaks!.peaks())).toEqual(peaksByGroup(first));
    // Differences: counts and largest differences exact; means to 1e-12 relative (the sums add in another order).
    const want = compareRuns(first, second);
    const got = streamed.comparer!.differences();
    expect(got.map((d) => [d.groupId, d.quantity, d.matched, d.maxAbsDifference, d.maxAtMs])).toEqual(want.map((d) => [d.groupId, d.quantity, d.matched, d.maxAbsDifference, d.maxAtMs]));
    got.forEach((d, i) => expect(Math.abs(d.meanDifference - want[i].meanDifference)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(want[i].meanDifference))));
    expect(want.find((d) => d.groupId === 'flange-south-mid1' && d.quantity === 'stress_axial_MPa')!.maxAbsDifference).toBeGreaterThan(10);

    // The whole document: the same text as renderReport of the arrays, but for the means' last digits.
    const header = { title: 't', structureId: structure.structureId, generatedAtMs: START, runLabel: 'a', comparisonLabel: 'b', levels: structure.alarms?.levels };
    const fromArrays = renderReport({ ...header, run: { label: 'a', results: first }, comparison: { label: 'b', results: second }, alarms });
    const strip = (html: string) => html.replace(/<table class="differences">.*?<\/table>/s, '');
    expect(strip(renderBuiltReport(header, streamed))).toBe(strip(fromArrays));
  });

  it('keeps a day of 10 Hz results in a bounded series, with the extremes and where they are (within one bucket)', () => {
    const n = 864_000; // 24 h at 10 Hz
    const t0 = Date.UTC(2026, 0, 1);
    const value = (i: number) => 30 * Math.sin(i / 9000) + 5 * Math.sin(i / 7) + (i === 400_001 ? 180 : 0) - (i === 12_345 ? 95 : 0);
    const s = new SeriesAccumulator(2048);
    let max = -Infinity, min = Infinity, mostChunks = 0;
    for (let i = 0; i < n; i++) {
      const v = value(i);
      max = Math.max(max, v); min = Math.min(min, v);
      s.push(t0 + i * 100, v, Number.NaN, i === 0 ? 0 : 100, 300);
      mostChunks = Math.max(mostChunks, s.chunks);
    }
    expect(mostChunks).toBe(2048);
    const [seg, ...more] = s.segments(300);
    expect(more).toHaveLength(0);
    expect(seg.t.length).toBeLessThanOrEqual(4 * 2048);
    // The spike and the dip survive with their times, exactly.
    expect(Math.max(...seg.v)).toBe(max);
    expect(seg.t[seg.v.indexOf(max)]).toBe(t0 + 400_001 * 100);
    expect(Math.min(...seg.v)).toBe(min);
    expect(seg.t[seg.v.indexOf(min)]).toBe(t0 + 12_345 * 100);
    // Every kept point is a sample; per pixel column the kept maximum is at most the true one, and the true
    // one is matched by a kept point no more than one bucket (s.bucketMs, under a pixel) outside the column.
    const bucket = s.bucketMs;
    const span = n * 100, col = span / WIDTH;
    expect(bucket).toBeLessThan(col);
    for (let c = 0; c < WIDTH; c++) {
      const lo = t0 + c * col, hi = lo + col;
      let trueMax = -Infinity, keptMax = -Infinity, nearMax = -Infinity;
      for (let i = Math.ceil((lo - t0) / 100); t0 + i * 100 < hi && i < n; i++) trueMax = Math.max(trueMax, value(i));
      seg.t.forEach((t, k) => {
        if (t >= lo && t < hi) keptMax = Math.max(keptMax, seg.v[k]);
        if (t >= lo - bucket && t < hi + bucket) nearMax = Math.max(nearMax, seg.v[k]);
      });
      expect(keptMax).toBeLessThanOrEqual(trueMax);
      expect(nearMax).toBeGreaterThanOrEqual(trueMax);
    }
    expect(seg.t.filter((t, k) => seg.v[k] !== value((t - t0) / 100))).toEqual([]);
  });

  it('keeps breaks through the reduction: a gap and a missing quantity still break the line after a day', () => {
    const s = new SeriesAccumulator(512);
    const t0 = Date.UTC(2026, 0, 1);
    for (let i = 0; i < 500_000; i++) {
      if (i >= 200_000 && i < 210_000) continue; // a 1000 s pause: a gap at 3 x 100 ms
      if (i === 300_000) { s.markBreak(); continue; } // a result lacking the quantity
      s.push(t0 + i * 100, Math.sin(i / 1000), Number.NaN, i === 0 ? 0 : i === 210_000 ? 1_000_100 : 100, 300);
    }
    const segs = s.segments(300);
    expect(segs).toHaveLength(3);
    expect(segs[0].t.at(-1)).toBe(t0 + 199_999 * 100);
    expect(segs[1].t[0]).toBe(t0 + 210_000 * 100);
    expect(segs[1].t.at(-1)).toBe(t0 + 299_999 * 100);
    expect(segs[2].t[0]).toBe(t0 + 300_001 * 100);
  });

  it('draws a series broken every few samples as dots, never as a line across the breaks, and joins its unbroken stretch', () => {
    const s = new SeriesAccumulator(2048);
    const t0 = Date.UTC(2026, 0, 1);
    const n = 864_000; // a day at 10 Hz: every third result lacks the value in the first half, none in the second
    const value = (i: number) => Math.sin(i / 3000) * 80 + (i === 100_000 ? 170 : 0);
    let max = -Infinity;
    for (let i = 0; i < n; i++) {
      if (i < n / 2 && i % 3 === 2) { s.markBreak(); continue; }
      s.push(t0 + i * 100, value(i), Number.NaN, i === 0 ? 0 : 100, 300);
      max = Math.max(max, value(i));
    }
    expect(s.chunks).toBeLessThanOrEqual(2048);
    const segs = s.segments(300);
    const span = (g: { t: number[] }) => g.t[g.t.length - 1] - g.t[0];
    const half = t0 + (n / 2) * 100;
    // In the broken half no line is longer than two samples of the data (200 ms): dots and pairs only.
    for (const g of segs) if (g.t[0] < half - 100) expect(span(g)).toBeLessThanOrEqual(100);
    // The unbroken half is one line.
    expect(segs.filter((g) => g.t[0] >= half - 100 && g.t.length > 1).map(span)).toEqual([expect.any(Number)]);
    expect(span(segs.at(-1)!)).toBeGreaterThan((n / 2 - 10) * 100);
    expect(Math.max(...segs.flatMap((g) => g.v))).toBe(max); // the extreme in the broken half survives
  });

  it('lists at most maxAlarmRows transitions and says how many more there were; the timelines take them all', () => {
    const b = new ReportBuilder({ maxAlarmRows: 10 });
    for (let k = 0; k < 40; k++) {
      b.addAlarm({ time_ms: START + k * 1000, alarm_id: `bm:spike:lg/ch${k % 4}:1`, class: 'health', state: k % 8 < 4 ? 'active_unacknowledged' : 'cleared_unacknowledged', level: 'advisory', channel: `lg/ch${k % 4}`, message: 'm' });
    }
    const html = renderBuiltReport({ title: 't', structureId: 'bm', generatedAtMs: START, runLabel: 'a' }, b);
    expect(html.match(/<tr class="health">/g)).toHaveLength(10);
    expect(html).toContain('30 later transitions are not listed here');
    expect(html.match(/<rect class="span"/g)).toHaveLength(20); // 5 raise-clear cycles of 4 channels
  });
});

describe('teeAsync', () => {
  it('gives every consumer every item in order, reading the source once, neither more than maxLead ahead', async () => {
    let reads = 0;
    async function* source() { for (let i = 0; i < 10_000; i++) { reads++; yield i; } }
    const [x, y] = teeAsync(source(), 2, 16);
    const got: number[][] = [[], []];
    let lead = 0;
    const take = async (it: AsyncIterable<number>, k: number) => {
      for await (const v of it) {
        got[k].push(v);
        lead = Math.max(lead, Math.abs(got[0].length - got[1].length));
        if (k === 1 && v % 100 === 0) await new Promise((r) => setTimeout(r, 0)); // the slower one
      }
    };
    await Promise.all([take(x, 0), take(y, 1)]);
    const all = Array.from({ length: 10_000 }, (_, i) => i);
    expect(got[0]).toEqual(all);
    expect(got[1]).toEqual(all);
    expect(reads).toBe(10_000);
    expect(lead).toBeLessThanOrEqual(17);
  });
});
