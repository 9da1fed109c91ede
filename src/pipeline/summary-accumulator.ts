/**
 * Statistics per interval of logger time, for a fixed list of quantities (index q): count, mean and
 * spread by Welford's update (B. P. Welford, Technometrics 4(3), 1962), minimum and maximum with
 * the time each was first reached. Pure: no I/O, no clock; folding a value allocates nothing.
 * The stored standard deviation is the population one (divisor n): the spread of the signal
 * over the interval, defined for a single result too.
 */

export interface IntervalStats {
  /** Interval start, epoch ms of logger time; NaN while nothing is open. */
  startMs: number;
  /** Results without a quality flag: their values are in the statistics. */
  trusted: number;
  /** Results with any flag: counted and their flags OR-ed, their values left out. */
  flagged: number;
  flagBits: number;
  count: Float64Array;
  mean: Float64Array;
  m2: Float64Array;
  min: Float64Array;
  max: Float64Array;
  minAtMs: Float64Array;
  maxAtMs: Float64Array;
}

/** One summarised series (a group's results, or a logger's raw readings): its open interval and what it folded last. */
export interface SummarySeries {
  intervalMs: number;
  stats: IntervalStats;
  /**
   * Logger time and sequence number of the last sample folded: a sample before it is late (a
   * redelivery, a clock gone back), and so is one at the same time unless its seq is higher (two
   * scans in one millisecond); without a seq, the same time is a repeat.
   */
  lastFoldedMs: number;
  lastFoldedSeq: number;
  /** End of the last interval written, ms: a sample before it is late too (its interval is already stored). */
  closedThroughMs: number;
}

export function newIntervalStats(quantities: number): IntervalStats {
  const s: IntervalStats = {
    startMs: Number.NaN, trusted: 0, flagged: 0, flagBits: 0,
    count: new Float64Array(quantities), mean: new Float64Array(quantities), m2: new Float64Array(quantities),
    min: new Float64Array(quantities), max: new Float64Array(quantities),
    minAtMs: new Float64Array(quantities), maxAtMs: new Float64Array(quantities),
  };
  resetInterval(s, Number.NaN);
  return s;
}

export function newSummarySeries(quantities: number, intervalMs: number): SummarySeries {
  return {
    intervalMs, stats: newIntervalStats(quantities),
    lastFoldedMs: Number.NEGATIVE_INFINITY, lastFoldedSeq: Number.NaN, closedThroughMs: Number.NEGATIVE_INFINITY,
  };
}

/** Empties the statistics and opens the interval starting at `startMs` (NaN: none open). */
export function resetInterval(s: IntervalStats, startMs: number): void {
  s.startMs = startMs;
  s.trusted = 0;
  s.flagged = 0;
  s.flagBits = 0;
  s.count.fill(0);
  s.mean.fill(0);
  s.m2.fill(0);
  s.min.fill(Number.POSITIVE_INFINITY);
  s.max.fill(Number.NEGATIVE_INFINITY);
  s.minAtMs.fill(Number.NaN);
  s.maxAtMs.fill(Number.NaN);
}

/** Start of the interval holding `tMs`: whole multiples of the interval since the epoch. */
export function intervalStart(tMs: number, intervalMs: number): number {
  return Math.floor(tMs / intervalMs) * intervalMs;
}

/** One value of quantity q at logger time tMs. Ties keep the first time an extreme was reached. */
export function foldValue(s: IntervalStats, q: number, x: number, tMs: number): void {
  const n = s.count[q] + 1;
  s.count[q] = n;
  const d = x - s.mean[q];
  const mean = s.mean[q] + d / n;
  s.mean[q] = mean;
  s.m2[q] += d * (x - mean);
  if (x < s.min[q]) { s.min[q] = x; s.minAtMs[q] = tMs; }
  if (x > s.max[q]) { s.max[q] = x; s.maxAtMs[q] = tMs; }
}

/** Population standard deviation of quantity q (divisor n); NaN with no value. */
export function stdOf(s: IntervalStats, q: number): number {
  const n = s.count[q];
  return n > 0 ? Math.sqrt(Math.max(0, s.m2[q]) / n) : Number.NaN;
}

export type Placement = 'late' | 'fold' | 'close';

