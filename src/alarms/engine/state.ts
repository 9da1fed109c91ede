import type { Alarm } from '../types.js';
import type { DebounceState } from './debounce.js';
import type { SampleWindow } from './sample-window.js';
import type { HampelState } from './hampel.js';
import type { FlatlineState } from './flatline.js';
import type { SequenceState } from './sequence.js';

/** Everything remembered for one (rule or check, subject) key. Plain JSON. */
export interface KeyState {
  debounce: DebounceState;
  /** Raw level at the previous evaluation (to count repeats). */
  prevRaw: number;
  /** Occurrences so far (the n in alarm ids). */
  seq: number;
  /** Times (ms) of the clears inside the flapping window. */
  clearsMs: number[];
  /** While flapping: since when the condition has been gone; null while present. */
  quietSinceMs: number | null;
  /**
   * Structural rules: the latest logger time judged (ms). A result at or before it is a scan
   * judged already (redelivered after a takeover or a broker failover, possibly behind newer ones)
   * or older than one judged: no evidence either way, so it never raises an alarm a second time.
   * At that same time, a result with a higher scan seq than `judgedSeq` is a new scan (a logger
   * whose clock gives two scans one millisecond, or coarser), as the summaries count it.
   */
  judgedToMs?: number;
  /** Seq of the scan judged at `judgedToMs`; absent when it had none. */
  judgedSeq?: number;
  trend?: SampleWindow;
  rate?: SampleWindow;
  hampel?: HampelState;
  flatline?: FlatlineState;
}

/** Name of the snapshot format, written in every snapshot so a stray JSON file is never taken for one. */
export const SNAPSHOT_FORMAT = 'strainward.alarm-state';
/** Version written; `state-migration.ts` reads every earlier one. */
export const SNAPSHOT_VERSION = 2;

/** The whole engine state: what a snapshot holds. */
export interface EngineState {
  format: typeof SNAPSHOT_FORMAT;
  version: typeof SNAPSHOT_VERSION;
  /**
   * Alarm numbers (the n in alarm ids) of this state start above this: 0 for a first start, the
   * wall-clock seconds of the reset when a state that could not be read was replaced, so a new
   * alarm never takes the id of one raised before (see `openAlarmState` in src/app/alarm-state-file.ts).
   */
  idFloor: number;
  /** First tick seen: a logger never heard from is silent since then. */
  startMs: number | null;
  keys: Record<string, KeyState>;
  /** Visible alarms (anything not closed) by key. */
  alarms: Record<string, Alarm>;
  /** Last frame arrival per logger id, epoch ms. */
  loggerLastMs: Record<string, number>;
  /** Last usable reading per `logger/channel`, logger time, epoch ms. */
  channelLastMs: Record<string, number>;
  /** Scan counter (`seq`) of each logger that sends one. */
  sequences: Record<string, SequenceState>;
  /** Arrival times of each logger's refused messages within the messages_refused window, epoch ms. */
  refusals: Record<string, number[]>;
}

export function newEngineState(idFloor = 0): EngineState {
  return {
    format: SNAPSHOT_FORMAT, version: SNAPSHOT_VERSION, idFloor, startMs: null,
    keys: {}, alarms: {}, loggerLastMs: {}, channelLastMs: {}, sequences: {}, refusals: {},
  };
}
