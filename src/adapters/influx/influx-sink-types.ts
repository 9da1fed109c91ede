/** Options and status of the database sink (see influx-sink.ts). */
import type { Spool } from '../spool/spool.js';
import type { InfluxTarget } from './post-lines.js';
import type { RetryPolicy } from './send-with-retry.js';

export interface InfluxSinkOptions extends InfluxTarget, RetryPolicy {
  /** Flush when this many lines are pending. */
  batchSize: number;
  /** Flush pending lines at most this long after the first arrived (ms). */
  flushInterval_ms: number;
  /** Batches sent at once (>= 1). Default 1. Two let the database parse one while the next is encoded. */
  maxInFlight?: number;
  /** The spool (opened by the caller, so a restarted process finds its old segments). */
  spool: Spool;
  /** Clock for the refused-lines file name (epoch ms). Default Date.now. */
  now?: () => number;
}

/** Snapshot of the sink's state. Counters are since construction. */
export interface InfluxSinkStatus {
  /** Points accepted by `write` and not yet durable. */
  queuedPoints: number;
  spoolBytes: number;
  spoolLimitBytes: number;
  spoolFillRatio: number;
  /** Free bytes on the spool's disk (the spool's own limit may be far from what the disk holds); null if unknown. */
  spoolDiskFreeBytes: number | null;
  /** Why the latest spool append failed, while appends fail (full disk, limit under `block`); else null. */
  spoolWriteFailure: string | null;
  /** Result of the latest write attempt; null before the first. */
  dbReachable: boolean | null;
  writtenPoints: number;
  spooledPoints: number;
  /** Deleted by the spool's `drop_oldest` policy. */
  droppedPoints: number;
  refusedPoints: number;
  /** Write attempts the database failed (each retry, and each failed probe of the spool's drainer). */
  failedWrites: number;
  /** Redacted message of the latest failure; null before any. */
  lastError: string | null;
}
