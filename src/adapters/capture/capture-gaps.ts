import type { CaptureIndexEntry } from './capture-index.js';
import type { MemberFigures } from './gzip-members.js';

/** Messages a capture should hold and does not: a damaged member, a file missing, a count short of the index. */
export interface CaptureGap {
  file: string;
  /**
   * Arrival times the lost messages lie within, epoch ms: the member's own figures when its header
   * is intact, else the arrival times of the messages read on either side (or the index's).
   */
  fromMs: number;
  toMs: number;
  /** Messages lost; null when neither the member header nor the index can tell. */
  messages: number | null;
  reason: string;
}

/** A damaged stretch of a file as the reader met it. */
export interface DamagedStretch {
  fromByte: number;
  toByte: number;
  figures: MemberFigures | null;
  torn: boolean;
  /** Arrival time of the last message read before it, and of the first after (null: none). */
  beforeMs: number | null;
  afterMs: number | null;
}

/**
 * The gaps of one capture file, from its damaged stretches, the messages read and its index entry.
 * Pure. A damaged stretch with an intact member after it is always a gap. The stretch at the end
 * of a file is a gap only if the index (closed: final figures) lists more messages than were read,
 * or, without such an entry, if it is damaged rather than torn: a write cut by a crash was never
 * reported durable, so nothing acknowledged is missing. Counts the member header does not give are
 * taken from the index when one stretch is left to account for them.
 */
export function captureFileGaps(file: string, startMs: number, stretches: readonly DamagedStretch[], read: number, lastReadMs: number | null, entry: CaptureIndexEntry | undefined): CaptureGap[] {
  const final = entry?.closed ? entry : undefined;
  const gaps: Array<CaptureGap & { unknown: boolean }> = [];
  for (const [i, s] of stretches.entries()) {
    const atEnd = i === stretches.length - 1 && s.afterMs === null;
    const where = `damaged gzip member at bytes ${s.fromByte}..${s.toByte}`;
    if (atEnd && (final !== undefined || s.torn)) continue; // settled by the index below, or a crash's torn write
    gaps.push({
      file, reason: where, messages: s.figures?.messages ?? null, unknown: s.figures === null,
      fromMs: s.figures?.firstArrivalMs ?? s.beforeMs ?? startMs, toMs: s.figures?.lastArrivalMs ?? s.afterMs ?? final?.lastArrivalMs ?? s.beforeMs ?? startMs,
    });
  }
  if (final !== undefined) {
    const known = gaps.reduce((n, g) => n + (g.messages ?? 0), 0);
    const missing = final.count - read - known;
    const unknown = gaps.filter((g) => g.unknown);
    if (missing > 0 && unknown.length === 1) unknown[0].messages = missing;
    else if (missing > 0 && unknown.length === 0) {
      const last = stretches.at(-1);
      const tail = last !== undefined && last.afterMs === null ? last.figures : null;
      gaps.push({
        file, messages: missing, unknown: false,
        fromMs: tail?.firstArrivalMs ?? lastReadMs ?? final.firstArrivalMs, toMs: tail?.lastArrivalMs ?? final.lastArrivalMs,
        reason: last !== undefined && last.afterMs === null
          ? `damaged gzip member at bytes ${last.fromByte}..${last.toByte} (the index lists ${final.count} messages, ${read} read)`
          : `the index lists ${final.count} messages, ${read} read`,
      });
    }
  }
  return gaps.map(({ unknown: _unknown, ...g }) => g);
}

/** A file the index lists as closed, missing from the directory. Pure. */
export function missingFileGap(entry: CaptureIndexEntry): CaptureGap {
  return { file: entry.name, fromMs: entry.firstArrivalMs, toMs: entry.lastArrivalMs, messages: entry.count, reason: 'file listed in the index is missing' };
}
