/**
 * Voigt notation, stated once for the whole project.
 *
 * Order of the 6 components: xx, yy, zz, yz, xz, xy (indices 0..5).
 * Strain vectors carry ENGINEERING shear strains: gamma_yz = 2 eps_yz, and so on.
 * Stress vectors carry the tensor shear stresses: tau_yz = sigma_yz.
 * With this pairing, the strain energy density is stress . strain / 2 and the isotropic
 * stiffness has the shear modulus G (not 2G) on its shear diagonal.
 *
 * Plane (surface) groups use the in-plane subset xx, yy, xy, in that order (PLANE_COMPONENTS).
 */
export const VOIGT_ORDER = ['xx', 'yy', 'zz', 'yz', 'xz', 'xy'] as const;
export type VoigtComponent = (typeof VOIGT_ORDER)[number];

export const XX = 0;
export const YY = 1;
export const ZZ = 2;
export const YZ = 3;
export const XZ = 4;
export const XY = 5;

/** Indices of the in-plane components (xx, yy, xy) within the 6-vector. */
export const PLANE_COMPONENTS: readonly number[] = [XX, YY, XY];

/**
 * Writes into `out` (length 6) the row r such that r . strain = the normal strain along the unit
 * direction n = (nx, ny, nz): eps_n = nx^2 exx + ny^2 eyy + nz^2 ezz + ny nz gyz + nx nz gxz + nx ny gxy.
 * The direction must be a unit vector (checked at configuration time, not here). Returns `out`.
 */
export function normalStrainRow3(nx: number, ny: number, nz: number, out: Float64Array): Float64Array {
  out[XX] = nx * nx;
  out[YY] = ny * ny;
  out[ZZ] = nz * nz;
  out[YZ] = ny * nz;
  out[XZ] = nx * nz;
  out[XY] = nx * ny;
  return out;
}

/**
 * Writes into `out` (length 3) the in-plane row for a gauge at angle theta (radians,
 * counter-clockwise from the group's x axis): eps_theta = c^2 exx + s^2 eyy + s c gxy. Returns `out`.
 */
export function normalStrainRow2(thetaRad: number, out: Float64Array): Float64Array {
  const c = Math.cos(thetaRad);
  const s = Math.sin(thetaRad);
  out[0] = c * c;
  out[1] = s * s;
  out[2] = s * c;
  return out;
}
