import type { GroupResult, ResultQuantity } from '../../src/model/result.js';

export const T0 = Date.UTC(2025, 5, 1, 12, 0, 0);

/** A plane-group result with the given values (invented numbers for report tests). */
export function result(groupId: string, timeMs: number, values: Partial<Record<ResultQuantity, number>>, flags: GroupResult['flags'] = []): GroupResult {
  return { structureId: 'brannock-mere', groupId, zone: 'span-1', loggerId: 'lg-span1', timeMs, seq: null, values, elementStrainMicro: {}, flags };
}

/** A plane rosette series at 10 Hz for `seconds`, skipping [gapFrom_s, gapTo_s). */
export function planeSeries(groupId: string, seconds: number, gap?: [number, number]): GroupResult[] {
  const out: GroupResult[] = [];
  for (let k = 0; k < seconds * 10; k++) {
    const t_s = k / 10;
    if (gap && t_s >= gap[0] && t_s < gap[1]) continue;
    const sx = 40 * Math.sin(t_s / 7) + (k === 1234 ? 140 : 0);
    const sy = -5 + 2 * Math.cos(t_s / 3);
    const txy = 12 * Math.sin(t_s / 5);
    const c = (sx + sy) / 2, r = Math.hypot((sx - sy) / 2, txy);
    out.push(result(groupId, T0 + k * 100, {
      stress_xx_MPa: sx, stress_yy_MPa: sy, stress_xy_MPa: txy, principal_1_MPa: c + r, principal_2_MPa: c - r,
      principal_angle_deg: (0.5 * Math.atan2(txy, (sx - sy) / 2) * 180) / Math.PI,
      von_mises_MPa: Math.sqrt(sx * sx - sx * sy + sy * sy + 3 * txy * txy), temperature_degC: 15 + t_s / 60,
      residual_rms_micro: 1 + (k % 7) * 0.1,
    }));
  }
  return out;
}
