/**
 * Hampel identifier (trailing window). The MAD is scaled by 1.4826 = 1 / Phi^-1(3/4) so that it
 * estimates the standard deviation of normally distributed data (Rousseeuw & Croux, "Alternatives
 * to the median absolute deviation", J. Am. Stat. Assoc. 88 (1993); Hampel, J. Am. Stat. Assoc.
 * 69 (1974)).
 */
export const MAD_TO_SIGMA = 1.4826;

/** The previous readings (oldest first). Plain JSON. */
export interface HampelState {
  window: number[];
}

export interface HampelVerdict {
  spike: boolean;
  /** Median of the previous window; null until the window is full. */
  median: number | null;
  /** Allowed deviation from the median, channel units; null until the window is full. */
  limit: number | null;
}

/** Median of a list (copies, never mutates the input). */
export function median(values: readonly number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 === 1 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/**
 * Judge `x` against the previous windowSamples readings, then append it. Mutates `state`.
 * A spike: |x - median| > max(kMads x 1.4826 x MAD, minDeviation).
 */
export function hampelStep(
  state: HampelState,
  x: number,
  windowSamples: number,
  kMads: number,
  minDeviation: number,
): HampelVerdict {
  let verdict: HampelVerdict = { spike: false, median: null, limit: null };
  if (state.window.length >= windowSamples) {
    const med = median(state.window);
    const mad = median(state.window.map((v) => Math.abs(v - med)));
    const limit = Math.max(kMads * MAD_TO_SIGMA * mad, minDeviation);
    verdict = { spike: Math.abs(x - med) > limit, median: med, limit };
  }
  state.window.push(x);
  if (state.window.length > windowSamples) state.window.splice(0, state.window.length - windowSamples);
  return verdict;
}
