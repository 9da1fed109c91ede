/**
 * Stress-range histogram in bins of equal width: bin i holds ranges in [i w, (i+1) w) MPa, the last
 * bin everything from `bins * w` up. Counts are cycles (a half cycle adds 0.5).
 */
export interface RangeHistogram {
  binWidthMPa: number;
  /** bins + 1 entries: the last is the overflow bin. */
  counts: number[];
}

export function newHistogram(binWidthMPa: number, bins: number): RangeHistogram {
  if (!(binWidthMPa > 0) || !Number.isInteger(bins) || bins < 1) throw new RangeError('histogram: bin width > 0 MPa and an integer count of bins >= 1');
  return { binWidthMPa, counts: new Array<number>(bins + 1).fill(0) };
}

/** Index of the bin a range falls in. */
export function binOf(h: RangeHistogram, rangeMPa: number): number {
  const i = Math.floor(rangeMPa / h.binWidthMPa);
  return i < 0 ? 0 : i >= h.counts.length - 1 ? h.counts.length - 1 : i;
}

/** Adds `count` cycles of `rangeMPa`. Mutates `h`; allocates nothing. */
export function histogramAdd(h: RangeHistogram, rangeMPa: number, count: number): void {
  h.counts[binOf(h, rangeMPa)] += count;
}
