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
 * Line protocol already encoded (InfluxDB line protocol, precision ms, UTF-8): `lines` complete
 * lines in `bytes`, separated by a newline, without a final one. The pipeline writes each frame as
 * one block. The bytes are a view into the encoder's slab (adapters/lineproto/line-buffer.ts),
 * never written again: a frame's lines are not a string of their own (thousands a second, each
 * living until its batch is sent, were a large part of the garbage collector's work), and a sink
 * joins a batch's blocks into one text or one file write.
 */
export interface LineBlock {
  readonly bytes: Uint8Array;
  readonly lines: number;
}

const NEWLINE = 0x0a;

/** A block of `lines` lines given as text. */
export function lineBlockOf(text: string, lines: number): LineBlock {
  return { bytes: Buffer.from(text, 'utf8'), lines };
}

/** A block's lines as text. */
export function lineBlockText(block: LineBlock): string {
  return utf8Text(block.bytes);
}

/** UTF-8 bytes as text, without copying them first. */
export function utf8Text(bytes: Uint8Array): string {
  return Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength).toString('utf8');
}

/**
 * The blocks' bytes one after the other, each followed by a newline (`finalNewline`) or separated
 * by one: one allocation, one copy of each block.
 */
export function joinLineBlocks(blocks: readonly LineBlock[], finalNewline: boolean): Buffer {
  let total = 0;
  for (const b of blocks) total += b.bytes.byteLength + 1;
  if (!finalNewline && blocks.length > 0) total--;
  const out = Buffer.allocUnsafe(total);
  let pos = 0;
  for (let i = 0; i < blocks.length; i++) {
    out.set(blocks[i].bytes, pos);
    pos += blocks[i].bytes.byteLength;
    if (pos < total) out[pos++] = NEWLINE;
  }
  return out;
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
