/**
 * Quality flags attached to every result. A result with no flag is `good`; any flag makes it
 * doubtful, and doubtful results never raise structural alarms on their own (they raise the
 * instrument-health alarm that explains them).
 */
export const QUALITY_FLAGS = [
  'temperature_stale', // the temperature used is older than the group's max age (last value used)
  'temperature_missing', // no usable temperature: computed at the zero-reading temperature
  'element_missing', // an element had no reading; a redundant group was reduced without it
  'element_out_of_range', // an element reading outside its configured valid range (open circuit...)
  'residual_high', // redundant group: least-squares residual above the group's limit
  'companion_missing', // the unstressed companion gauge had no reading
  'underdetermined', // too few elements left to determine the strain state: no result values
  // Instrument health of the readings, decided before the result is released (pipeline/channel-screen.ts).
  // Appended after the evaluator's bits so stored quality_bits keep their meaning.
  'reading_spike', // an element or companion reading was a spike: an excursion that came back at once
  'reading_suspect', // such an excursion had not been judged when the wait for the next readings ran out
  'reading_flatline', // an element or companion channel has not changed over the flat-line window
  'residual_drift', // redundant group: the residual averaged over recent samples stands clear of its noise (pipeline/residual-drift.ts)
  'residual_rising', // redundant group: that average is higher than noise alone makes it 99 % of the time, a drift not yet decided
] as const;

export type QualityFlag = (typeof QUALITY_FLAGS)[number];

/** Bit for each flag, for compact storage (field `quality_bits`). */
export function qualityBit(flag: QualityFlag): number {
  return 1 << QUALITY_FLAGS.indexOf(flag);
}

export function qualityBits(flags: readonly QualityFlag[]): number {
  let bits = 0;
  for (const f of flags) bits |= qualityBit(f);
  return bits;
}

/** Every combination of flags, built once: results share these frozen arrays instead of one each. */
const FLAG_SETS: ReadonlyArray<readonly QualityFlag[]> = Array.from({ length: 1 << QUALITY_FLAGS.length },
  (_, bits) => Object.freeze(QUALITY_FLAGS.filter((_, i) => (bits & (1 << i)) !== 0)));

/** The flags of `bits`, in QUALITY_FLAGS order; a shared frozen array. */
export function flagsFromBits(bits: number): readonly QualityFlag[] {
  return FLAG_SETS[bits & (FLAG_SETS.length - 1)];
}
