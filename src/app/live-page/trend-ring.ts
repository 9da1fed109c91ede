/**
 * A short trend of one group: fixed-size ring of time buckets (the last `capacity` buckets of
 * `bucket_ms` each), holding per bucket the largest von Mises stress and the extreme principal
 * stresses, MPa. Memory is fixed at construction; `add` mutates the ring and allocates nothing.
 */
export class TrendRing {
  private readonly startMs: Float64Array;
  private readonly vonMisesMax: Float64Array;
  private readonly principalMax: Float64Array;
  private readonly principalMin: Float64Array;
  /** Index of the newest bucket, -1 when empty. */
  private head = -1;
  private size = 0;

  constructor(readonly capacity: number, readonly bucket_ms: number) {
    this.startMs = new Float64Array(capacity);
    this.vonMisesMax = new Float64Array(capacity);
    this.principalMax = new Float64Array(capacity);
    this.principalMin = new Float64Array(capacity);
  }

  /** Takes one result at timeMs (epoch ms). A value older than the newest bucket goes into it (loggers do not go back in time far). NaN values are skipped. */
  add(timeMs: number, vonMises: number, principalHigh: number, principalLow: number): void {
    const start = Math.floor(timeMs / this.bucket_ms) * this.bucket_ms;
    if (this.head < 0 || start > this.startMs[this.head]) {
      this.head = (this.head + 1) % this.capacity;
      this.size = Math.min(this.size + 1, this.capacity);
      this.startMs[this.head] = start;
      this.vonMisesMax[this.head] = Number.NaN;
      this.principalMax[this.head] = Number.NaN;
      this.principalMin[this.head] = Number.NaN;
    }
    const h = this.head;
    this.vonMisesMax[h] = higher(this.vonMisesMax[h], vonMises);
    this.principalMax[h] = higher(this.principalMax[h], principalHigh);
    this.principalMin[h] = -higher(-this.principalMin[h], -principalLow);
  }

  /** Buckets starting at or after sinceMs, oldest first, as plain arrays [start_ms, vm_max, p_max, p_min] (null for no value). Allocates the copy. */
  since(sinceMs: number): Array<[number, number | null, number | null, number | null]> {
    const out: Array<[number, number | null, number | null, number | null]> = [];
    const nn = (v: number) => (Number.isNaN(v) ? null : v);
    for (let k = this.size - 1; k >= 0; k--) {
      const i = (this.head - k + this.capacity) % this.capacity;
      if (this.startMs[i] >= sinceMs) out.push([this.startMs[i], nn(this.vonMisesMax[i]), nn(this.principalMax[i]), nn(this.principalMin[i])]);
    }
    return out;
  }
}

/** The larger of two values, NaN meaning "none". */
function higher(current: number, value: number): number {
  if (Number.isNaN(value)) return current;
  return Number.isNaN(current) || value > current ? value : current;
}
