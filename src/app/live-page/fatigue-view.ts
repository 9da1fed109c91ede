import type { CompiledFatigue } from '../../config/compile-fatigue.js';
import { remainingLifeYears, REMAINING_LIFE_ASSUMPTIONS } from '../../fatigue/detail.js';
import { rangeAtCycles } from '../../fatigue/sn-curve.js';
import type { FatigueSnapshot } from '../../pipeline/fatigue-stage.js';

/** What the live page shows of fatigue: per detail the figures, the histogram and its S-N curve as points, and the assumptions. */
export interface PageFatigue {
  atMs: number;
  details: PageFatigueDetail[];
  assumptions: readonly string[];
}

export interface PageFatigueDetail {
  id: string;
  groupId: string;
  location: string;
  describe: string;
  damage: number;
  /** Per monitored day over the rate window; null while not known. */
  damagePerDay: number | null;
  rateWindowS: number;
  /** Years; 'unbounded' when no damage accrued over the window; null while not known. */
  remainingLifeYears: number | 'unbounded' | null;
  cycles: number;
  monitoredS: number;
  notMonitoredS: number;
  binWidthMPa: number;
  counts: number[];
  /** The S-N curve with the partial factors: [cycles, hot-spot range MPa], from 1e4 to 1e9 cycles (flat past 1e8). */
  curve: Array<[number, number]>;
}

/** A fatigue snapshot in the page's shape. Pure; allocates. */
export function pageFatigue(cfg: CompiledFatigue, s: FatigueSnapshot): PageFatigue {
  const byId = new Map(cfg.details.map((d) => [d.id, d]));
  return {
    atMs: s.nowMs,
    assumptions: REMAINING_LIFE_ASSUMPTIONS,
    details: s.details.map(({ id, groupId, figures: f }) => {
      const d = byId.get(id)!;
      const life = remainingLifeYears(f.damage, f.damagePerDay);
      const curve: Array<[number, number]> = [];
      for (let e = 4; e <= 9.0001; e += 0.25) curve.push([10 ** e, rangeAtCycles(d.params.curve, Math.min(10 ** e, 1e8))]);
      return {
        id, groupId, location: d.location, describe: d.describe, damage: f.damage,
        damagePerDay: Number.isFinite(f.damagePerDay) ? f.damagePerDay : null, rateWindowS: f.rateWindowS,
        remainingLifeYears: life === Infinity ? 'unbounded' : Number.isFinite(life) ? life : null,
        cycles: f.cycles, monitoredS: f.monitoredS, notMonitoredS: f.notMonitoredS, binWidthMPa: d.params.binWidthMPa, counts: f.histogramCounts, curve,
      };
    }),
  };
}
