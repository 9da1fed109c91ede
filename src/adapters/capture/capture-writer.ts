import { mkdir, open, readdir, stat, unlink } from 'node:fs/promises';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import type { RawMessage } from '../../model/raw-message.js';
import { captureFileName, encodeCaptureLine, parseCaptureFileName, sortCaptureFiles } from './capture-format.js';
import { readCaptureIndex, writeCaptureIndex, type CaptureIndex, type CaptureIndexEntry } from './capture-index.js';
import { readCaptureFile } from './capture-reader.js';
import { filesBeyondRetention, type CaptureRetention } from './capture-retention.js';

export interface CaptureWriterOptions {
  dir: string;
  /** Start a new file once the current one holds this many bytes on disk (checked per flush). */
  rotateBytes: number;
  /** Start a new file when a message arrives this long after the current file's first, ms. */
  rotateEvery_ms: number;
  retention?: CaptureRetention;
  /** Wall clock for retention ages, epoch ms. */
  now: () => number;
}

/**
 * Records every received message (refused ones too) for replay. `append` only buffers; `flush`
 * compresses the buffer as one gzip member, appends it and fsyncs, then rewrites the index.
 * Call `flush` per batch (e.g. every second) and `close` at shutdown. Never appends to a file of
 * an earlier run: after a crash that file's tail may be cut, and appending behind it would hide
 * everything written after.
 */
export class CaptureWriter {
  private buffer: RawMessage[] = [];
  private current: CaptureIndexEntry | null = null;
  private chain: Promise<void> = Promise.resolve();

  private constructor(private readonly options: CaptureWriterOptions, private readonly index: CaptureIndex) {}

  /** Open a capture directory (created if needed); files left open by a crash are counted and closed. */
  static async open(options: CaptureWriterOptions): Promise<CaptureWriter> {
    await mkdir(options.dir, { recursive: true });
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
    await this.flush();
    await this.chain;
    if (this.current) this.current.closed = true;
    this.current = null;
    await writeCaptureIndex(this.options.dir, this.index);
  }

  private async flushNow(): Promise<void> {
    const batch = this.buffer;
    this.buffer = [];
    let group: RawMessage[] = [];
    for (const raw of batch) {
      if (this.needsRotation(raw)) {
        await this.writeGroup(group);
        group = [];
        this.startFile(raw.arrivalMs);
      }
      group.push(raw);
    }
    await this.writeGroup(group);
    await this.applyRetention();
    await writeCaptureIndex(this.options.dir, this.index);
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
    const member = gzipSync(group.map(encodeCaptureLine).join(''));
    const fh = await open(join(this.options.dir, c.name), 'a');
    try {
      await fh.appendFile(member);
      await fh.datasync();
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
