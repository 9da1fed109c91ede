/**
 * Influence lines of a two-span continuous beam with equal spans L (supports at 0, L, 2L), for a
 * unit load at position a (0..2L). The middle reaction follows from removing the middle support
 * and restoring zero deflection there (flexibility method, simply supported beam of length 2L):
 *   R_B = a'(3L^2 - a'^2) / (2L^3), a' = a in span 1, 2L - a in span 2,
 * then R_A from moments about the far support. Moment and shear at a section x in span 1 follow
 * from statics of the part left of x. Sagging moment and upward left-hand shear are positive.
 */

/** Middle-support reaction for a unit load at a (same unit as L). */
export function middleReaction(a: number, L: number): number {
  const ap = a <= L ? a : 2 * L - a;
  return (ap * (3 * L * L - ap * ap)) / (2 * L * L * L);
}

/** End reaction at x = 0 for a unit load at a. */
export function endReaction(a: number, L: number): number {
  return (2 * L - a - middleReaction(a, L) * L) / (2 * L);
}

/** Bending moment at section x (0 <= x <= L) for a unit load at a: units of length. */
export function momentAt(x: number, a: number, L: number): number {
  return endReaction(a, L) * x - (a < x ? x - a : 0);
}

/** Shear force just right of section x (0 <= x <= L) for a unit load at a: dimensionless. */
export function shearAt(x: number, a: number, L: number): number {
  return endReaction(a, L) - (a <= x ? 1 : 0);
}
