import { z } from 'zod';

/**
 * Hampel identifier (trailing window). The MAD is scaled by 1.4826 = 1 / Phi^-1(3/4) so that it
 * estimates the standard deviation of normally distributed data (Rousseeuw & Croux, "Alternatives
 * to the median absolute deviation", J. Am. Stat. Assoc. 88 (1993); Hampel, J. Am. Stat. Assoc.
 * 69 (1974)).
 */
export const MAD_TO_SIGMA = 1.4826;

/**
 * A spike is an excursion that comes back to the level around it: the reading after it must be
 * within this fraction of the limit of the last reading before it. "Back inside the limit" alone
 * took a vehicle's peak (92.8 against a limit of 90.7, the next reading 2.4 lower) for a spike.
 */
export const SPIKE_RETURN_FRACTION = 0.5;
/** Longest excursion, in readings, that can still be a spike; a longer one is a real change. */
export const SPIKE_MAX_SAMPLES = 2;

/**
 * The previous readings (oldest first), and an excursion waiting for the readings after it to
 * tell a spike (it comes back) from a real change such as a vehicle or a step (it stays). Plain
 * JSON; `hampelStateSchema` below is its snapshot schema (keep the two in step).
 */
export interface HampelState {
  window: number[];
  /**
   * The excursion under judgement: its latest reading, the median and limit it was judged with,
   * and how many readings it has lasted (1 when absent: snapshots written before the count).
   */
  pending?: { x: number; median: number; limit: number; count?: number } | null;
}

const Num = z.number().finite();
/** Snapshot schema of HampelState (the alarm engine's state file). */
export const hampelStateSchema = z.strictObject({
  window: z.array(Num),
  pending: z.strictObject({ x: Num, median: Num, limit: Num, count: z.number().int().positive().optional() }).nullable().optional(),
});

export interface HampelVerdict {
  /** True when an excursion ended at this reading and was a spike (it came back). */
  spike: boolean;
  /** Readings of the excursion that ended at this reading (spike or real change); 0 when none ended. */
  ended: number;
  /** True when this reading is part of an excursion not yet judged (the readings after it decide). */
  held: boolean;
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

/** Scratch for the median and MAD of a window (grown once to the window size): no allocation per reading. */
let scratch = new Float64Array(32);

/** Median of scratch[0..n), sorted in place (insertion sort: windows are a few dozen readings). */
function sortedMedian(n: number): number {
  const s = scratch;
  for (let i = 1; i < n; i++) {
    const v = s[i];
    let j = i - 1;
    while (j >= 0 && s[j] > v) {
      s[j + 1] = s[j];
      j--;
    }
    s[j + 1] = v;
  }
  const m = n >> 1;
  return n % 2 === 1 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/** Median and MAD of a window. Returns the median; the MAD in `madOut[0]`. */
function medianAndMad(window: readonly number[], madOut: Float64Array): number {
  const n = window.length;
  if (scratch.length < n) scratch = new Float64Array(n);
  for (let i = 0; i < n; i++) scratch[i] = window[i];
  const med = sortedMedian(n);
  for (let i = 0; i < n; i++) scratch[i] = Math.abs(window[i] - med);
  madOut[0] = sortedMedian(n);
  return med;
}
const madScratch = new Float64Array(1);

function push(state: HampelState, x: number, windowSamples: number): void {
  state.window.push(x);
  while (state.window.length > windowSamples) state.window.shift();
}

/**
 * Judge `x` against the previous windowSamples readings. A reading starts an excursion when it
 * stands more than the limit, max(kMads x 1.4826 x MAD, minDeviation), from both the window median
 * and the reading before it (a vehicle's peak climbs over several readings: it never jumps from the
 * one before). The excursion is a spike if, within SPIKE_MAX_SAMPLES readings, a reading comes back
 * within SPIKE_RETURN_FRACTION x limit of the last reading before it; the spike's readings stay out
 * of the window. An excursion that does not come back is a real change (a step): its latest reading
 * joins the window and the next one is judged afresh. Mutates `state`.
 */
export function hampelStep(
  state: HampelState,
  x: number,
  windowSamples: number,
  kMads: number,
  minDeviation: number,
): HampelVerdict {
  const pending = state.pending ?? null;
  let ended = 0;
  if (pending !== null) {
    const count = pending.count ?? 1;
    const before = state.window[state.window.length - 1];
    if (Math.abs(x - before) <= SPIKE_RETURN_FRACTION * pending.limit) {
      state.pending = null;
      push(state, x, windowSamples);
      return { spike: true, ended: count, held: false, median: pending.median, limit: pending.limit, deviation: pending.x - pending.median };
    }
    if (count < SPIKE_MAX_SAMPLES) {
      pending.x = x;
      pending.count = count + 1;
      return { spike: false, ended: 0, held: true, median: pending.median, limit: pending.limit, deviation: null };
    }
    state.pending = null;
    push(state, pending.x, windowSamples);
    ended = count;
  }
  if (state.window.length < windowSamples) {
    push(state, x, windowSamples);
    return { spike: false, ended, held: false, median: null, limit: null, deviation: null };
  }
  const med = medianAndMad(state.window, madScratch);
  const mad = madScratch[0];
  const limit = Math.max(kMads * MAD_TO_SIGMA * mad, minDeviation);
  const before = state.window[state.window.length - 1];
  const held = Math.abs(x - med) > limit && Math.abs(x - before) > limit;
  if (held) state.pending = { x, median: med, limit, count: 1 };
  else push(state, x, windowSamples);
  return { spike: false, ended, held, median: med, limit, deviation: null };
}
