import type { Segment } from './series.js';

/**
 * One quantity of one group for the report's plots, reduced as the results stream in: memory
 * bounded by `maxChunks`, whatever the length of the run.
 *
 * Samples are kept in chunks: a chunk covers one bucket of time (`widthMs` wide, on the epoch grid)
 * of an unbroken run of samples and keeps its first, smallest, largest and last sample, so the
 * extremes survive every reduction (as `downsample` keeps them per pixel column). The buckets start
 * 1 ms wide: until a series has `maxChunks` samples every sample is its own chunk and the series is
 * exactly what the full array gives. At `maxChunks` the width doubles and neighbouring chunks merge,
 * as often as needed (a month at 10 Hz: about 21 doublings).
 *
 * A chunk remembers why it may start a new line: always (the result before lacked the quantity, or
 * a periodic quantity wrapped), or a pause of so many ms, which breaks the line if the whole run's
 * median interval makes it a gap (known only at the end). Chunks that may start a line are merged
 * only when the median known then says the pause is no gap, or when breaks alone would fill the
 * chunks: then the merged chunk's samples are drawn as dots (see compact).
 */
export class SeriesAccumulator {
  /** Per chunk, STRIDE numbers (fields below). Grows by doubling up to maxChunks chunks. */
  private data: Float64Array;
  private count = 0;
  private widthMs = 1;
  /** The next sample starts a new line whatever the pause (the result before lacked the quantity). */
  private breakPending = false;
  private lastValue = Number.NaN;
  private lastTime = -Infinity;
  samples = 0;

  /**
   * @param periodDeg a periodic quantity (principal direction: 180): a step of more than half the
   *   period breaks the line instead of drawing a stroke across the plot.
   */
  constructor(private readonly maxChunks = 2048, private readonly periodDeg = 0) {
    this.data = new Float64Array(Math.min(64, maxChunks) * STRIDE);
  }

  /** The group's result lacked this quantity (or it was masked): the line breaks before the next sample. */
  markBreak(): void {
    this.breakPending = true;
  }

  /**
   * One sample: time (epoch ms), value, an auxiliary number kept with the extremes (the principal
   * direction's shear radius, for masking when the run is over; NaN otherwise), the pause since the
   * group's previous result (ms; 0 for the first), and the largest pause that is no gap by the
   * median known now (Infinity while none is known).
   */
  push(t: number, v: number, aux: number, pauseMs: number, noGapBelowMs: number): void {
    this.samples++;
    const wraps = this.periodDeg > 0 && !this.breakPending && Math.abs(v - this.lastValue) > this.periodDeg / 2;
    const brk = this.breakPending || wraps ? Infinity : pauseMs;
    this.breakPending = false;
    this.lastValue = v;
    const bucket = Math.floor(t / this.widthMs);
    const n = this.count;
    if (n > 0) {
      const o = (n - 1) * STRIDE;
      const d = this.data;
      // Same bucket, no possible break: the sample joins the chunk. A sample older than the last
      // (results of a group normally come in time order) joins it too.
      if ((d[o + BUCKET] === bucket && brk <= noGapBelowMs && brk !== Infinity) || (t < this.lastTime && brk !== Infinity)) {
        addSample(d, o, t, v, aux);
        if (t > this.lastTime) this.lastTime = t;
        return;
      }
    }
    if (n === this.maxChunks) {
      this.compact(noGapBelowMs);
      this.push2(t, v, aux, brk, noGapBelowMs);
      return;
    }
    this.append(bucket, brk, t, v, aux);
  }

  /** After a compaction: the sample again, its break already decided. */
  private push2(t: number, v: number, aux: number, brk: number, noGapBelowMs: number): void {
    const bucket = Math.floor(t / this.widthMs);
    const o = (this.count - 1) * STRIDE;
    if (this.count > 0 && this.data[o + BUCKET] === bucket && brk <= noGapBelowMs && brk !== Infinity) {
      addSample(this.data, o, t, v, aux);
      if (t > this.lastTime) this.lastTime = t;
      return;
    }
    this.append(bucket, brk, t, v, aux);
  }

  private append(bucket: number, brk: number, t: number, v: number, aux: number): void {
    if ((this.count + 1) * STRIDE > this.data.length) {
      const bigger = new Float64Array(Math.min(this.data.length * 2, this.maxChunks * STRIDE));
      bigger.set(this.data);
      this.data = bigger;
    }
    const o = this.count * STRIDE;
    const d = this.data;
    d[o + BUCKET] = bucket;
    d[o + BREAK] = brk;
    d[o + N] = 1;
    d[o + BROKEN] = 0;
    set(d, o + FIRST, t, v, aux); set(d, o + LOW, t, v, aux); set(d, o + HIGH, t, v, aux); set(d, o + LAST, t, v, aux);
    this.count++;
    if (t > this.lastTime) this.lastTime = t;
  }

  /**
   * Doubles the bucket width until at most three quarters of the chunks are left (one doubling
   * about halves them; the last width is then at most the run's span / (maxChunks / 2)). Where
   * breaks alone keep more than that (a principal direction masked and unmasked thousands of times
   * a day), the chunks of one bucket merge across their breaks into a chunk drawn as separate dots:
   * its extremes kept, no line drawn through a break.
   */
  private compact(noGapBelowMs: number): void {
    const target = (this.maxChunks * 3) >> 2;
    while (this.count > target) {
      this.widthMs *= 2;
      this.mergeNeighbours(noGapBelowMs, true, false);
      if (this.count > target) this.mergeNeighbours(noGapBelowMs, false, true);
    }
  }

