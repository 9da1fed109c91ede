import type { VictoriaMetricsServer } from '../../test/support/servers.js';

/** One scenario's figures, in the fault proof's published form. */
export interface ScenarioFigures {
  scenario: string;
  published: number;
  received: number;
  stored: number;
  duplicated: number;
  lost: number;
}

/**
 * Counts, for the strain logger's scans of one scenario (seq range, with each scan's ts):
 * received = distinct seqs in `sw_raw` (the archive in the database); stored = scans with every
 * expected `sw_result` row (one per group the logger feeds, at the scan's ts); duplicated = extra
 * copies of the same series and timestamp in either; lost = published scans not fully stored.
 */
export async function countScenario(
  vm: VictoriaMetricsServer, scenario: string, published: ReadonlyMap<number, number>, seqFrom: number, seqTo: number,
  structureId: string, logger: string, groups: readonly string[],
): Promise<ScenarioFigures> {
  await vm.forceFlush();
  const rawSeries = await vm.exportSeries(`sw_raw_seq{structure="${structureId}",logger="${logger}"}`);
  const seen = new Map<number, number>();
  for (const s of rawSeries) for (const v of s.values) if (v >= seqFrom && v <= seqTo) seen.set(v, (seen.get(v) ?? 0) + 1);
  let duplicated = 0;
  for (const n of seen.values()) duplicated += n - 1;
  const inRange = [...published].filter(([seq]) => seq >= seqFrom && seq <= seqTo);
  const timestamps = new Set(inRange.map(([, ts]) => ts));
  const resultRows = new Map<string, Map<number, number>>();
  for (const s of await vm.exportSeries(`sw_result_quality_bits{structure="${structureId}"}`)) {
    const g = s.metric.group;
    if (!groups.includes(g)) continue;
    const byTs = resultRows.get(g) ?? new Map<number, number>();
    resultRows.set(g, byTs);
    for (const t of s.timestamps) if (timestamps.has(t)) byTs.set(t, (byTs.get(t) ?? 0) + 1);
  }
  for (const byTs of resultRows.values()) for (const n of byTs.values()) duplicated += n - 1;
  const complete = (ts: number) => groups.every((g) => (resultRows.get(g)?.get(ts) ?? 0) > 0);
  const stored = inRange.filter(([, ts]) => complete(ts)).length;
  const received = inRange.filter(([seq]) => seen.has(seq)).length;
  const lost = inRange.filter(([seq, ts]) => !seen.has(seq) || !complete(ts)).length;
  return { scenario, published: inRange.length, received, stored, duplicated, lost };
}
