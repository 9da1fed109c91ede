import type { GroupResult, ResultQuantity } from '../model/result.js';

/** Difference of one quantity of one group between two runs (second minus first), over matched results. */
export interface QuantityDifference {
  groupId: string;
  quantity: ResultQuantity;
  /** Results present in both runs with a finite value of the quantity. */
  matched: number;
  meanDifference: number;
  /** Largest |difference| and when (epoch ms). */
  maxAbsDifference: number;
  maxAtMs: number;
}

const key = (r: GroupResult) => `${r.groupId}\u0000${r.timeMs}`;

/**
 * Matches results of two runs by group and logger time and reports, per group and quantity
 * present in both, the mean and the largest absolute difference. Pure; new array, sorted.
 */
export function compareRuns(a: readonly GroupResult[], b: readonly GroupResult[]): QuantityDifference[] {
  const other = new Map(b.map((r) => [key(r), r]));
  const acc = new Map<string, QuantityDifference & { sum: number }>();
  for (const ra of a) {
    const rb = other.get(key(ra));
    if (!rb) continue;
    for (const [q, va] of Object.entries(ra.values) as [ResultQuantity, number][]) {
      const vb = rb.values[q];
      if (vb === undefined || !Number.isFinite(va) || !Number.isFinite(vb)) continue;
      const k = `${ra.groupId}\u0000${q}`;
      let d = acc.get(k);
      if (!d) { d = { groupId: ra.groupId, quantity: q, matched: 0, meanDifference: 0, maxAbsDifference: 0, maxAtMs: ra.timeMs, sum: 0 }; acc.set(k, d); }
      const diff = vb - va;
      d.matched++;
      d.sum += diff;
      if (Math.abs(diff) > d.maxAbsDifference) { d.maxAbsDifference = Math.abs(diff); d.maxAtMs = ra.timeMs; }
    }
  }
  return [...acc.values()]
    .map(({ sum, ...d }) => ({ ...d, meanDifference: sum / d.matched }))
    .sort((x, y) => x.groupId.localeCompare(y.groupId) || x.quantity.localeCompare(y.quantity));
}
