/**
 * The caution every output a person acts on carries: each `--help`, `calc` (tables and `--json`'s
 * `notice`) and the live job's start line. One text, so they never drift apart.
 */
export const CAUTION = [
  'strainward supports and does not replace qualified engineering judgement.',
  'Alarm limits are set by the responsible engineer under the local codes.',
  'Missing data is itself an alarm, never an all-clear.',
].join(' ');
