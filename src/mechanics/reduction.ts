import { Matrix, SingularValueDecomposition } from 'ml-matrix';
import { toMatrix } from './stiffness.js';

/**
 * Least-squares reduction of a gauge group: element readings e (m) = A (m x n) x + noise, where x
 * is the group's strain state (n = 3 plane, 6 solid, 1 uniaxial). A's rows are the elements'
 * observation rows with the transverse-sensitivity correction folded in.
 *
 * The pseudo-inverse is computed once per set of usable elements at configuration time (ml-matrix
 * SVD); per sample the work is one n x m product into preallocated arrays. A missing element is a
 * zero column in its set's pseudo-inverse, so one code path serves every subset.
 */
export interface Reduction {
  readonly m: number;
  readonly n: number;
  /** Observation matrix, row-major m x n. */
  readonly obs: Float64Array;
  /** Pseudo-inverse of the full set (the common case, kept out of the map lookup); null = underdetermined. */
  readonly full: Float64Array | null;
  /** Pseudo-inverses (n x m, row-major) by bitmask of MISSING elements; null = underdetermined. */
  readonly byMissingMask: Map<number, Float64Array | null>;
}

/** Condition number beyond which a subset is treated as unable to determine the state. */
const MAX_CONDITION = 1e8;

/** Builds the reduction and precomputes the full set and every single-missing subset. */
export function buildReduction(obs: Float64Array, m: number, n: number): Reduction {
  if (obs.length !== m * n) throw new RangeError(`observation matrix has ${obs.length} entries, expected ${m}x${n}`);
  if (m > 30) throw new RangeError(`a group may have at most 30 elements, got ${m}`);
  const full = maskedPseudoInverse(obs, m, n, 0);
  const red: Reduction = { m, n, obs, full, byMissingMask: new Map([[0, full]]) };
  for (let i = 0; i < m; i++) red.byMissingMask.set(1 << i, maskedPseudoInverse(obs, m, n, 1 << i));
  return red;
}

/**
 * Pseudo-inverse for the elements not in `missingMask`. Cached; a subset never seen before is
 * computed on first use (rare: two or more elements failing at once) and kept.
 */
export function pseudoInverseFor(red: Reduction, missingMask: number): Float64Array | null {
  let p = red.byMissingMask.get(missingMask);
  if (p === undefined) {
    p = maskedPseudoInverse(red.obs, red.m, red.n, missingMask);
    red.byMissingMask.set(missingMask, p);
  }
  return p;
}

/** n x m pseudo-inverse of the rows of A that are not masked out; zero columns for masked rows. */
export function maskedPseudoInverse(obs: Float64Array, m: number, n: number, missingMask: number): Float64Array | null {
  const rows: number[] = [];
  for (let i = 0; i < m; i++) if ((missingMask & (1 << i)) === 0) rows.push(i);
  if (rows.length < n) return null;
  const a = new Matrix(rows.length, n);
  rows.forEach((r, k) => {
    for (let j = 0; j < n; j++) a.set(k, j, obs[r * n + j]);
  });
  const svd = new SingularValueDecomposition(a, { autoTranspose: true });
  if (!(svd.condition < MAX_CONDITION)) return null;
  const pinv = svd.inverse(); // n x rows.length
  const out = new Float64Array(n * m);
  rows.forEach((r, k) => {
    for (let j = 0; j < n; j++) out[j * m + r] = pinv.get(j, k);
  });
  return out;
}

/** x (n) = P (n x m) e (m). Mutates and returns x. Entries of e at missing elements are ignored (zero columns). */
export function applyPseudoInverse(p: Float64Array, e: Float64Array, m: number, n: number, x: Float64Array): Float64Array {
  if (m === 3) {
    // The three-element rosette, unrolled: the same sums in the same order as the loop below.
    const e0 = e[0], e1 = e[1], e2 = e[2];
    for (let j = 0, b = 0; j < n; j++, b += 3) x[j] = 0 + p[b] * e0 + p[b + 1] * e1 + p[b + 2] * e2;
    return x;
  }
  for (let j = 0; j < n; j++) {
    let acc = 0;
    const base = j * m;
    for (let i = 0; i < m; i++) acc += p[base + i] * e[i];
    x[j] = acc;
  }
  return x;
}

/**
 * Sum of the squared least-squares residuals over the used elements (microstrain^2 when e is in
 * microstrain). Writes each element's residual e_i - (A x)_i into r (0 for missing ones). The
 * caller turns it into the residual RMS, sqrt(sum / used), and the standard error of the fit,
 * sqrt(sum / (used - n)) (evaluate-group.ts).
 */
export function residualSumOfSquares(
  obs: Float64Array, e: Float64Array, x: Float64Array, m: number, n: number, missingMask: number, r: Float64Array,
): number {
  let sum = 0;
  for (let i = 0; i < m; i++) {
    if ((missingMask & (1 << i)) !== 0) {
      r[i] = 0;
      continue;
    }
    let fit = 0;
    for (let j = 0; j < n; j++) fit += obs[i * n + j] * x[j];
    const ri = e[i] - fit;
    r[i] = ri;
    sum += ri * ri;
  }
  return sum;
}

/** Number of set bits of a 32-bit mask (missing elements). */
export function countBits(mask: number): number {
  let v = mask - ((mask >>> 1) & 0x55555555);
  v = (v & 0x33333333) + ((v >>> 2) & 0x33333333);
  return (((v + (v >>> 4)) & 0x0f0f0f0f) * 0x01010101) >>> 24;
}

/**
 * Reference path (naive, allocates): the same least-squares solution by a singular value
 * decomposition of the observation matrix, built and solved with ml-matrix on every call. What the
 * precomputed pseudo-inverse saves per sample; used by the benchmark and the tests.
 */
export function solveLeastSquaresNaive(obs: Float64Array, e: ArrayLike<number>, m: number, n: number): Float64Array {
  const a = toMatrix(obs, m, n);
  const x = new SingularValueDecomposition(a, { autoTranspose: true }).solve(Matrix.columnVector(Array.from(e)));
  return Float64Array.from(x.to1DArray());
}
