/** Options, status and segment shapes of the spool (see spool.ts). */

export type SpoolFullPolicy = 'block' | 'drop_oldest';

export interface SpoolOptions {
  dir: string;
  /** Total bytes of all segments, at most. */
  limitBytes: number;
  /** A segment is sealed once it reaches this size (bytes). Default min(1 MiB, limit / 8). */
  segmentBytes?: number;
  /** Fill ratio at which `onHighWater` fires and `aboveHighWater` turns true. Default 0.8. */
  highWaterRatio?: number;
  policy?: SpoolFullPolicy;
  /** fsync each append (default true: a resolved append survives a power cut). */
  fsync?: boolean;
  /** Called each time the fill ratio rises across `highWaterRatio`. */
  onHighWater?: (status: SpoolStatus) => void;
  /**
   * Called when appends start failing (full disk, I/O error, or the limit under `block`: `reason`
   * says which) and again, with null, on the first append that succeeds after that with room on
   * the disk (min(1 MiB, a tenth of it) free), so the edge of a full disk does not flap.
   */
  onWritable?: (failure: string | null, status: SpoolStatus) => void;
}

export interface SpoolStatus {
  bytes: number;
  limitBytes: number;
  /** bytes / limitBytes, 0..1. */
  fillRatio: number;
  segments: number;
  /** Lines (points) currently held. */
  points: number;
  aboveHighWater: boolean;
  /** Points deleted by the `drop_oldest` policy since open. */
  droppedPoints: number;
  /** Free bytes on the spool's file system for this process (fs.statfs); null when it cannot be read. */
  diskFreeBytes: number | null;
  /** Why the latest append failed, while appends fail; null when the last one succeeded. */
  writeFailure: string | null;
}

/** A sealed segment handed to a reader: its id (for `remove`) and its lines in order. */
export interface SpoolSegment {
  id: number;
  lines: string[];
}
