import type { GroupResult, ResultQuantity } from '../model/result.js';

/** An extreme value of one quantity and when it happened (epoch ms); null when the group never had it. */
export interface Extreme { value: number; timeMs: number }
export interface GroupPeaks {
  groupId: string;
  maxVonMises: Extreme | null;
  /** Largest principal stress (principal 1; the axial stress of a single gauge). */
  maxPrincipal: Extreme | null;
  /** Smallest principal stress (principal 2 plane, principal 3 solid; axial stress of a single gauge). */
  minPrincipal: Extreme | null;
  samples: number;
}

function extreme(results: readonly GroupResult[], qs: readonly ResultQuantity[], sign: 1 | -1): Extreme | null {
  let best: Extreme | null = null;
  for (const r of results) {
    for (const q of qs) {
      const v = r.values[q];
      if (v === undefined || !Number.isFinite(v)) continue;
      if (best === null || sign * v > sign * best.value) best = { value: v, timeMs: r.timeMs };
    }
  }
  return best;
}

/** Peaks per group, groups in order of first appearance. Pure. */
export function peaksByGroup(results: readonly GroupResult[]): GroupPeaks[] {
  const by = new Map<string, GroupResult[]>();
  for (const r of results) { const a = by.get(r.groupId); if (a) a.push(r); else by.set(r.groupId, [r]); }
  return [...by].map(([groupId, rs]) => {
    const solid = rs.some((r) => r.values.principal_3_MPa !== undefined);
    const minQs: ResultQuantity[] = solid ? ['principal_3_MPa'] : ['principal_2_MPa', 'stress_axial_MPa'];
    return {
      groupId,
      maxVonMises: extreme(rs, ['von_mises_MPa'], 1),
      maxPrincipal: extreme(rs, ['principal_1_MPa', 'stress_axial_MPa'], 1),
      minPrincipal: extreme(rs, minQs, -1),
      samples: rs.length,
    };
  });
}
