/**
 * Streaming peak-valley extraction with a hysteresis gate: a reversal is accepted only once the
 * signal has come back from its running extreme by at least `gateMPa` (and by more than zero), so
 * noise smaller than the gate makes no turning point, and every accepted range is at least the gate.
 * Plateaus make no turning point. State is plain numbers, so it persists as JSON.
 */
export interface PeakValleyState {
  gateMPa: number;
  /** 0: no direction yet; +1 rising (candidate is a peak); -1 falling (candidate is a valley). */
  direction: -1 | 0 | 1;
  /** The running extreme not yet confirmed; NaN before the first sample. */
  candidate: number;
  /** Before a direction is known: the lowest and highest values seen. */
  low: number;
  high: number;
}

export function newPeakValley(gateMPa: number): PeakValleyState {
  if (!(gateMPa >= 0)) throw new RangeError('gate must be >= 0 MPa');
  return { gateMPa, direction: 0, candidate: NaN, low: NaN, high: NaN };
}

/**
 * Feeds one value; calls `emit` with each turning point it confirms (at most one per value).
 * Mutates `s`; allocates nothing.
 */
export function peakValleyStep(s: PeakValleyState, x: number, emit: (turningPoint: number) => void): void {
  if (!Number.isFinite(x)) return;
  if (s.direction === 0) {
    if (Number.isNaN(s.candidate)) { s.candidate = x; s.low = x; s.high = x; return; }
    if (x < s.low) s.low = x;
    if (x > s.high) s.high = x;
    s.candidate = x;
    if (x - s.low > 0 && x - s.low >= s.gateMPa) { emit(s.low); s.direction = 1; s.candidate = x; }
    else if (s.high - x > 0 && s.high - x >= s.gateMPa) { emit(s.high); s.direction = -1; s.candidate = x; }
    return;
  }
  if (s.direction === 1) {
    if (x > s.candidate) s.candidate = x;
    else if (s.candidate - x > 0 && s.candidate - x >= s.gateMPa) { emit(s.candidate); s.direction = -1; s.candidate = x; }
    return;
  }
  if (x < s.candidate) s.candidate = x;
  else if (x - s.candidate > 0 && x - s.candidate >= s.gateMPa) { emit(s.candidate); s.direction = 1; s.candidate = x; }
}

/**
 * The extreme not yet confirmed (the last turning point of the history so far, if the history ended
 * now), or NaN when there is none: counted with the residue in a report, never pushed.
 */
export function pendingExtreme(s: PeakValleyState): number {
  return s.direction === 0 ? NaN : s.candidate;
}
