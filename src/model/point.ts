/**
 * One time-series point, the unit every sink writes (InfluxDB line protocol's data model).
 * Identifiers belong in tags: the time-series server keeps numeric fields only.
 */
export interface Point {
  /** Measurement name, e.g. `sw_result`. */
  measurement: string;
  /** Indexed identifiers (structure, group, logger...). Values are strings. */
  tags: Readonly<Record<string, string>>;
  /** Numeric values. Non-finite values are dropped by the sinks, never written. */
  fields: Readonly<Record<string, number>>;
  /** Epoch milliseconds (the logger's own timestamp for results and raw readings). */
  timeMs: number;
}

/**
 * Line protocol already encoded (InfluxDB line protocol, precision ms): `lines` complete lines in
 * `text`, separated by a newline, without a final one. The pipeline writes each frame as one block.
 */
export interface LineBlock {
  readonly text: string;
  readonly lines: number;
}

/**
 * Where points go. `write` resolves once the points are durable: written to the database, or
 * appended to the local spool when the database is unreachable. The pipeline acknowledges an
 * MQTT message only after that promise resolves, so a crash in between loses nothing.
 */
export interface PointSink {
  write(points: readonly Point[]): Promise<void>;
  /** The same for lines already encoded; same durability promise. */
  writeLines(block: LineBlock): Promise<void>;
  /** Flush everything buffered and release resources. */
  close(): Promise<void>;
}

/** What alarm persistence needs of a sink: points only. */
export type PointWriter = Pick<PointSink, 'write'>;
/** What the pipeline's write stage needs of a sink: pre-encoded lines only. */
export type LineWriter = Pick<PointSink, 'writeLines'>;
