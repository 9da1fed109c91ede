import type { QualityFlag } from '../model/quality.js';
import type { GroupResult, ResultQuantity } from '../model/result.js';

/** An extreme value of one quantity, when it happened (epoch ms) and the flags of its result. */
export interface Extreme { value: number; timeMs: number; flags: readonly QualityFlag[] }

/** Which peak of a group: the three columns of the peaks table. */
export type PeakKind = 'maxVonMises' | 'maxPrincipal' | 'minPrincipal';
export const PEAK_KINDS: readonly PeakKind[] = ['maxVonMises', 'maxPrincipal', 'minPrincipal'];

/** A flagged result's value beyond the group's trusted peak of that kind (or with no trusted peak at all). */
export interface FlaggedExtreme extends Extreme { kind: PeakKind }

export interface GroupPeaks {
  groupId: string;
  /** The structure's peaks: from results without a quality flag only (null when there is none). */
  maxVonMises: Extreme | null;
  /** Largest principal stress (principal 1; the axial stress of a single gauge). */
  maxPrincipal: Extreme | null;
  /** Smallest principal stress (principal 2 plane, principal 3 solid; axial stress of a single gauge). */
  minPrincipal: Extreme | null;
  /** Every result of the group, and those without a flag. */
  samples: number;
  trusted: number;
  /**
   * Flagged results that go beyond the trusted peaks, the most extreme of each kind: doubtful readings
   * (a spike, a drifting gauge, an element missing...), listed apart with their flags, never as peaks.
   */
  flagged: FlaggedExtreme[];
}

function extreme(results: readonly GroupResult[], qs: readonly ResultQuantity[], sign: 1 | -1): Extreme | null {
  let best: Extreme | null = null;
  for (const r of results) {
    for (const q of qs) {
      const v = r.values[q];
      if (v === undefined || !Number.isFinite(v)) continue;
      if (best === null || sign * v > sign * best.value) best = { value: v, timeMs: r.timeMs, flags: r.flags };
    }
  }
  return best;
}

const SIGN: Readonly<Record<PeakKind, 1 | -1>> = { maxVonMises: 1, maxPrincipal: 1, minPrincipal: -1 };

/** Peaks per group, groups in order of first appearance: trusted results make the peaks, flagged ones are set apart. Pure. */
export function peaksByGroup(results: readonly GroupResult[]): GroupPeaks[] {
  const by = new Map<string, { trusted: GroupResult[]; flagged: GroupResult[] }>();
  for (const r of results) {
    let g = by.get(r.groupId);
    if (g === undefined) by.set(r.groupId, (g = { trusted: [], flagged: [] }));
    (r.flags.length === 0 ? g.trusted : g.flagged).push(r);
  }
  return [...by].map(([groupId, { trusted, flagged }]) => {
    const solid = [...trusted, ...flagged].some((r) => r.values.principal_3_MPa !== undefined);
    const qs: Readonly<Record<PeakKind, ResultQuantity[]>> = {
      maxVonMises: ['von_mises_MPa'],
      maxPrincipal: ['principal_1_MPa', 'stress_axial_MPa'],
      minPrincipal: solid ? ['principal_3_MPa'] : ['principal_2_MPa', 'stress_axial_MPa'],
    };
    const peaks = {} as Record<PeakKind, Extreme | null>;
    const beyond: FlaggedExtreme[] = [];
    for (const kind of PEAK_KINDS) {
      const sign = SIGN[kind];
      peaks[kind] = extreme(trusted, qs[kind], sign);
      const f = extreme(flagged, qs[kind], sign);
      const peak = peaks[kind];
      if (f !== null && (peak === null || sign * f.value > sign * peak.value)) beyond.push({ ...f, kind });
    }
    return { groupId, ...peaks, samples: trusted.length + flagged.length, trusted: trusted.length, flagged: beyond };
  });
}