/** True when (tMs, seq) comes after the last folded sample. */
function afterLastFolded(series: SummarySeries, tMs: number, seq: number | null): boolean {
  if (tMs !== series.lastFoldedMs) return tMs > series.lastFoldedMs;
  return seq !== null && seq > series.lastFoldedSeq;
}

/**
 * Where a sample at logger time tMs (with the scan's seq) goes: `late` (not folded: not after the
 * last folded sample, or in an interval already written), `fold` into the open interval (opened
 * here if none is), or `close`: the open interval ends before it, so write it, `closeInterval`,
 * then fold.
 */
export function placeSample(series: SummarySeries, tMs: number, seq: number | null = null): Placement {
  if (!afterLastFolded(series, tMs, seq) || tMs < series.closedThroughMs) return 'late';
  const s = series.stats;
  if (Number.isNaN(s.startMs)) {
    resetInterval(s, intervalStart(tMs, series.intervalMs));
    return 'fold';
  }
  return tMs < s.startMs + series.intervalMs ? 'fold' : 'close';
}

/** After the open interval was written: it is closed, and the one holding `tMs` is opened (NaN: none). */
export function closeInterval(series: SummarySeries, nextMs: number): void {
  const s = series.stats;
  if (!Number.isNaN(s.startMs)) series.closedThroughMs = s.startMs + series.intervalMs;
  resetInterval(s, Number.isNaN(nextMs) ? Number.NaN : intervalStart(nextMs, series.intervalMs));
}

/** Book-keeping of a folded sample (call after its values are folded). */
export function noteFolded(series: SummarySeries, tMs: number, seq: number | null = null): void {
  series.lastFoldedMs = tMs;
  series.lastFoldedSeq = seq ?? Number.NaN;
}

/** True while an interval is open. */
export function isOpen(series: SummarySeries): boolean {
  return !Number.isNaN(series.stats.startMs);
}

/** A series as plain JSON (the storage state file): only quantities with values; infinities as null. */
export interface SummarySeriesJson {
  intervalMs: number;
  startMs: number | null;
  trusted: number;
  flagged: number;
  flagBits: number;
  /** Quantity index -> [count, mean, m2, min, max, minAtMs, maxAtMs]. */
  values: Record<string, [number, number, number, number, number, number, number]>;
  lastFoldedMs: number | null;
  lastFoldedSeq: number | null;
  closedThroughMs: number | null;
}

const finiteOrNull = (x: number): number | null => (Number.isFinite(x) ? x : null);

export function seriesToJson(series: SummarySeries): SummarySeriesJson {
  const s = series.stats;
  const values: SummarySeriesJson['values'] = {};
  for (let q = 0; q < s.count.length; q++) {
    if (s.count[q] > 0) values[q] = [s.count[q], s.mean[q], s.m2[q], s.min[q], s.max[q], s.minAtMs[q], s.maxAtMs[q]];
  }
  return {
    intervalMs: series.intervalMs, startMs: finiteOrNull(s.startMs), trusted: s.trusted, flagged: s.flagged, flagBits: s.flagBits, values,
    lastFoldedMs: finiteOrNull(series.lastFoldedMs), lastFoldedSeq: finiteOrNull(series.lastFoldedSeq), closedThroughMs: finiteOrNull(series.closedThroughMs),
  };
}

/** Restores a series written by seriesToJson into `series` (same number of quantities). */
export function seriesFromJson(series: SummarySeries, j: SummarySeriesJson): void {
  const s = series.stats;
  series.intervalMs = j.intervalMs;
  resetInterval(s, j.startMs ?? Number.NaN);
  s.trusted = j.trusted;
  s.flagged = j.flagged;
  s.flagBits = j.flagBits;
  for (const [k, v] of Object.entries(j.values)) {
    const q = Number(k);
    if (!(q >= 0 && q < s.count.length)) continue;
    [s.count[q], s.mean[q], s.m2[q], s.min[q], s.max[q], s.minAtMs[q], s.maxAtMs[q]] = v;
  }
  series.lastFoldedMs = j.lastFoldedMs ?? Number.NEGATIVE_INFINITY;
  series.lastFoldedSeq = j.lastFoldedSeq ?? Number.NaN;
  series.closedThroughMs = j.closedThroughMs ?? Number.NEGATIVE_INFINITY;
}
