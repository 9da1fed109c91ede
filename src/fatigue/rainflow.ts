/**
 * Streaming rainflow counting, the three-point method of ASTM E1049-85 section 5.4.4, fed one
 * turning point at a time. The stack of points not yet closed (the residue) is kept between
 * chunks, so counting a history in chunks gives exactly the cycles of counting it at once.
 *
 * Steps of 5.4.4 as coded in `rainflowPush`: with X the most recent range and Y the one before it,
 * while X >= Y: if Y holds the starting point S (the stack's first point), Y is one half cycle
 * and S moves to Y's second point; otherwise Y is one cycle and both its points leave the stack.
 * Step 6 (each range left counts as a half cycle) is applied only when a report asks for it
 * (`rainflowResidue`), without changing the state: counting then goes on as if nothing was asked.
 */
export interface RainflowState {
  /** Turning points not yet closed, oldest first; `points[0]` is the starting point S. */
  points: number[];
}

/** Called for each counted range: its range (MPa, > 0), its mean, and 1 (cycle) or 0.5 (half cycle). */
export type CycleSink = (rangeMPa: number, meanMPa: number, count: number) => void;

export function newRainflow(): RainflowState {
  return { points: [] };
}

/**
 * Pushes one turning point (peaks and valleys must alternate, as peak-valley.ts gives them) and
 * counts what it closes. Mutates `s`; the stack array grows only as the residue does.
 */
export function rainflowPush(s: RainflowState, point: number, sink: CycleSink): void {
  const p = s.points;
  p.push(point);
  while (p.length >= 3) {
    const n = p.length;
    const x = Math.abs(p[n - 1] - p[n - 2]);
    const y = Math.abs(p[n - 2] - p[n - 3]);
    if (x < y) return;
    if (n === 3) {
      // Y holds the starting point: a half cycle, and S moves to Y's second point.
      sink(y, (p[0] + p[1]) / 2, 0.5);
      p.shift();
    } else {
      sink(y, (p[n - 2] + p[n - 3]) / 2, 1);
      p.splice(n - 3, 2);
    }
  }
}

/**
 * ASTM E1049-85 5.4.4 step 6 for a report: each range of the residue, closed by `lastPoint` when
 * it is a number (the extreme not yet confirmed, see peak-valley.ts), as one half cycle. Reads `s`
 * only. `lastPoint` is run through the three-point rule against the residue first (on a copy), as
 * if the history ended with it.
 */
export function rainflowResidue(s: RainflowState, lastPoint: number, sink: CycleSink): void {
  if (Number.isNaN(lastPoint)) {
    halfCycles(s.points, sink);
    return;
  }
  const copy: RainflowState = { points: s.points.slice() };
  rainflowPush(copy, lastPoint, sink);
  halfCycles(copy.points, sink);
}

function halfCycles(p: readonly number[], sink: CycleSink): void {
  for (let i = 1; i < p.length; i++) {
    const r = Math.abs(p[i] - p[i - 1]);
    if (r > 0) sink(r, (p[i] + p[i - 1]) / 2, 0.5);
  }
}
