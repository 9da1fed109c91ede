/**
 * Measuring tools of the pipeline benchmark: latency samples in a preallocated array, percentiles,
 * the logger timestamp read straight from payload bytes, and a resident-memory sampler.
 */

/** Latency samples (ms); `add` mutates, nothing allocates per sample. */
export class LatencyRecorder {
  private readonly samples: Float64Array;
  count = 0;

  constructor(capacity: number) {
    this.samples = new Float64Array(capacity);
  }

  add(latency_ms: number): void {
    if (this.count < this.samples.length) this.samples[this.count] = latency_ms;
    this.count++;
  }

  /** Nearest-rank percentile (p in 0..100) of the samples so far, ms; NaN when empty. Copies. */
  percentile(p: number): number {
    const n = Math.min(this.count, this.samples.length);
    if (n === 0) return Number.NaN;
    const sorted = this.samples.slice(0, n).sort();
    return sorted[Math.min(n - 1, Math.max(0, Math.ceil((p / 100) * n) - 1))];
  }
}

const DIGIT_0 = 48;
const PREFIX = '{"ts":';

/**
 * Epoch ms from a payload that starts with `{"ts":<integer>` (as the benchmark publisher writes
 * it), without decoding the JSON; NaN for any other payload.
 */
export function tsFromPayload(payload: Uint8Array): number {
  for (let i = 0; i < PREFIX.length; i++) if (payload[i] !== PREFIX.charCodeAt(i)) return Number.NaN;
  let v = 0;
  let i = PREFIX.length;
  for (; i < payload.length; i++) {
    const d = payload[i] - DIGIT_0;
    if (d < 0 || d > 9) break;
    v = v * 10 + d;
  }
  return i === PREFIX.length ? Number.NaN : v;
}

const MB = 1024 * 1024;

/**
 * Samples process RSS every `every_ms` and keeps the peak (MB), with the peaks of V8's heap (as
 * reserved, garbage included) and of memory outside it (Buffers, ArrayBuffers): what RSS is made
 * of. `stop()` ends the timer.
 */
export class RssSampler {
  peak_mb = 0;
  peak_heap_total_mb = 0;
  peak_external_mb = 0;
  private readonly timer: ReturnType<typeof setInterval>;

  constructor(every_ms = 50) {
    this.sample();
    this.timer = setInterval(() => this.sample(), every_ms);
    this.timer.unref();
  }

  /** Current RSS, MB (also updates the peaks). */
  sample(): number {
    const m = process.memoryUsage();
    const mb = m.rss / MB;
    if (mb > this.peak_mb) this.peak_mb = mb;
    if (m.heapTotal / MB > this.peak_heap_total_mb) this.peak_heap_total_mb = m.heapTotal / MB;
    if (m.external / MB > this.peak_external_mb) this.peak_external_mb = m.external / MB;
    return mb;
  }

  /** Starts a new span of peaks. */
  resetPeaks(): void {
    this.peak_mb = 0;
    this.peak_heap_total_mb = 0;
    this.peak_external_mb = 0;
  }

  stop(): void {
    clearInterval(this.timer);
  }
}

/**
 * Live heap after a full collection, MB: the figure that shows a leak, where RSS also holds the
 * garbage V8 has not collected yet. NaN unless node runs with --expose-gc (npm run bench:pipeline does).
 */
export function liveHeapMb(): number {
  const gc = (globalThis as { gc?: () => void }).gc;
  if (gc === undefined) return Number.NaN;
  gc();
  return process.memoryUsage().heapUsed / MB;
}

/** Rounds to `digits` decimals (for printing). */
export function round(x: number, digits = 1): number {
  const f = 10 ** digits;
  return Math.round(x * f) / f;
}

/**
 * Time this process spent in garbage collection (ms, pauses of the main thread as V8 reports
 * them), counted from construction until `stop()`.
 */
export class GcTimer {
  ms = 0;
  count = 0;
  private readonly observer: import('node:perf_hooks').PerformanceObserver;

  constructor(perfHooks: typeof import('node:perf_hooks')) {
    this.observer = new perfHooks.PerformanceObserver((list) => {
      for (const e of list.getEntries()) {
        this.ms += e.duration;
        this.count++;
      }
    });
    this.observer.observe({ entryTypes: ['gc'] });
  }

  stop(): void {
    this.observer.disconnect();
  }
}
