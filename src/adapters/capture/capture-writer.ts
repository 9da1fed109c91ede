import { mkdir, open, readdir, stat, unlink } from 'node:fs/promises';
import { join } from 'node:path';
import type { RawMessage } from '../../model/raw-message.js';
import { captureFileName, encodeCaptureLine, parseCaptureFileName, sortCaptureFiles } from './capture-format.js';
import { readCaptureIndex, writeCaptureIndex, type CaptureIndex, type CaptureIndexEntry } from './capture-index.js';
import { readCaptureFile } from './capture-reader.js';
import { filesBeyondRetention, type CaptureRetention } from './capture-retention.js';
import { encodeGzipMember } from './gzip-members.js';

export interface CaptureWriterOptions {
  dir: string;
  /** Start a new file once the current one holds this many bytes on disk (checked per flush). */
  rotateBytes: number;
  /** Start a new file when a message arrives this long after the current file's first, ms. */
  rotateEvery_ms: number;
  retention?: CaptureRetention;
  /** Wall clock for retention ages, epoch ms. */
  now: () => number;
  /** `durable()`: the longest a message waits for its batch to be written, ms. Default 50. */
  syncDelay_ms?: number;
  /** `durable()`: a batch is written at once when this many messages wait. Default 1024. */
  syncBatch?: number;
  /** A failed write is tried again after this long, ms (the batch waits in memory). Default 1000. */
  retryDelay_ms?: number;
  /** Called when writes start failing (the reason) and again, with null, when one succeeds after that. */
  onWritable?: (failure: string | null) => void;
}

interface Deferred {
  promise: Promise<void>;
  resolve: () => void;
}

/**
 * Records every received message (refused ones too) for replay. `append` only buffers; `flush`
 * compresses the buffer as one gzip member, appends it and fsyncs, then rewrites the index.
 * `durable()` is the group commit the live job acknowledges behind: it resolves once everything
 * appended before it is on disk, writing one batch for all callers within `syncDelay_ms`.
 * A write the disk refuses is cut back off the file and the batch kept to be tried again, so a
 * full disk delays acknowledgements instead of losing records. Call `close` at shutdown. Never
 * appends to a file of an earlier run: after a crash that file's tail may be cut, and appending
 * behind it would hide everything written after. Files are created 0600.
 */
export class CaptureWriter {
  private buffer: RawMessage[] = [];
  private current: CaptureIndexEntry | null = null;
  private chain: Promise<void> = Promise.resolve();
  private appended = 0;
  private written = 0;
  /** Resolved once the messages appended so far are written; null when nobody waits. */
  private waiting: Deferred | null = null;
  private timer: ReturnType<typeof setTimeout> | null = null;
  private failure: string | null = null;
  private closed = false;

  private constructor(private readonly options: CaptureWriterOptions, private readonly index: CaptureIndex) {}

  /** Open a capture directory (created if needed); files left open by a crash are counted and closed. */
  static async open(options: CaptureWriterOptions): Promise<CaptureWriter> {
    await mkdir(options.dir, { recursive: true, mode: 0o700 });
    const index = await readCaptureIndex(options.dir);
    const names = sortCaptureFiles(await readdir(options.dir));
    const known = new Map(index.files.map((f) => [f.name, f]));
    const files: CaptureIndexEntry[] = [];
    for (const name of names) {
      const entry = known.get(name);
      files.push(entry?.closed ? entry : await recover(options.dir, name));
    }
    const writer = new CaptureWriter(options, { version: 1, files });
    await writer.applyRetention();
    await writeCaptureIndex(options.dir, writer.index);
    return writer;
  }

  /** Buffer one message. Mutates the buffer only; nothing is durable before `flush`. */
  append(raw: RawMessage): void {
    this.buffer.push(raw);
    this.appended++;
    if (this.waiting !== null && this.buffer.length >= (this.options.syncBatch ?? 1024)) this.arm(0);
  }

  /**
   * Resolves once every message appended before this call is written and synced (group commit:
   * one batch for every caller within `syncDelay_ms`). While writes fail it stays pending (the
   * batch is tried again every `retryDelay_ms`), so nothing is acknowledged that is not on disk.
   */
  durable(): Promise<void> {
    if (this.written >= this.appended) return Promise.resolve();
    if (this.waiting === null) {
      let resolve: () => void = () => {};
      const promise = new Promise<void>((r) => { resolve = r; });
      this.waiting = { promise, resolve };
      this.arm(this.buffer.length >= (this.options.syncBatch ?? 1024) ? 0 : this.options.syncDelay_ms ?? 50);
    }
    return this.waiting.promise;
  }

  /** Messages buffered and not yet flushed. */
  get pending(): number {
    return this.buffer.length;
  }

