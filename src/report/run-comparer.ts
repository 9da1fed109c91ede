import type { GroupResult, ResultQuantity } from '../model/result.js';
import type { QuantityDifference } from './compare.js';

type Values = GroupResult['values'];
interface Acc { groupId: string; quantity: ResultQuantity; matched: number; sum: number; maxAbs: number; maxAtMs: number }

/**
 * `compareRuns` as the two runs stream in, side by side: a result waits for its match (same group
 * and logger time) from the other run, at most `maxWaiting` per run (the oldest is dropped as
 * unmatched beyond that), so memory depends on how far one run gets ahead of the other, not on
 * their length. Ties of the largest difference go to the earlier time, as compareRuns gives over
 * time-ordered results.
 */
export class RunComparer {
  private readonly waitingA = new Map<string, { timeMs: number; values: Values }>();
  private readonly waitingB = new Map<string, { timeMs: number; values: Values }>();
  private readonly acc = new Map<string, Acc>();
  /** Results dropped while waiting for a match that had not come (per run). */
  dropped = 0;

  constructor(private readonly maxWaiting = 50_000) {}

  addFirst(r: GroupResult): void { this.add(r, this.waitingA, this.waitingB, true); }
  addSecond(r: GroupResult): void { this.add(r, this.waitingB, this.waitingA, false); }

  private add(r: GroupResult, mine: Map<string, { timeMs: number; values: Values }>, theirs: Map<string, { timeMs: number; values: Values }>, first: boolean): void {
    const key = `${r.groupId}\u0000${r.timeMs}`;
    const other = theirs.get(key);
    if (other === undefined) {
      mine.set(key, { timeMs: r.timeMs, values: r.values });
      if (mine.size > this.maxWaiting) { mine.delete(mine.keys().next().value!); this.dropped++; }
      return;
    }
    theirs.delete(key);
    this.match(r.groupId, r.timeMs, first ? r.values : other.values, first ? other.values : r.values);
  }

  private match(groupId: string, timeMs: number, a: Values, b: Values): void {
    for (const q in a) {
      const va = a[q as ResultQuantity]!;
      const vb = b[q as ResultQuantity];
      if (vb === undefined || !Number.isFinite(va) || !Number.isFinite(vb)) continue;
      const k = `${groupId}\u0000${q}`;
      let d = this.acc.get(k);
      if (d === undefined) this.acc.set(k, (d = { groupId, quantity: q as ResultQuantity, matched: 0, sum: 0, maxAbs: 0, maxAtMs: timeMs }));
      const diff = vb - va;
      d.matched++;
      d.sum += diff;
      const abs = Math.abs(diff);
      if (abs > d.maxAbs || (abs === d.maxAbs && timeMs < d.maxAtMs)) { d.maxAbs = abs; d.maxAtMs = timeMs; }
    }
  }

  /** The differences so far, sorted by group and quantity (new array). */
  differences(): QuantityDifference[] {
    return [...this.acc.values()]
      .map((d) => ({ groupId: d.groupId, quantity: d.quantity, matched: d.matched, meanDifference: d.sum / d.matched, maxAbsDifference: d.maxAbs, maxAtMs: d.maxAtMs }))
      .sort((x, y) => x.groupId.localeCompare(y.groupId) || x.quantity.localeCompare(y.quantity));
  }
}
