/**
 * Recent readings of one temperature sensor, bounded (a ring of the last CAPACITY readings in time
 * order), and the temperature at any instant by the two join rules: the last reading at or before
 * it, or linear interpolation between the readings either side. Pure state, no clock.
 */
export const HISTORY_CAPACITY = 16;

export class TemperatureHistory {
  private readonly times = new Float64Array(HISTORY_CAPACITY);
  private readonly values = new Float64Array(HISTORY_CAPACITY);
  private count = 0;

  /** Adds a reading (degC at epoch ms). Out-of-order readings are inserted in place; duplicates replace. */
  add(timeMs: number, valueC: number): void {
    let i = this.count;
    if (i === HISTORY_CAPACITY) {
      if (timeMs < this.times[0]) return; // older than everything we keep: of no use any more
      this.times.copyWithin(0, 1);
      this.values.copyWithin(0, 1);
      i = --this.count;
    }
    while (i > 0 && this.times[i - 1] > timeMs) i--;
    if (i > 0 && this.times[i - 1] === timeMs) {
      this.values[i - 1] = valueC;
      return;
    }
    this.times.copyWithin(i + 1, i, this.count);
    this.values.copyWithin(i + 1, i, this.count);
    this.times[i] = timeMs;
    this.values[i] = valueC;
    this.count++;
  }

  get size(): number {
    return this.count;
  }

  /** True when a reading later than timeMs exists (interpolation is possible). */
  hasAfter(timeMs: number): boolean {
    return this.count > 0 && this.times[this.count - 1] > timeMs;
  }

  /**
   * Temperature at timeMs into out: [valueC, ageMs]. Age is the distance to the reading used; when
   * interpolating, to the farther of the two neighbours. Returns false when there is no reading.
   */
  at(timeMs: number, interpolate: boolean, out: Float64Array): boolean {
    const n = this.count;
    if (n === 0) return false;
    let i = n - 1;
    while (i >= 0 && this.times[i] > timeMs) i--;
    if (i < 0) {
      // Only later readings: the nearest one is the best we have.
      out[0] = this.values[0];
      out[1] = this.times[0] - timeMs;
      return true;
    }
    const tb = this.times[i];
    if (interpolate && i + 1 < n && tb !== timeMs) {
      const ta = this.times[i + 1];
      const w = (timeMs - tb) / (ta - tb);
      out[0] = this.values[i] + w * (this.values[i + 1] - this.values[i]);
      out[1] = Math.max(timeMs - tb, ta - timeMs); // the join is only as good as its wider side
      return true;
    }
    out[0] = this.values[i];
    out[1] = timeMs - tb;
    return true;
  }
}
