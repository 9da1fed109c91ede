import type { QualityFlag } from '../model/quality.js';
import type { GroupResult, ResultQuantity } from '../model/result.js';
import { PEAK_KINDS, type Extreme, type FlaggedExtreme, type GroupPeaks, type PeakKind } from './peaks.js';

/** The best value so far of some quantities in one direction (sign 1: largest, -1: smallest). */
class Best {
  value = Number.NaN;
  timeMs = Number.NaN;
  flags: readonly QualityFlag[] = [];
  constructor(private readonly sign: 1 | -1, private readonly qs: readonly ResultQuantity[]) {}

  offer(r: GroupResult): void {
    for (const q of this.qs) {
      const v = r.values[q];
      if (v === undefined || !Number.isFinite(v)) continue;
      if (!(this.value === this.value) || this.sign * v > this.sign * this.value) { this.value = v; this.timeMs = r.timeMs; this.flags = r.flags; }
    }
  }

  get(): Extreme | null {
    return this.value === this.value ? { value: this.value, timeMs: this.timeMs, flags: this.flags } : null;
  }
}

/** The four candidates of one class of results (trusted or flagged). */
function candidates() {
  return {
    maxVonMises: new Best(1, ['von_mises_MPa']),
    maxPrincipal: new Best(1, ['principal_1_MPa', 'stress_axial_MPa']),
    minPlane: new Best(-1, ['principal_2_MPa', 'stress_axial_MPa']),
    minSolid: new Best(-1, ['principal_3_MPa']),
  };
}

/**
 * One group's peaks, kept as its results stream in (the same figures as `peaksByGroup` over the
 * whole array, in a few numbers): trusted results make the peaks, flagged ones are set apart.
 */
export class PeaksAccumulator {
  private readonly trustedBest = candidates();
  private readonly flaggedBest = candidates();
  private solid = false;
  samples = 0;
  trusted = 0;

  constructor(readonly groupId: string) {}

  add(r: GroupResult): void {
    this.samples++;
    if (r.values.principal_3_MPa !== undefined) this.solid = true;
    const c = r.flags.length === 0 ? this.trustedBest : this.flaggedBest;
    if (r.flags.length === 0) this.trusted++;
    c.maxVonMises.offer(r);
    c.maxPrincipal.offer(r);
    c.minPlane.offer(r);
    c.minSolid.offer(r);
  }

  peaks(): GroupPeaks {
    const pick = (c: ReturnType<typeof candidates>, kind: PeakKind): Extreme | null =>
      (kind === 'minPrincipal' ? (this.solid ? c.minSolid : c.minPlane) : c[kind]).get();
    const peaks = {} as Record<PeakKind, Extreme | null>;
    const beyond: FlaggedExtreme[] = [];
    for (const kind of PEAK_KINDS) {
      const sign = kind === 'minPrincipal' ? -1 : 1;
      const peak = (peaks[kind] = pick(this.trustedBest, kind));
      const f = pick(this.flaggedBest, kind);
      if (f !== null && (peak === null || sign * f.value > sign * peak.value)) beyond.push({ ...f, kind });
    }
    return { groupId: this.groupId, ...peaks, samples: this.samples, trusted: this.trusted, flagged: beyond };
  }
}
