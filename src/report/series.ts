import type { GroupResult, ResultQuantity } from '../model/result.js';

/** A run of consecutive samples with no gap: parallel arrays of time (epoch ms) and value. */
export interface Segment { t: number[]; v: number[] }
/** A pause in a group's data, epoch ms (from the last sample before to the first after). */
export interface Gap { fromMs: number; toMs: number }

/** Median of the positive intervals between consecutive times (ms); NaN for fewer than two. */
export function medianIntervalMs(times: readonly number[]): number {
  const d: number[] = [];
  for (let i = 1; i < times.length; i++) if (times[i] > times[i - 1]) d.push(times[i] - times[i - 1]);
  if (d.length === 0) return Number.NaN;
  d.sort((a, b) => a - b);
  return d[d.length >> 1];
}

/** Pauses longer than gapFactor x the median interval. Times must be sorted. New array. */
export function findGaps(times: readonly number[], gapFactor: number): Gap[] {
  const med = medianIntervalMs(times);
  if (!(med > 0)) return [];
  const gaps: Gap[] = [];
  for (let i = 1; i < times.length; i++) if (times[i] - times[i - 1] > gapFactor * med) gaps.push({ fromMs: times[i - 1], toMs: times[i] });
  return gaps;
}

/**
 * The samples of one quantity split into segments: a new segment starts after a gap and after
 * any result that lacks the quantity (e.g. an underdetermined result), so the line breaks there.
 */
export function segmentsOf(results: readonly GroupResult[], q: ResultQuantity, gaps: readonly Gap[], periodDeg = 0): Segment[] {
  const out: Segment[] = [];
  let cur: Segment | null = null;
  let gi = 0;
  for (const r of results) {
    while (gi < gaps.length && gaps[gi].toMs < r.timeMs) gi++;
    const afterGap = gi < gaps.length && gaps[gi].toMs === r.timeMs;
    const v = r.values[q];
    if (v === undefined || !Number.isFinite(v)) { cur = null; continue; }
    // A periodic quantity (a principal direction: 180 degrees) that wraps from +90 to -90 is not a
    // jump: the line breaks there instead of drawing a spurious stroke across the plot.
    const wraps = periodDeg > 0 && cur !== null && Math.abs(v - cur.v[cur.v.length - 1]) > periodDeg / 2;
    if (cur === null || afterGap || wraps) { cur = { t: [], v: [] }; out.push(cur); }
    cur.t.push(r.timeMs);
    cur.v.push(v);
  }
  return out;
}

/**
 * Min/max per pixel column: each segment keeps, per column of a plot `widthPx` wide over
 * [fromMs, toMs], its first, smallest, largest and last samples in time order, so peaks survive
 * any reduction. Segments stay separate (gaps stay gaps). Returns new segments.
 */
export function downsample(segments: readonly Segment[], fromMs: number, toMs: number, widthPx: number): Segment[] {
  const span = Math.max(toMs - fromMs, 1);
  return segments.map((s) => {
    if (s.t.length <= 4 * widthPx) return s;
    const out: Segment = { t: [], v: [] };
    let col = -1;
    let idx: number[] = [];
    const flush = () => {
      if (idx.length === 0) return;
      let lo = idx[0], hi = idx[0];
      for (const i of idx) { if (s.v[i] < s.v[lo]) lo = i; if (s.v[i] > s.v[hi]) hi = i; }
      const keep = [...new Set([idx[0], lo, hi, idx[idx.length - 1]])].sort((a, b) => a - b);
      for (const i of keep) { out.t.push(s.t[i]); out.v.push(s.v[i]); }
      idx = [];
    };
    for (let i = 0; i < s.t.length; i++) {
      const c = Math.floor(((s.t[i] - fromMs) / span) * widthPx);
      if (c !== col) { flush(); col = c; }
      idx.push(i);
    }
    flush();
    return out;
  });
}
