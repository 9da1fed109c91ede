import type { GroupModel } from '../src/mechanics/group-model.js';
import { indicatedStrainMicro } from '../src/mechanics/evaluate-group.js';
import { pseudoInverseFor } from '../src/mechanics/reduction.js';

/**
 * Standard deviation of each stress component caused by reading noise, by first-order
 * propagation through the group's reduction (the check of the simulator's noise model).
 *
 * Element i reads r_i with independent noise of sd s_i. Its effective sd includes the logger's
 * quantisation step q: s_i^2 = sigma^2 + q^2/12, the rounding error being nearly uniform and
 * independent of the signal once sigma is not much smaller than q (common practice).
 * Linearised, the mechanical strain error is
 *   d(mech_i) = g_i d(r_i) - n_i d(free),   g_i = d(indicated_i)/d(r_i),
 * n_i the row's normal-component sum (rowNormalSum) and d(free) = g_c d(r_c) the companion
 * gauge's error when the group has one (it enters every element: correlated errors). So
 *   Cov(mech) = diag(g_i^2 s_i^2) + g_c^2 s_c^2 n n^T,
 *   Cov(x) = P Cov(mech) P^T            (P the pseudo-inverse of the observation matrix),
 *   Cov(stress) = K Cov(x) K^T 1e-12    (K the stiffness; strains in microstrain, stress in MPa).
 * The temperature is taken as exact. Returns the square roots of Cov(stress)'s diagonal in the
 * group's space: plane [sx, sy, txy], solid Voigt 6, single [sigma] (new array).
 */
export function stressNoiseSd(
  g: GroupModel, raw: ArrayLike<number>, tempC: number, sdRaw: ArrayLike<number>, companionRaw = Number.NaN, companionSd = 0,
): number[] {
  const { m, n } = g;
  const slope = (el: GroupModel['elements'][number], r: number) => {
    const h = Math.max(1e-6, Math.abs(r) * 1e-7);
    return (indicatedStrainMicro(el, r + h, tempC) - indicatedStrainMicro(el, r - h, tempC)) / (2 * h);
  };
  const cov = new Float64Array(m * m);
  for (let i = 0; i < m; i++) cov[i * m + i] = (slope(g.elements[i], raw[i]) * sdRaw[i]) ** 2;
  if (g.companion !== null && companionRaw === companionRaw) {
    const varFree = (slope(g.companion, companionRaw) * companionSd) ** 2;
    for (let i = 0; i < m; i++) for (let j = 0; j < m; j++) cov[i * m + j] += varFree * g.elements[i].rowNormalSum * g.elements[j].rowNormalSum;
  }
  const p = pseudoInverseFor(g.reduction, 0);
  if (p === null) throw new RangeError(`group ${g.id} is underdetermined`);
  const covX = sandwich(p, cov, n, m);
  const covS = sandwich(g.stiffness, covX, n, n);
  return Array.from({ length: n }, (_, k) => Math.sqrt(covS[k * n + k]) * 1e-6);
}

/** A C A^T for A (rows x cols) and symmetric C (cols x cols); new array rows x rows. */
function sandwich(a: Float64Array, c: Float64Array, rows: number, cols: number): Float64Array {
  const ac = new Float64Array(rows * cols);
  for (let i = 0; i < rows; i++) for (let j = 0; j < cols; j++) {
    let acc = 0;
    for (let k = 0; k < cols; k++) acc += a[i * cols + k] * c[k * cols + j];
    ac[i * cols + j] = acc;
  }
  const out = new Float64Array(rows * rows);
  for (let i = 0; i < rows; i++) for (let j = 0; j < rows; j++) {
    let acc = 0;
    for (let k = 0; k < cols; k++) acc += ac[i * cols + k] * a[j * cols + k];
    out[i * rows + j] = acc;
  }
  return out;
}
