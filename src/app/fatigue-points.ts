import type { CompiledFatigue } from '../config/compile-fatigue.js';
import { remainingLifeYears } from '../fatigue/detail.js';
import type { Point } from '../model/point.js';
import type { FatigueSnapshot } from '../pipeline/fatigue-stage.js';

/**
 * A fatigue snapshot as database points, measurement `sw_fatigue`, stamped with the snapshot's
 * logger time: per detail one point of its figures, and one per histogram bin (tags
 * `bin_from_MPa`, `bin_to_MPa`: hot-spot stress range; the last bin's upper edge is `inf`) with
 * its cycles. Non-finite figures (no rate yet, an infinite life) are left out. Pure.
 */
export function fatiguePoints(
  snapshot: FatigueSnapshot, cfg: CompiledFatigue, structureId: string, zoneOf: (groupId: string) => string, extraTags: Readonly<Record<string, string>> = {},
): Point[] {
  const out: Point[] = [];
  const widths = new Map(cfg.details.map((d) => [d.id, d.params.binWidthMPa]));
  for (const { id, groupId, figures: f } of snapshot.details) {
    const tags = { structure: structureId, detail: id, group: groupId, zone: zoneOf(groupId), ...extraTags };
    const fields: Record<string, number> = {
      damage: f.damage, damage_counted: f.damageCounted, damage_residue: f.damageResidue, cycles: f.cycles,
      residue_points: f.residuePoints, monitored_s: f.monitoredS, not_monitored_s: f.notMonitoredS, breaks: f.breaks,
    };
    if (Number.isFinite(f.damagePerDay)) {
      fields.damage_per_day = f.damagePerDay;
      fields.rate_window_s = f.rateWindowS;
    }
    const life = remainingLifeYears(f.damage, f.damagePerDay);
    if (Number.isFinite(life)) fields.remaining_life_years = life;
    out.push({ measurement: 'sw_fatigue', tags, fields, timeMs: snapshot.nowMs });
    const w = widths.get(id) ?? 1;
    const last = f.histogramCounts.length - 1;
    f.histogramCounts.forEach((cycles, i) => {
      out.push({
        measurement: 'sw_fatigue', tags: { ...tags, bin_from_MPa: edge(i * w), bin_to_MPa: i === last ? 'inf' : edge((i + 1) * w) },
        fields: { bin_cycles: cycles }, timeMs: snapshot.nowMs,
      });
    });
  }
  return out;
}

/** A bin edge as a tag: 12 significant digits, so 3 x 0.1 reads 0.3. */
const edge = (v: number): string => String(Number(v.toPrecision(12)));
