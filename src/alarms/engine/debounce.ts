/**
 * On/off delays per level. For each level i (1..n) it remembers since when the raw level has
 * been continuously >= i (aboveSinceMs) or < i (belowSinceMs). A higher level is confirmed once
 * it has held on_delay; a level is dropped once its absence has held off_delay. Plain JSON.
 */
export interface DebounceState {
  confirmed: number;
  /** Index 0 unused. */
  aboveSinceMs: (number | null)[];
  belowSinceMs: (number | null)[];
}

/** A fresh debouncer for n levels, nothing confirmed. */
export function newDebounce(levels: number): DebounceState {
  return {
    confirmed: 0,
    aboveSinceMs: new Array<number | null>(levels + 1).fill(null),
    belowSinceMs: new Array<number | null>(levels + 1).fill(null),
  };
}

/**
 * Feed one raw level observed at tMs; returns the confirmed level. Mutates `state`.
 * Only evidence (a sample) moves it: silence never confirms a clear.
 */
export function debounce(state: DebounceState, raw: number, tMs: number, onDelayMs: number, offDelayMs: number): number {
  const n = state.aboveSinceMs.length - 1;
  for (let i = 1; i <= n; i++) {
    if (raw >= i) {
      state.aboveSinceMs[i] ??= tMs;
      state.belowSinceMs[i] = null;
    } else {
      state.aboveSinceMs[i] = null;
      state.belowSinceMs[i] ??= tMs;
    }
  }
  if (raw > state.confirmed) {
    for (let i = n; i > state.confirmed; i--) {
      const since = state.aboveSinceMs[i];
      if (since !== null && tMs - since >= onDelayMs) {
        state.confirmed = i;
        break;
      }
    }
  } else {
    while (state.confirmed > raw) {
      const since = state.belowSinceMs[state.confirmed];
      if (since === null || tMs - since < offDelayMs) break;
      state.confirmed--;
    }
  }
  return state.confirmed;
}
