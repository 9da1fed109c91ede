/**
 * Rotation of material properties from material axes 1, 2, 3 to a group's axes x, y, z, in the
 * Voigt form of voigt.ts (order xx, yy, zz, yz, xz, xy; engineering shear in strain vectors,
 * tensor shear in stress vectors). Configuration-time only: everything here allocates its result.
 *
 * R (3x3, row-major) has the material axes as its COLUMNS, in group coordinates: a vector v_m in
 * material coordinates is R v_m in group coordinates, and a second-order tensor T_m is R T_m R^T.
 * In Voigt form that rule is a 6x6 matrix: M for stress vectors, N for engineering-strain vectors.
 * They satisfy N = M^-T (the work sigma . eps is the same in both frames), so
 *   C_group = M C M^T,  S_group = N S N^T,  alpha_group = N alpha
 * and an expansion that is purely normal in material axes gets shear terms in group axes.
 */
export type Rotation3 = Float64Array;

/** Rotation about z by theta (radians, counter-clockwise seen from +z): material axis 1 at theta from x. */
export function rotationAboutZ(thetaRad: number): Rotation3 {
  const c = Math.cos(thetaRad), s = Math.sin(thetaRad);
  return Float64Array.of(c, -s, 0, s, c, 0, 0, 0, 1);
}

function rotationAboutY(rad: number): Rotation3 {
  const c = Math.cos(rad), s = Math.sin(rad);
  return Float64Array.of(c, 0, s, 0, 1, 0, -s, 0, c);
}

function rotationAboutX(rad: number): Rotation3 {
  const c = Math.cos(rad), s = Math.sin(rad);
  return Float64Array.of(1, 0, 0, 0, c, -s, 0, s, c);
}

function product3(a: Rotation3, b: Rotation3): Rotation3 {
  const out = new Float64Array(9);
  for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) for (let k = 0; k < 3; k++) out[i * 3 + j] += a[i * 3 + k] * b[k * 3 + j];
  return out;
}

/**
 * Material axes obtained from the group axes by rotating about z by zRad, then about the new y by
 * yRad, then about the newest x by xRad (intrinsic z-y'-x'' angles): R = Rz Ry Rx.
 */
export function rotationFromAngles(zRad: number, yRad: number, xRad: number): Rotation3 {
  return product3(product3(rotationAboutZ(zRad), rotationAboutY(yRad)), rotationAboutX(xRad));
}

/** Voigt index pairs: component k is the tensor entry (P[k], Q[k]). */
const P = [0, 1, 2, 1, 0, 0];
const Q = [0, 1, 2, 2, 2, 1];

/**
 * 6x6 stress transformation M (row-major): sigma_group = M sigma_material. Entry (I, J) is the
 * coefficient of the material component J in R sigma R^T at (P[I], Q[I]); a shear component J
 * appears twice in the tensor (ij and ji), hence the sum of both terms.
 */
export function stressRotation6(r: Rotation3): Float64Array {
  const m = new Float64Array(36);
  for (let I = 0; I < 6; I++) {
    const i = P[I], j = Q[I];
    for (let J = 0; J < 6; J++) {
      const k = P[J], l = Q[J];
      m[I * 6 + J] = k === l ? r[i * 3 + k] * r[j * 3 + k] : r[i * 3 + k] * r[j * 3 + l] + r[i * 3 + l] * r[j * 3 + k];
    }
  }
  return m;
}

/**
 * 6x6 engineering-strain transformation N (row-major): eps_group = N eps_material. The tensor rule
 * with the factors of the engineering convention: a shear row is twice the tensor shear, and an
 * engineering shear column carries half its value into each of the two tensor entries.
 */
export function strainRotation6(r: Rotation3): Float64Array {
  const n = new Float64Array(36);
  for (let I = 0; I < 6; I++) {
    const i = P[I], j = Q[I];
    const rowScale = i === j ? 1 : 2;
    for (let J = 0; J < 6; J++) {
      const k = P[J], l = Q[J];
      const t = k === l ? r[i * 3 + k] * r[j * 3 + k] : 0.5 * (r[i * 3 + k] * r[j * 3 + l] + r[i * 3 + l] * r[j * 3 + k]);
      n[I * 6 + J] = rowScale * t;
    }
  }
  return n;
}

/** A B A^T for 6x6 row-major matrices (new array). */
function congruence6(a: Float64Array, b: Float64Array): Float64Array {
  const ab = new Float64Array(36);
  for (let i = 0; i < 6; i++) for (let j = 0; j < 6; j++) {
    let acc = 0;
    for (let k = 0; k < 6; k++) acc += a[i * 6 + k] * b[k * 6 + j];
    ab[i * 6 + j] = acc;
  }
  const out = new Float64Array(36);
  for (let i = 0; i < 6; i++) for (let j = 0; j < 6; j++) {
    let acc = 0;
    for (let k = 0; k < 6; k++) acc += ab[i * 6 + k] * a[j * 6 + k];
    out[i * 6 + j] = acc;
  }
  return out;
}

/** Stiffness in group axes, M C M^T (new array). */
export function rotateStiffness(c: Float64Array, r: Rotation3): Float64Array {
  return congruence6(stressRotation6(r), c);
}

/** Compliance in group axes, N S N^T (new array). */
export function rotateCompliance(s: Float64Array, r: Rotation3): Float64Array {
  return congruence6(strainRotation6(r), s);
}

/** An engineering-strain 6-vector (e.g. the expansion per degC) in group axes, N v (new array). */
export function rotateStrainVector(v: ArrayLike<number>, r: Rotation3): Float64Array {
  const n = strainRotation6(r);
  const out = new Float64Array(6);
  for (let i = 0; i < 6; i++) {
    let acc = 0;
    for (let j = 0; j < 6; j++) acc += n[i * 6 + j] * v[j];
    out[i] = acc;
  }
  return out;
}