  /** Merges neighbouring chunks of one bucket (halving the bucket numbers first if `halve`); across breaks if `force`. */
  private mergeNeighbours(noGapBelowMs: number, halve: boolean, force: boolean): void {
    const d = this.data;
    let w = 0;
    for (let r = 0; r < this.count; r++) {
      const o = r * STRIDE;
      const bucket = halve ? Math.floor(d[o + BUCKET] / 2) : d[o + BUCKET];
      if (w > 0) {
        const p = (w - 1) * STRIDE;
        const brk = d[o + BREAK];
        const joins = brk <= noGapBelowMs && brk !== Infinity;
        if (d[p + BUCKET] === bucket && (joins || force)) {
          mergeChunk(d, p, o);
          if (!joins) d[p + BROKEN] = 1;
          continue;
        }
      }
      const q = w * STRIDE;
      if (q !== o) d.copyWithin(q, o, o + STRIDE);
      d[q + BUCKET] = bucket;
      w++;
    }
    this.count = w;
  }

  /**
   * The kept samples as segments (lines) in time order: a new segment where a chunk's break is
   * certain or its pause is longer than `gapAboveMs`, and around samples whose auxiliary number is
   * below `auxFloor` (dropped). New arrays; the accumulator is unchanged.
   */
  segments(gapAboveMs: number, auxFloor = -Infinity): Segment[] {
    const out: Segment[] = [];
    let cur: Segment | null = null;
    const d = this.data;
    const pts: number[] = [];
    for (let c = 0; c < this.count; c++) {
      const o = c * STRIDE;
      const brk = d[o + BREAK];
      const broken = d[o + BROKEN] === 1;
      if (brk === Infinity || brk > gapAboveMs || broken) cur = null;
      keptSamples(d, o, pts);
      for (let i = 0; i < pts.length; i += 3) {
        if (pts[i + 2] < auxFloor) { cur = null; continue; }
        if (cur === null) { cur = { t: [], v: [] }; out.push(cur); }
        cur.t.push(pts[i]);
        cur.v.push(pts[i + 1]);
        if (broken) cur = null; // breaks lie between these samples: each is a dot of its own
      }
      if (broken) cur = null;
    }
    return out;
  }

  /** Width of a bucket now, ms (1 until the first reduction). */
  get bucketMs(): number { return this.widthMs; }

  /** Chunks held now (at most maxChunks). */
  get chunks(): number { return this.count; }
}

// Chunk layout: bucket, break (Infinity, or the pause in ms), sample count, four samples (time,
// value, auxiliary): first, lowest, highest, last; and 1 when breaks lie between its samples.
const BUCKET = 0, BREAK = 1, N = 2, FIRST = 3, LOW = 6, HIGH = 9, LAST = 12, BROKEN = 15;
const STRIDE = 16;

function addSample(d: Float64Array, o: number, t: number, v: number, aux: number): void {
  d[o + N]++;
  if (t < d[o + FIRST]) set(d, o + FIRST, t, v, aux);
  if (t >= d[o + LAST]) set(d, o + LAST, t, v, aux);
  if (v < d[o + LOW + 1]) set(d, o + LOW, t, v, aux);
  if (v > d[o + HIGH + 1]) set(d, o + HIGH, t, v, aux);
}

/** Chunk at `b` into the chunk at `a` (a before b in time). */
function mergeChunk(d: Float64Array, a: number, b: number): void {
  d[a + N] += d[b + N];
  if (d[b + BROKEN] === 1) d[a + BROKEN] = 1;
  if (d[b + FIRST] < d[a + FIRST]) set(d, a + FIRST, d[b + FIRST], d[b + FIRST + 1], d[b + FIRST + 2]);
  if (d[b + LAST] >= d[a + LAST]) set(d, a + LAST, d[b + LAST], d[b + LAST + 1], d[b + LAST + 2]);
  if (d[b + LOW + 1] < d[a + LOW + 1]) set(d, a + LOW, d[b + LOW], d[b + LOW + 1], d[b + LOW + 2]);
  if (d[b + HIGH + 1] > d[a + HIGH + 1]) set(d, a + HIGH, d[b + HIGH], d[b + HIGH + 1], d[b + HIGH + 2]);
}

function set(d: Float64Array, at: number, t: number, v: number, aux: number): void {
  d[at] = t; d[at + 1] = v; d[at + 2] = aux;
}

/** The chunk's distinct kept samples in time order into `out` (time, value, auxiliary triples). */
function keptSamples(d: Float64Array, o: number, out: number[]): void {
  out.length = 0;
  const slots = [o + FIRST, o + LOW, o + HIGH, o + LAST].sort((x, y) => d[x] - d[y] || x - y);
  let pt = Number.NaN, pv = Number.NaN;
  for (const s of slots) {
    if (d[s] === pt && d[s + 1] === pv) continue; // the same sample in two roles
    pt = d[s]; pv = d[s + 1];
    out.push(d[s], d[s + 1], d[s + 2]);
  }
}
