import { describe, expect, it } from 'vitest';
import {
  closeInterval, foldValue, intervalStart, isOpen, newSummarySeries, noteFolded, placeSample, seriesFromJson, seriesToJson, stdOf,
} from '../../src/pipeline/summary-accumulator.js';

/** A small deterministic generator (LCG, Numerical Recipes constants, from memory) for test values. */
function lcg(seed: number): () => number {
  let x = seed >>> 0;
  return () => { x = (Math.imul(x, 1664525) + 1013904223) >>> 0; return x / 2 ** 32; };
}

/** Two-pass mean and population standard deviation: the textbook definition the one-pass update must equal. */
function twoPass(xs: number[]): { mean: number; std: number } {
  const mean = xs.reduce((a, b) => a + b, 0) / xs.length;
  return { mean, std: Math.sqrt(xs.reduce((a, b) => a + (b - mean) ** 2, 0) / xs.length) };
}

describe('summary accumulator: statistics of one interval', () => {
  it('equals the two-pass mean and population standard deviation, with min, max and the time each was first reached', () => {
    const next = lcg(7);
    const series = newSummarySeries(2, 10_000);
    const xs: number[] = [];
    const ts: number[] = [];
    for (let i = 0; i < 5000; i++) {
      // A large offset with a small spread: where a naive sum of squares loses its digits.
      const x = 1e6 + 0.001 * Math.round(next() * 1000);
      const t = 1_700_000_000_000 + i;
      expect(placeSample(series, t)).toBe('fold');
      foldValue(series.stats, 0, x, t);
      noteFolded(series, t);
      xs.push(x); ts.push(t);
    }
    const s = series.stats;
    const ref = twoPass(xs);
    expect(s.count[0]).toBe(5000);
    expect(Math.abs(s.mean[0] - ref.mean)).toBeLessThan(1e-9);
    expect(Math.abs(stdOf(s, 0) - ref.std)).toBeLessThan(1e-9);
    const min = Math.min(...xs);
    const max = Math.max(...xs);
    expect(s.min[0]).toBe(min);
    expect(s.max[0]).toBe(max);
    expect(s.minAtMs[0]).toBe(ts[xs.indexOf(min)]);
    expect(s.maxAtMs[0]).toBe(ts[xs.indexOf(max)]);
    expect(s.count[1]).toBe(0);
    expect(stdOf(s, 1)).toBeNaN();
  });

  it('a single value has spread 0; a constant signal too', () => {
    const series = newSummarySeries(1, 1000);
    placeSample(series, 5);
    foldValue(series.stats, 0, 3.25, 5);
    expect(stdOf(series.stats, 0)).toBe(0);
    for (let t = 6; t < 100; t++) foldValue(series.stats, 0, 3.25, t);
    expect(stdOf(series.stats, 0)).toBe(0);
    expect(series.stats.mean[0]).toBe(3.25);
  });
});

describe('summary accumulator: intervals on logger time', () => {
  it('intervals start at whole multiples of the interval since the epoch, also before it', () => {
    expect(intervalStart(1_700_000_012_345, 10_000)).toBe(1_700_000_010_000);
    expect(intervalStart(-1, 1000)).toBe(-1000);
    expect(intervalStart(60_000, 60_000)).toBe(60_000);
  });

  it('opens on the first sample, closes when a sample lies past its end, and treats samples at or before the last folded one as late', () => {
    const series = newSummarySeries(1, 1000);
    expect(placeSample(series, 1500)).toBe('fold');
    expect(series.stats.startMs).toBe(1000);
    noteFolded(series, 1500);
    expect(placeSample(series, 1500)).toBe('late'); // repeated
    expect(placeSample(series, 1200)).toBe('late'); // older
    expect(placeSample(series, 1999)).toBe('fold');
    noteFolded(series, 1999);
    expect(placeSample(series, 2000)).toBe('close');
    closeInterval(series, 2000);
    expect(series.stats.startMs).toBe(2000);
    expect(series.closedThroughMs).toBe(2000);
    expect(placeSample(series, 2000)).toBe('fold');
  });

  it('two scans in one millisecond are told apart by their seq; a repeated one (same time and seq, or no seq) is late', () => {
    const series = newSummarySeries(1, 1000);
    expect(placeSample(series, 100, 7)).toBe('fold');
    noteFolded(series, 100, 7);
    expect(placeSample(series, 100, 7)).toBe('late');
    expect(placeSample(series, 100, 6)).toBe('late');
    expect(placeSample(series, 100, null)).toBe('late');
    expect(placeSample(series, 100, 8)).toBe('fold');
    noteFolded(series, 100, null);
    expect(placeSample(series, 100, 9)).toBe('late'); // nothing to compare with: a repeat
    expect(placeSample(series, 101, null)).toBe('fold');
  });

  it('an interval closed for silence makes a later sample of it late (it is already stored)', () => {
    const series = newSummarySeries(1, 1000);
    expect(isOpen(series)).toBe(false);
    placeSample(series, 100);
    noteFolded(series, 100);
    expect(isOpen(series)).toBe(true);
    closeInterval(series, Number.NaN);
    expect(series.stats.startMs).toBeNaN();
    expect(isOpen(series)).toBe(false);
    expect(placeSample(series, 900)).toBe('late');
    expect(placeSample(series, 1000)).toBe('fold');
  });

  it('survives its JSON form exactly (the storage state file)', () => {
    const next = lcg(3);
    const a = newSummarySeries(3, 10_000);
    placeSample(a, 20_000);
    for (let i = 0; i < 50; i++) { foldValue(a.stats, 1, next() * 100 - 50, 20_000 + i); noteFolded(a, 20_000 + i); }
    a.stats.trusted = 50; a.stats.flagged = 2; a.stats.flagBits = 0b101;
    const b = newSummarySeries(3, 1);
    seriesFromJson(b, JSON.parse(JSON.stringify(seriesToJson(a))));
    expect(seriesToJson(b)).toEqual(seriesToJson(a));
    for (let i = 50; i < 60; i++) { foldValue(a.stats, 1, i, 20_000 + i); foldValue(b.stats, 1, i, 20_000 + i); }
    expect(Array.from(b.stats.m2)).toEqual(Array.from(a.stats.m2));
    expect(b.stats.min[0]).toBe(Number.POSITIVE_INFINITY);
  });
});
