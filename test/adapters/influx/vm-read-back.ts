/**
 * Rebuilds Points from VictoriaMetrics' export: the server stores one series per field, named
 * `<measurement>_<field>`, with the tags as labels (see test/support/servers.ts), so samples with
 * the same labels and timestamp are one point. Sorted by time: the database keeps time order only.
 */
import type { Point } from '../../../src/model/point.js';
import type { VictoriaMetricsServer } from '../../support/servers.js';

export async function readBackFromVictoria(vm: VictoriaMetricsServer, measurement: string): Promise<Point[]> {
  await vm.forceFlush();
  const escaped = measurement.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
  const series = await vm.exportSeries(`{__name__=~"${escaped}_.+"}`);
  const byKey = new Map<string, { tags: Record<string, string>; fields: Record<string, number>; timeMs: number }>();
  for (const s of series) {
    const { __name__: name, ...tags } = s.metric;
    const field = name.slice(measurement.length + 1);
    s.timestamps.forEach((timeMs, i) => {
      const key = JSON.stringify([Object.entries(tags).sort(), timeMs]);
      const point = byKey.get(key) ?? { tags, fields: {}, timeMs };
      // A duplicate sample would mean a point arrived twice: keep the evidence instead of merging it.
      if (field in point.fields) throw new Error(`duplicate sample ${name} at ${timeMs}`);
      point.fields[field] = s.values[i];
      byKey.set(key, point);
    });
  }
  return [...byKey.values()].sort((a, b) => a.timeMs - b.timeMs).map((p) => ({ measurement, ...p }));
}

/** Number of samples of every series of `measurement` (exactly-once checks count these). */
export async function sampleCount(vm: VictoriaMetricsServer, measurement: string): Promise<number> {
  await vm.forceFlush();
  const series = await vm.exportSeries(`{__name__=~"${measurement}_.+"}`);
  return series.reduce((n, s) => n + s.timestamps.length, 0);
}
