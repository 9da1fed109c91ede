import { CholeskyDecomposition, Matrix, inverse } from 'ml-matrix';
import { PLANE_COMPONENTS } from './voigt.js';

/**
 * Stiffness and compliance in Voigt notation (order and shear convention in voigt.ts).
 * Matrices are row-major Float64Arrays (6x6 = 36 entries, 3x3 = 9). Everything here runs at
 * configuration time and allocates its results; nothing here is on the per-sample path.
 * Units pass through: give E in MPa and you get stiffness in MPa, compliance in 1/MPa.
 */
export type Matrix6 = Float64Array;

/** Lame constants (lambda, mu) for Young's modulus E and Poisson's ratio nu; same unit as E. */
export function lameConstants(E: number, nu: number): { lambda: number; mu: number } {
  return { lambda: (E * nu) / ((1 + nu) * (1 - 2 * nu)), mu: E / (2 * (1 + nu)) };
}

/** 6x6 isotropic stiffness C (new array). */
export function isotropicStiffness(E: number, nu: number): Matrix6 {
  const { lambda, mu } = lameConstants(E, nu);
  const c = new Float64Array(36);
  for (let i = 0; i < 3; i++) {
    for (let j = 0; j < 3; j++) c[i * 6 + j] = lambda + (i === j ? 2 * mu : 0);
    c[(i + 3) * 6 + (i + 3)] = mu;
  }
  return c;
}

/** 6x6 isotropic compliance S (new array): S11 = 1/E, S12 = -nu/E, S44 = 1/G = 2(1+nu)/E. */
export function isotropicCompliance(E: number, nu: number): Matrix6 {
  const s = new Float64Array(36);
  for (let i = 0; i < 3; i++) {
    for (let j = 0; j < 3; j++) s[i * 6 + j] = i === j ? 1 / E : -nu / E;
    s[(i + 3) * 6 + (i + 3)] = (2 * (1 + nu)) / E;
  }
  return s;
}

/** Engineering constants of an orthotropic material in its own axes 1, 2, 3 (= group x, y, z). */
export interface OrthotropicConstants {
  E1: number; E2: number; E3: number;
  /** Major Poisson ratios: nu_ij = -eps_j / eps_i under uniaxial stress along i. */
  nu12: number; nu13: number; nu23: number;
  G12: number; G13: number; G23: number;
}

/**
 * 6x6 orthotropic compliance (new array). Symmetry gives the minor ratios: nu21/E2 = nu12/E1.
 * Shear entries follow the Voigt order: S44 = 1/G23 (yz), S55 = 1/G13 (xz), S66 = 1/G12 (xy).
 */
export function orthotropicCompliance(k: OrthotropicConstants): Matrix6 {
  const s = new Float64Array(36);
  s[0] = 1 / k.E1; s[7] = 1 / k.E2; s[14] = 1 / k.E3;
  s[1] = s[6] = -k.nu12 / k.E1;
  s[2] = s[12] = -k.nu13 / k.E1;
  s[8] = s[13] = -k.nu23 / k.E2;
  s[21] = 1 / k.G23; s[28] = 1 / k.G13; s[35] = 1 / k.G12;
  return s;
}

/** Inverse of an n x n row-major matrix (new array), via ml-matrix. */
export function invertSquare(m: Float64Array, n: number): Float64Array {
  const inv = inverse(toMatrix(m, n, n));
  return fromMatrix(inv);
}

/** True when the symmetric n x n matrix is positive definite (Cholesky succeeds). */
export function isPositiveDefinite(m: Float64Array, n: number): boolean {
  return new CholeskyDecomposition(toMatrix(m, n, n)).isPositiveDefinite();
}

/** Largest |m_ij - m_ji| relative to the largest |m_ij|: 0 for an exactly symmetric matrix. */
export function asymmetry(m: Float64Array, n: number): number {
  let worst = 0;
  let scale = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      scale = Math.max(scale, Math.abs(m[i * n + j]));
      worst = Math.max(worst, Math.abs(m[i * n + j] - m[j * n + i]));
    }
  }
  return scale === 0 ? 0 : worst / scale;
}

/**
 * Plane-stress reduced compliance (3x3, new array) in the order xx, yy, xy: the rows and columns
 * of the full compliance that belong to the in-plane components. Under plane stress the
 * out-of-plane stresses vanish, so the in-plane strains depend on these entries only.
 */
export function planeStressCompliance(s6: Matrix6): Float64Array {
  const out = new Float64Array(9);
  for (let i = 0; i < 3; i++) {
    for (let j = 0; j < 3; j++) out[i * 3 + j] = s6[PLANE_COMPONENTS[i] * 6 + PLANE_COMPONENTS[j]];
  }
  return out;
}

/**
 * Plane-stress reduced stiffness Q (3x3, new array) = inverse of the reduced compliance. Taken from
 * the compliance, never from the isotropic closed form, so orthotropic and anisotropic decks work.
 */
export function planeStressStiffness(s6: Matrix6): Float64Array {
  return invertSquare(planeStressCompliance(s6), 3);
}

export function toMatrix(m: Float64Array, rows: number, cols: number): Matrix {
  const out = new Matrix(rows, cols);
  for (let i = 0; i < rows; i++) for (let j = 0; j < cols; j++) out.set(i, j, m[i * cols + j]);
  return out;
}

export function fromMatrix(m: Matrix): Float64Array {
  const out = new Float64Array(m.rows * m.columns);
  for (let i = 0; i < m.rows; i++) for (let j = 0; j < m.columns; j++) out[i * m.columns + j] = m.get(i, j);
  return out;
}
