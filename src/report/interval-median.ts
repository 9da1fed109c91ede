/**
 * Median of the positive intervals between consecutive times, kept as the times stream in, with
 * memory that does not grow with their number: a count per distinct interval (ms), exact while
 * there are at most `maxDistinct` of them, then per 0.5 % wide bin (a logger's intervals take a
 * handful of values; only jittered clocks reach the bins). Same answer as `medianIntervalMs` of
 * series.ts over the same sorted times while exact.
 */
export class IntervalMedian {
  private counts = new Map<number, number>();
  private binned = false;
  private total = 0;
  private cached = Number.NaN;
  private cachedAt = -1;

  constructor(private readonly maxDistinct = 1024) {}

  /** Counts one interval, ms; ignores intervals that are not positive (repeated or earlier times). */
  add(intervalMs: number): void {
    if (!(intervalMs > 0)) return;
    const key = this.binned ? binOf(intervalMs) : intervalMs;
    this.counts.set(key, (this.counts.get(key) ?? 0) + 1);
    this.total++;
    if (!this.binned && this.counts.size > this.maxDistinct) this.toBins();
  }

  /** The median interval (the upper one of an even count, as medianIntervalMs), ms; NaN before any interval. */
  median(): number {
    if (this.total === 0) return Number.NaN;
    if (this.cachedAt === this.total) return this.cached;
    const keys = [...this.counts.keys()].sort((a, b) => a - b);
    const rank = this.total >> 1;
    let seen = 0;
    let found = keys[keys.length - 1];
    for (const k of keys) {
      seen += this.counts.get(k)!;
      if (seen > rank) { found = k; break; }
    }
    this.cached = this.binned ? valueOfBin(found) : found;
    this.cachedAt = this.total;
    return this.cached;
  }

  private toBins(): void {
    const exact = this.counts;
    this.counts = new Map();
    this.binned = true;
    for (const [v, n] of exact) { const b = binOf(v); this.counts.set(b, (this.counts.get(b) ?? 0) + n); }
  }
}

const LOG_STEP = Math.log(1.005);
const binOf = (v: number) => Math.round(Math.log(v) / LOG_STEP);
const valueOfBin = (b: number) => Math.exp(b * LOG_STEP);
