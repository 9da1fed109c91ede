/**
 * Flatline: a channel whose readings vary by no more than a tolerance (max - min) over a whole
 * window. Running min and max over the time window use monotonic deques (amortised O(1) per
 * reading). Plain JSON.
 */
export interface FlatlineState {
  /** Start of the current unbroken run of readings (reset by a gap), epoch ms; null = none. */
  runStartMs: number | null;
  minT: number[];
  minV: number[];
  maxT: number[];
  maxV: number[];
}

export function newFlatline(): FlatlineState {
  return { runStartMs: null, minT: [], minV: [], maxT: [], maxV: [] };
}

/** Forget the run (the channel gave no reading). Mutates `s`. */
export function resetFlatline(s: FlatlineState): void {
  s.runStartMs = null;
  s.minT.length = s.minV.length = s.maxT.length = s.maxV.length = 0;
}

function pushDeque(ts: number[], vs: number[], t: number, v: number, keep: (old: number) => boolean, fromMs: number): void {
  while (vs.length > 0 && !keep(vs[vs.length - 1])) {
    ts.pop();
    vs.pop();
  }
  ts.push(t);
  vs.push(v);
  let drop = 0;
  while (drop < ts.length - 1 && ts[drop] < fromMs) drop++;
  if (drop > 0) {
    ts.splice(0, drop);
    vs.splice(0, drop);
  }
}

/**
 * Add a reading at tMs; returns the spread (max - min over the window, channel units) once the
 * run covers the whole window, else null. Mutates `s`.
 */
export function flatlineStep(s: FlatlineState, tMs: number, v: number, windowMs: number): number | null {
  s.runStartMs ??= tMs;
  const from = tMs - windowMs;
  pushDeque(s.minT, s.minV, tMs, v, (old) => old < v, from);
  pushDeque(s.maxT, s.maxV, tMs, v, (old) => old > v, from);
  if (tMs - s.runStartMs < windowMs) return null;
  return s.maxV[0] - s.minV[0];
}
