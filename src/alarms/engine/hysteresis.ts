/**
 * Level reached by a value against ascending thresholds, with hysteresis: 0 = none, i = the i-th
 * threshold (1-based) reached. A level is entered at value >= threshold and kept while
 * value > threshold - margin, so a signal wandering inside that band never chatters.
 * For a "below" rule pass the negated value and negated thresholds. Pure.
 */
export function hysteresisLevel(
  value: number,
  ascendingThresholds: readonly number[],
  margin: number,
  currentLevel: number,
): number {
  let level = 0;
  for (let i = ascendingThresholds.length; i >= 1; i--) {
    const t = ascendingThresholds[i - 1];
    if (value >= t || (i <= currentLevel && value > t - margin)) {
      level = i;
      break;
    }
  }
  return level;
}
