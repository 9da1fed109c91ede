/** A message exactly as it arrived, before any decoding: the unit of capture, dead letters and replay. */
export interface RawMessage {
  /** MQTT topic it arrived on. */
  topic: string;
  /** Payload bytes as received. */
  payload: Uint8Array;
  /** Arrival time at the processor, epoch milliseconds (from the injected clock). */
  arrivalMs: number;
}

/** A decoded logger scan: every channel value this logger reported for one instant. */
export interface LoggerFrame {
  structureId: string;
  loggerId: string;
  /** The logger's own timestamp, epoch milliseconds. */
  timeMs: number;
  /** Optional per-logger sequence number (gaps reveal lost scans). */
  seq: number | null;
  /** Channel id to raw value in the channel's configured unit; null = the logger could not read it. */
  values: ReadonlyMap<string, number | null>;
  arrivalMs: number;
  /** The message said `synthetic: true` (simulated readings); absent otherwise. */
  synthetic?: true;
}
