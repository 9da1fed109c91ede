/**
 * Hampel identifier (trailing window). The MAD is scaled by 1.4826 = 1 / Phi^-1(3/4) so that it
 * estimates the standard deviation of normally distributed data (Rousseeuw & Croux, "Alternatives
 * to the median absolute deviation", J. Am. Stat. Assoc. 88 (1993); Hampel, J. Am. Stat. Assoc.
 * 69 (1974)).
 */
export const MAD_TO_SIGMA = 1.4826;

/**
 * The previous readings (oldest first), and an outlier waiting for the next reading to tell a spike
 * (it comes back) from a real change such as a vehicle or a step (it stays). Plain JSON.
 */
export interface HampelState {
  window: number[];
  pending?: { x: number; median: number; limit: number } | null;
}

export interface HampelVerdict {
  /** True when the previous reading was an isolated spike: an outlier the next reading left. */
  spike: boolean;
  /** Median the judged reading was compared with; null until the window is full. */
  median: number | null;
  /** Allowed deviation from the median, channel units; null until the window is full. */
  limit: number | null;
  /** Deviation of the spike from the median (channel units); null when no spike. */
  deviation: number | null;
}

/** Median of a list (copies, never mutates the input). */
export function median(values: readonly number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 === 1 ? s[m] : (s[m - 1] + s[m]) / 2;
}

function push(state: HampelState, x: number, windowSamples: number): void {
  state.window.push(x);
  if (state.window.length > windowSamples) state.window.splice(0, state.window.length - windowSamples);
}

/**
 * Judge `x` against the previous windowSamples readings. An outlier,
 * |x - median| > max(kMads x 1.4826 x MAD, minDeviation), is held for one reading: if the next one
 * is back inside the limit it was a spike (reported then, and kept out of the window); if not, it
 * was a real change (a ramp under traffic, a step) and joins the window. A trailing window alone
 * would call every fast real change a spike. Mutates `state`.
 */
export function hampelStep(
  state: HampelState,
  x: number,
  windowSamples: number,
  kMads: number,
  minDeviation: number,
): HampelVerdict {
  const pending = state.pending ?? null;
  state.pending = null;
  if (pending !== null) {
    if (Math.abs(x - pending.median) <= pending.limit) {
      push(state, x, windowSamples);
      return { spike: true, median: pending.median, limit: pending.limit, deviation: pending.x - pending.median };
    }
    push(state, pending.x, windowSamples);
  }
  if (state.window.length < windowSamples) {
    push(state, x, windowSamples);
    return { spike: false, median: null, limit: null, deviation: null };
  }
  const med = median(state.window);
  const mad = median(state.window.map((v) => Math.abs(v - med)));
  const limit = Math.max(kMads * MAD_TO_SIGMA * mad, minDeviation);
  if (Math.abs(x - med) > limit) state.pending = { x, median: med, limit };
  else push(state, x, windowSamples);
  return { spike: false, median: med, limit, deviation: null };
}
