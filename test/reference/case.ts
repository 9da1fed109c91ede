/**
 * A hand-written reference case: a value worked out by hand (or by a published closed form) with
 * its source beside it, and the same quantity computed through the core. The mechanics and fatigue
 * tests check each case against its tolerance; `npm run check:references`
 * (scripts/reference-differences.ts) prints the largest difference per quantity over all of them.
 */
export interface ReferenceCase {
  /** What is compared, with its unit: one line of the script's output per quantity. */
  quantity: string;
  /** The case, as a test title. */
  label: string;
  /** Where the expected value comes from (a standard, a book, `common practice`, `from memory`). */
  source: string;
  expected: number;
  /** The same through the core. */
  actual: () => number;
  /** Largest absolute difference the test accepts, in the quantity's unit. */
  tolerance: number;
}

/** Tolerance of vitest's toBeCloseTo(x, digits): |difference| < 10^-digits / 2. */
export const digits = (n: number): number => 10 ** -n / 2;
