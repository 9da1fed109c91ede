import type { GroupResult, ResultQuantity } from '../model/result.js';
import { IntervalMedian } from './interval-median.js';
import { PeaksAccumulator } from './peaks-accumulator.js';
import type { Gap, Segment } from './series.js';
import { SeriesAccumulator } from './series-accumulator.js';

/** The quantities a group section plots (in this order of charts). */
export const PLOTTED_QUANTITIES: readonly ResultQuantity[] = [
  'stress_xx_MPa', 'stress_yy_MPa', 'stress_zz_MPa', 'stress_yz_MPa', 'stress_xz_MPa', 'stress_xy_MPa', 'stress_axial_MPa',
  'von_mises_MPa', 'principal_1_MPa', 'principal_2_MPa', 'principal_3_MPa',
  'temperature_degC', 'principal_angle_deg', 'residual_rms_micro', 'fit_std_error_micro',
];

/**
 * Where the in-plane stress is nearly equal in every direction the principal direction is not
 * defined by the data (noise swings it through 180 degrees): it is drawn only where the in-plane
 * maximum shear stress is at least this floor, MPa, for the run's largest shear `maxRadius`.
 */
export const angleFloorMPa = (maxRadius: number) => Math.max(0.5, 0.05 * maxRadius);

export interface GroupAccumulatorOptions {
  /** A pause longer than this many median intervals is a gap. */
  gapFactor: number;
  maxChunksPerSeries: number;
  /** Most gaps listed per group (beyond it they are counted). */
  maxGaps: number;
  /** Keep the peaks (the run reported on, not the comparison). */
  peaks: boolean;
}

/**
 * What the report needs of one group, kept as its results stream in: the plotted series reduced
 * (SeriesAccumulator), the gaps, the counts, the peaks. Memory is bounded by the options, not by
 * the number of results.
 */
export class GroupAccumulator {
  zone = '';
  loggerId = '';
  count = 0;
  flagged = 0;
  readonly peaks: PeaksAccumulator | null;
  private readonly series = new Map<ResultQuantity, SeriesAccumulator>();
  private readonly intervals = new IntervalMedian();
  private lastTimeMs = Number.NaN;
  /** Gaps by the median known then: [from, to, pause] triples, checked again against the final median. */
  private readonly pauses: number[] = [];
  gapsNotListed = 0;
  private noGapBelowMs = Infinity;
  private intervalsSeen = 0;
  private maxRadius = 0;

  constructor(readonly groupId: string, private readonly quantities: readonly ResultQuantity[], private readonly o: GroupAccumulatorOptions) {
    this.peaks = o.peaks ? new PeaksAccumulator(groupId) : null;
  }

  add(r: GroupResult): void {
    if (this.count === 0) { this.zone = r.zone; this.loggerId = r.loggerId; }
    this.count++;
    if (r.flags.length > 0) this.flagged++;
    this.peaks?.add(r);
    const t = r.timeMs;
    let pause = 0;
    if (this.lastTimeMs === this.lastTimeMs) {
      pause = t - this.lastTimeMs;
      if (pause > 0) this.countInterval(pause);
      // A candidate gap is kept with a margin: the median may still fall.
      if (pause > this.noGapBelowMs / 2 || this.noGapBelowMs === Infinity) this.keepPause(this.lastTimeMs, t, pause);
    }
    if (!(t <= this.lastTimeMs)) this.lastTimeMs = t;
    const values = r.values;
    for (const q of this.quantities) {
      const v = values[q];
      let s = this.series.get(q);
      if (v === undefined || !Number.isFinite(v)) { s?.markBreak(); continue; }
      if (s === undefined) this.series.set(q, (s = new SeriesAccumulator(this.o.maxChunksPerSeries, q === 'principal_angle_deg' ? 180 : 0)));
      if (q === 'principal_angle_deg') {
        const radius = ((values.principal_1_MPa ?? 0) - (values.principal_2_MPa ?? 0)) / 2;
        if (radius > this.maxRadius) this.maxRadius = radius;
        // Masked by the floor known now (it only rises): the final floor drops more when drawing.
        if (radius < angleFloorMPa(this.maxRadius)) { s.markBreak(); continue; }
        s.push(t, v, radius, pause, this.noGapBelowMs);
      } else s.push(t, v, Number.NaN, pause, this.noGapBelowMs);
    }
  }

  /** The group has a finite value of q in some result. */
  has(q: ResultQuantity): boolean { return this.series.has(q); }

  /** The median interval of the run, ms (NaN for fewer than two results). */
  medianIntervalMs(): number { return this.intervals.median(); }

  /** Pauses longer than gapFactor x the run's median interval. New array. */
  gaps(): Gap[] {
    const med = this.intervals.median();
    if (!(med > 0)) return [];
    const out: Gap[] = [];
    for (let i = 0; i < this.pauses.length; i += 3) if (this.pauses[i + 2] > this.o.gapFactor * med) out.push({ fromMs: this.pauses[i], toMs: this.pauses[i + 1] });
    return out;
  }

  /** The series of q as lines (before the per-pixel reduction): broken at gaps, missing values and wraps. */
  segments(q: ResultQuantity): Segment[] {
    const s = this.series.get(q);
    if (s === undefined) return [];
    const med = this.intervals.median();
    const gapAbove = med > 0 ? this.o.gapFactor * med : Infinity;
    return s.segments(gapAbove, q === 'principal_angle_deg' ? this.angleFloor() : -Infinity);
  }

  /** The in-plane shear the principal direction is drawn above, MPa. */
  angleFloor(): number { return angleFloorMPa(this.maxRadius); }

  private countInterval(pause: number): void {
    this.intervals.add(pause);
    this.intervalsSeen++;
    // The median for decisions while streaming: refreshed at 2, 4, 8 ... and then every 4096 intervals.
    const n = this.intervalsSeen;
    if ((n & (n - 1)) === 0 || (n & 4095) === 0) {
      const med = this.intervals.median();
      this.noGapBelowMs = med > 0 ? this.o.gapFactor * med : Infinity;
    }
  }

  private keepPause(fromMs: number, toMs: number, pause: number): void {
    if (this.pauses.length >= 3 * this.o.maxGaps) {
      // Full: keep only what is a gap by the median known now; beyond that, count.
      const keep: number[] = [];
      for (let i = 0; i < this.pauses.length; i += 3) if (this.pauses[i + 2] > this.noGapBelowMs) keep.push(this.pauses[i], this.pauses[i + 1], this.pauses[i + 2]);
      this.pauses.length = 0;
      this.pauses.push(...keep);
      if (this.pauses.length >= 3 * this.o.maxGaps) { this.gapsNotListed++; return; }
    }
    this.pauses.push(fromMs, toMs, pause);
  }
}
