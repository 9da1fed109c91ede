/**
 * A logger's scan counter (`seq`) against its previous scans. A counter that goes back (or stays)
 * while the logger's time goes on is a restart of the counter: a logger reboot, a replaced unit,
 * a program reloaded. A counter that goes back with an older time is an old message again (a
 * broker redelivery, a logger resending its buffer): counted, but no restart. Plain JSON.
 */
export interface SequenceState {
  /** seq and logger time (epoch ms) of the latest scan by logger time. */
  lastSeq: number;
  lastTimeMs: number;
  /** Scans whose seq was below the previous one. */
  backwards: number;
  /** Scans whose seq equalled the previous one. */
  repeated: number;
  /** Of those, the ones with a later logger time: counter restarts. */
  restarts: number;
  /** Arrival times (epoch ms) of the restarts inside the counting window, oldest first. */
  restartsMs: number[];
}

/** What one scan's seq says. */
export type SequenceVerdict = 'first' | 'increasing' | 'backwards' | 'repeated';

/**
 * Judge one scan's seq. Keeps at most `keep` restart times, none older than windowMs before
 * arrivalMs. Mutates `s`; returns the verdict and whether it was a counter restart.
 */
export function sequenceStep(
  s: SequenceState, seq: number, timeMs: number, arrivalMs: number, windowMs: number, keep: number,
): { verdict: SequenceVerdict; restart: boolean } {
  const verdict: SequenceVerdict = seq > s.lastSeq ? 'increasing' : seq === s.lastSeq ? 'repeated' : 'backwards';
  const later = timeMs > s.lastTimeMs;
  const restart = verdict !== 'increasing' && later;
  if (verdict === 'backwards') s.backwards++;
  if (verdict === 'repeated') s.repeated++;
  if (restart) {
    s.restarts++;
    s.restartsMs.push(arrivalMs);
  }
  pruneRestarts(s, arrivalMs, windowMs, keep);
  // Only a later scan moves the reference: a run of redelivered old scans is judged against the newest.
  if (later) {
    s.lastSeq = seq;
    s.lastTimeMs = timeMs;
  }
  return { verdict, restart };
}

/** Forget restarts older than windowMs before nowMs, and all but the last `keep`. Mutates `s`. */
export function pruneRestarts(s: SequenceState, nowMs: number, windowMs: number, keep: number): void {
  let drop = 0;
  while (drop < s.restartsMs.length && s.restartsMs[drop] <= nowMs - windowMs) drop++;
  drop = Math.max(drop, s.restartsMs.length - keep);
  if (drop > 0) s.restartsMs.splice(0, drop);
}

export function newSequenceState(seq: number, timeMs: number): SequenceState {
  return { lastSeq: seq, lastTimeMs: timeMs, backwards: 0, repeated: 0, restarts: 0, restartsMs: [] };
}
