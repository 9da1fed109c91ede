/**
 * Principal values, directions and equivalent stresses. Pure and allocation-free: results go into
 * caller-provided arrays. Stresses in any consistent unit (the project uses MPa).
 */

/**
 * Plane principal stresses from (sx, sy, txy): out[0] = s1 >= out[1] = s2, out[2] = angle in
 * degrees from x to the s1 direction, counter-clockwise, in (-90, 90]. Returns out.
 */
export function principal2(sx: number, sy: number, txy: number, out: Float64Array): Float64Array {
  const c = 0.5 * (sx + sy);
  const d = 0.5 * (sx - sy);
  const r = Math.sqrt(d * d + txy * txy);
  out[0] = c + r;
  out[1] = c - r;
  let angle = (0.5 * Math.atan2(txy, d) * 180) / Math.PI;
  if (angle <= -90) angle += 180;
  out[2] = angle;
  return out;
}

/** von Mises stress of a plane stress state (sz = tyz = txz = 0). */
export function vonMises2(sx: number, sy: number, txy: number): number {
  return Math.sqrt(sx * sx - sx * sy + sy * sy + 3 * txy * txy);
}

/** von Mises stress of a Voigt stress 6-vector (xx, yy, zz, yz, xz, xy). */
export function vonMises6(s: Float64Array): number {
  const a = s[0] - s[1];
  const b = s[1] - s[2];
  const c = s[2] - s[0];
  return Math.sqrt(0.5 * (a * a + b * b + c * c) + 3 * (s[3] * s[3] + s[4] * s[4] + s[5] * s[5]));
}

/** Tresca equivalent stress (largest principal difference) of three principal values. */
export function tresca3(s1: number, s2: number, s3: number): number {
  return Math.max(Math.abs(s1 - s2), Math.abs(s2 - s3), Math.abs(s3 - s1));
}

/**
 * Principal stresses of a Voigt stress 6-vector by cyclic Jacobi rotations on the symmetric 3x3
 * tensor. values (3) get s1 >= s2 >= s3; dirs (9, row-major) get the unit direction of s_k in row k,
 * signed so that its largest component is positive; work (9) is scratch. Mutates values, dirs, work.
 * Checked against ml-matrix's symmetric eigen-decomposition in the tests.
 */
export function principal3(s: Float64Array, values: Float64Array, dirs: Float64Array, work: Float64Array): void {
  const a = work;
  a[0] = s[0]; a[1] = s[5]; a[2] = s[4];
  a[3] = s[5]; a[4] = s[1]; a[5] = s[3];
  a[6] = s[4]; a[7] = s[3]; a[8] = s[2];
  const v = dirs; // columns are eigenvectors during the sweep
  v.fill(0);
  v[0] = v[4] = v[8] = 1;
  const scale = Math.abs(a[0]) + Math.abs(a[4]) + Math.abs(a[8]) + Math.abs(a[1]) + Math.abs(a[2]) + Math.abs(a[5]);
  for (let sweep = 0; sweep < 50; sweep++) {
    const off = Math.abs(a[1]) + Math.abs(a[2]) + Math.abs(a[5]);
    if (off <= 1e-15 * scale || off === 0) break;
    rotate(a, v, 0, 1);
    rotate(a, v, 0, 2);
    rotate(a, v, 1, 2);
  }
  sortEigen(a[0], a[4], a[8], v, values, work);
}

/** One Jacobi rotation zeroing a[p][q] of the symmetric 3x3 a; accumulates it into v. */
function rotate(a: Float64Array, v: Float64Array, p: number, q: number): void {
  const apq = a[p * 3 + q];
  if (apq === 0) return;
  const app = a[p * 3 + p];
  const aqq = a[q * 3 + q];
  const theta = (aqq - app) / (2 * apq);
  const t = Math.sign(theta || 1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
  const c = 1 / Math.sqrt(t * t + 1);
  const sn = t * c;
  for (let k = 0; k < 3; k++) {
    const akp = a[k * 3 + p];
    const akq = a[k * 3 + q];
    a[k * 3 + p] = c * akp - sn * akq;
    a[k * 3 + q] = sn * akp + c * akq;
  }
  for (let k = 0; k < 3; k++) {
    const apk = a[p * 3 + k];
    const aqk = a[q * 3 + k];
    a[p * 3 + k] = c * apk - sn * aqk;
    a[q * 3 + k] = sn * apk + c * aqk;
  }
  for (let k = 0; k < 3; k++) {
    const vkp = v[k * 3 + p];
    const vkq = v[k * 3 + q];
    v[k * 3 + p] = c * vkp - sn * vkq;
    v[k * 3 + q] = sn * vkp + c * vkq;
  }
}

/** Sorts eigenpairs descending; rewrites v from columns to signed rows. work is scratch. No allocation. */
function sortEigen(l0: number, l1: number, l2: number, v: Float64Array, values: Float64Array, work: Float64Array): void {
  // Index of largest, middle and smallest eigenvalue, by comparisons on scalars.
  let iMax = 0, iMin = 0;
  if (l1 > l0 && l1 >= l2) iMax = 1; else if (l2 > l0 && l2 > l1) iMax = 2;
  if (l1 < l0 && l1 <= l2) iMin = 1; else if (l2 < l0 && l2 < l1) iMin = 2;
  if (iMin === iMax) iMin = iMax === 2 ? 1 : 2; // all equal
  const iMid = 3 - iMax - iMin;
  for (let k = 0; k < 9; k++) work[k] = v[k];
  putRow(0, iMax, iMax === 0 ? l0 : iMax === 1 ? l1 : l2, v, values, work);
  putRow(1, iMid, iMid === 0 ? l0 : iMid === 1 ? l1 : l2, v, values, work);
  putRow(2, iMin, iMin === 0 ? l0 : iMin === 1 ? l1 : l2, v, values, work);
}

function putRow(r: number, col: number, value: number, v: Float64Array, values: Float64Array, work: Float64Array): void {
  values[r] = value;
  let x = work[col], y = work[3 + col], z = work[6 + col];
  const ax = Math.abs(x), ay = Math.abs(y), az = Math.abs(z);
  const big = ax >= ay && ax >= az ? x : ay >= az ? y : z;
  if (big < 0) { x = -x; y = -y; z = -z; }
  v[r * 3] = x; v[r * 3 + 1] = y; v[r * 3 + 2] = z;
}
