/**
 * Recent (time, value) samples over a time window, thinned to a minimum spacing so memory and
 * snapshot size stay bounded. Plain JSON. Used for trends and rate-of-change rules.
 */
export interface SampleWindow {
  tMs: number[];
  v: number[];
}

export function newSampleWindow(): SampleWindow {
  return { tMs: [], v: [] };
}

/**
 * Add a sample (kept only if at least minSpacingMs after the last kept one) and drop samples
 * older than windowMs before tMs. Mutates `w`.
 */
export function pushSample(w: SampleWindow, tMs: number, value: number, windowMs: number, minSpacingMs: number): void {
  const last = w.tMs.length > 0 ? w.tMs[w.tMs.length - 1] : Number.NEGATIVE_INFINITY;
  if (tMs < last) return; // out-of-order sample: ignored for slopes
  if (tMs - last >= minSpacingMs) {
    w.tMs.push(tMs);
    w.v.push(value);
  }
  let drop = 0;
  while (drop < w.tMs.length && w.tMs[drop] < tMs - windowMs) drop++;
  if (drop > 0) {
    w.tMs.splice(0, drop);
    w.v.splice(0, drop);
  }
}

/**
 * Least-squares slope, value units per second, or null with fewer than 3 samples or when the
 * samples span less than minSpanMs (a slope over a short stretch is mostly noise).
 */
export function slopePerS(w: SampleWindow, minSpanMs: number): number | null {
  const n = w.tMs.length;
  if (n < 3 || w.tMs[n - 1] - w.tMs[0] < minSpanMs) return null;
  const t0 = w.tMs[0];
  let st = 0;
  let sv = 0;
  for (let i = 0; i < n; i++) {
    st += (w.tMs[i] - t0) / 1000;
    sv += w.v[i];
  }
  const mt = st / n;
  const mv = sv / n;
  let num = 0;
  let den = 0;
  for (let i = 0; i < n; i++) {
    const dt = (w.tMs[i] - t0) / 1000 - mt;
    num += dt * (w.v[i] - mv);
    den += dt * dt;
  }
  return den > 0 ? num / den : null;
}
