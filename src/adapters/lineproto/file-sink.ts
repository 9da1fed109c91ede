/**
 * PointSink appending line protocol to files `<prefix>-<startIso>.lp` in a directory: the embedded
 * default when no database is configured. Files rotate by size and by age; both are checked when
 * a write arrives (no timer, so an idle sink never wakes up). Any tool that reads line protocol
 * (precision ms) can load the files.
 */
import { mkdir, open, readdir, type FileHandle } from 'node:fs/promises';
import { join } from 'node:path';
import { joinLineBlocks, lineBlockOf, type LineBlock, type Point, type PointSink } from '../../model/point.js';
import { encodeLines } from './encode.js';

export interface LineFileSinkOptions {
  dir: string;
  /** File name prefix, e.g. `brannock-mere`. */
  prefix: string;
  /** Start a new file before a write would take the current one past this size (bytes). */
  maxFileBytes: number;
  /** Start a new file when the current one is older than this (ms, from `now`). */
  maxFileAge_ms: number;
  /** fsync after every write: slower, but a write survives a power cut once it resolves. */
  fsync?: boolean;
  /** Clock for file names and age (epoch ms). */
  now?: () => number;
}

/** Counters of a file sink. */
export interface LineFileSinkStatus {
  currentFile: string | null;
  filesOpened: number;
  writtenPoints: number;
  skippedPoints: number;
}

/** A block waiting to be appended, and how to tell its writer. */
interface PendingBlock extends LineBlock { resolve: () => void; reject: (err: unknown) => void }

/**
 * File sink. Writes are appended in call order; each resolves once its lines are appended. Blocks
 * that arrive while an append is running are appended together by the next one (one system call
 * for many frames: one append per frame was a twentieth of a replay's time).
 */
export class LineFileSink implements PointSink {
  private handle: FileHandle | null = null;
  private fileName: string | null = null;
  private fileBytes = 0;
  private fileStartMs = 0;
  private filesOpened = 0;
  private writtenPoints = 0;
  private skippedPoints = 0;
  private pending: PendingBlock[] = [];
  private draining: Promise<void> | null = null;
  private closed = false;
  private readonly now: () => number;

  constructor(private readonly opts: LineFileSinkOptions) {
    if (!(opts.maxFileBytes > 0)) throw new RangeError('maxFileBytes must be > 0');
    if (!(opts.maxFileAge_ms > 0)) throw new RangeError('maxFileAge_ms must be > 0');
    this.now = opts.now ?? Date.now;
  }

  write(points: readonly Point[]): Promise<void> {
    if (this.closed) return Promise.reject(new Error('line file sink: write after close'));
    const lines = encodeLines(points);
    this.skippedPoints += points.length - lines.length;
    return this.writeLines(lineBlockOf(lines.join('\n'), lines.length));
  }

  writeLines(block: LineBlock): Promise<void> {
    if (this.closed) return Promise.reject(new Error('line file sink: write after close'));
    if (block.lines === 0) return this.draining ?? Promise.resolve();
    return new Promise<void>((resolve, reject) => {
      this.pending.push({ bytes: block.bytes, lines: block.lines, resolve, reject });
      this.draining ??= this.drain();
    });
  }

  async close(): Promise<void> {
    this.closed = true;
    await this.draining;
    await this.closeFile();
  }

  status(): LineFileSinkStatus {
    return { currentFile: this.fileName, filesOpened: this.filesOpened, writtenPoints: this.writtenPoints, skippedPoints: this.skippedPoints };
  }

  /** Appends everything pending, in order, as long as blocks keep coming. */
  private async drain(): Promise<void> {
    while (this.pending.length > 0) {
      const batch = this.pending;
      this.pending = [];
      for (let i = 0; i < batch.length;) i = await this.appendRun(batch, i);
    }
    this.draining = null;
  }

  /**
   * Appends batch[start] and the blocks after it that fit in the same file, in one call; a failed
   * append fails those blocks only (the next run is tried as usual). Returns the index after the run.
   */
  private async appendRun(batch: readonly PendingBlock[], start: number): Promise<number> {
    let end = start;
    try {
      const now = this.now();
      // Each block is written with its final newline.
      let bytes = batch[start].bytes.byteLength + 1;
      const tooBig = this.fileBytes > 0 && this.fileBytes + bytes > this.opts.maxFileBytes;
      const tooOld = now - this.fileStartMs >= this.opts.maxFileAge_ms;
      if (this.handle === null || tooBig || tooOld) await this.rotate(now);
      end = start + 1;
      while (end < batch.length) {
        const more = batch[end].bytes.byteLength + 1;
        if (this.fileBytes + bytes + more > this.opts.maxFileBytes) break;
        bytes += more;
        end++;
      }
      await this.handle!.appendFile(joinLineBlocks(batch.slice(start, end), true));
      if (this.opts.fsync) await this.handle!.sync();
      this.fileBytes += bytes;
      for (let k = start; k < end; k++) this.writtenPoints += batch[k].lines;
    } catch (err) {
      end = Math.max(end, start + 1);
      for (let k = start; k < end; k++) batch[k].reject(err);
      return end;
    }
    for (let k = start; k < end; k++) batch[k].resolve();
    return end;
  }

  private async rotate(now: number): Promise<void> {
    await this.closeFile();
    await mkdir(this.opts.dir, { recursive: true });
    const existing = new Set(await readdir(this.opts.dir));
    // Two rotations within one millisecond (or a restart) must not append to an older file: take
    // the next free millisecond, so that name order stays time order.
    let name = this.nameAt(now);
    for (let n = 1; existing.has(name); n++) name = this.nameAt(now + n);
    this.handle = await open(join(this.opts.dir, name), 'a', 0o600); // the structure's data: owner only
    this.fileName = name;
    this.fileBytes = 0;
    this.fileStartMs = now;
    this.filesOpened += 1;
  }

  private nameAt(ms: number): string {
    return `${this.opts.prefix}-${new Date(ms).toISOString()}.lp`;
  }

  private async closeFile(): Promise<void> {
    if (this.handle === null) return;
    await this.handle.close();
    this.handle = null;
  }
}