  /** Write the buffer (rotating as needed), fsync, update the index and apply retention. */
  flush(): Promise<void> {
    const next = this.chain.then(() => this.flushNow());
    this.chain = next.catch(() => {});
    return next;
  }

  /** Flush and close the current file (marked closed in the index). */
  async close(): Promise<void> {
    this.closed = true;
    if (this.timer !== null) clearTimeout(this.timer);
    await this.flush();
    await this.chain;
    if (this.current) this.current.closed = true;
    this.current = null;
    await writeCaptureIndex(this.options.dir, this.index);
  }

  /** Writes the batch due for the waiting callers; on failure keeps it and tries again later. */
  private arm(delay_ms: number): void {
    if (this.timer !== null || this.closed) return;
    this.timer = setTimeout(() => {
      this.timer = null;
      this.flush().catch(() => { if (this.waiting !== null) this.arm(this.options.retryDelay_ms ?? 1000); });
    }, delay_ms);
  }

  private async flushNow(): Promise<void> {
    const batch = this.buffer;
    const waiting = this.waiting;
    this.buffer = [];
    this.waiting = null;
    if (batch.length === 0) {
      waiting?.resolve();
      return;
    }
    let done = 0;
    try {
      let group: RawMessage[] = [];
      for (const raw of batch) {
        if (this.needsRotation(raw)) {
          await this.writeGroup(group);
          done += group.length;
          group = [];
          this.startFile(raw.arrivalMs);
        }
        group.push(raw);
      }
      await this.writeGroup(group);
      done += group.length;
    } catch (err) {
      // What was not written goes back in front, in order, with its waiters.
      this.written += done;
      this.buffer = [...batch.slice(done), ...this.buffer];
      // Callers that came during the write wait for the same next batch.
      const later = this.waiting as Deferred | null;
      if (later !== null) void later.promise.then(waiting?.resolve);
      else this.waiting = waiting;
      this.noteWritable(err instanceof Error ? err.message : String(err));
      throw err;
    }
    this.written += done;
    this.noteWritable(null);
    waiting?.resolve();
    await this.applyRetention();
    await writeCaptureIndex(this.options.dir, this.index);
  }

  private noteWritable(failure: string | null): void {
    const changed = (failure === null) !== (this.failure === null);
    this.failure = failure;
    if (changed) this.options.onWritable?.(failure);
  }

  private needsRotation(raw: RawMessage): boolean {
    const c = this.current;
    return c === null || c.bytes >= this.options.rotateBytes || raw.arrivalMs - c.firstArrivalMs >= this.options.rotateEvery_ms;
  }

  private startFile(startMs: number): void {
    if (this.current) this.current.closed = true;
    let n = 0;
    while (this.index.files.some((f) => f.name === captureFileName(startMs, n))) n++;
    this.current = { name: captureFileName(startMs, n), firstArrivalMs: startMs, lastArrivalMs: startMs, count: 0, bytes: 0, closed: false };
    this.index.files.push(this.current);
  }

  private async writeGroup(group: RawMessage[]): Promise<void> {
    const c = this.current;
    if (group.length === 0 || c === null) return;
    // Its figures in its header: a reader can then tell what a damaged member lost.
    const member = encodeGzipMember(group.map(encodeCaptureLine).join(''), {
      messages: group.length, firstArrivalMs: group[0].arrivalMs, lastArrivalMs: group[group.length - 1].arrivalMs,
    });
    const fh = await open(join(this.options.dir, c.name), 'a', 0o600);
    try {
      await fh.appendFile(member);
      await fh.datasync();
    } catch (err) {
      // A torn member in the middle of a file would hide every member behind it from a reader.
      await fh.truncate(c.bytes).catch(() => {});
      throw err;
    } finally {
      await fh.close();
    }
    c.bytes += member.byteLength;
    c.count += group.length;
    c.lastArrivalMs = group[group.length - 1].arrivalMs;
  }

  private async applyRetention(): Promise<void> {
    const doomed = filesBeyondRetention(this.index.files, this.options.retention ?? {}, this.options.now());
    for (const name of doomed) await unlink(join(this.options.dir, name)).catch(() => {});
    if (doomed.length > 0) this.index.files = this.index.files.filter((f) => !doomed.includes(f.name));
  }
}

/** Figures of a file the index does not vouch for (left open by a crash): read it through. */
async function recover(dir: string, name: string): Promise<CaptureIndexEntry> {
  const start = parseCaptureFileName(name)!.startMs;
  let count = 0;
  let last = start;
  for await (const raw of readCaptureFile(join(dir, name))) {
    count++;
    last = raw.arrivalMs;
  }
  const { size } = await stat(join(dir, name));
  return { name, firstArrivalMs: start, lastArrivalMs: last, count, bytes: size, closed: true };
}
