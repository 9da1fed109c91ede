/** Names and contents of spool segment files. Pure. */

const NAME = /^segment-(\d{12})\.lp$/;

/** File name of segment `id`: zero-padded so name order is number order. */
export const nameOf = (id: number): string => `segment-${String(id).padStart(12, '0')}.lp`;

/** Segment id of a file name, or null for any other file (e.g. the `refused` directory). */
export function segmentIdOf(fileName: string): number | null {
  const match = NAME.exec(fileName);
  return match === null ? null : Number(match[1]);
}

/** The complete lines of a segment's text: a torn last line (no newline: crash mid-append) is left out. */
export function completeLines(text: string): string[] {
  const parts = text.split('\n');
  parts.pop(); // after the last newline: empty, or a torn line
  return parts.filter((line) => line !== '');
}
