/**
 * Local append-only spool: line-protocol lines in numbered segment files
 * (`segment-000000000001.lp`, ...) in one directory, bounded in total bytes. Segments are read in
 * number order, so a new process finds and drains the old ones in the order they were written.
 * A segment is removed only when its reader says it is fully written (`remove`).
 *
 * At the byte limit the configured policy applies:
 * - `block` (default): `append` rejects with SpoolFullError and nothing is written, so the caller
 *   does not acknowledge and the broker's persistent session keeps the messages (lossless while the
 *   broker holds them);
 * - `drop_oldest`: whole oldest segments are deleted until the new lines fit, counted in
 *   `droppedPoints` (lossy, but the newest data is kept).
 * A torn last line (crash mid-append) has no newline and is ignored on read.
 *
 * An append is all or nothing: when the disk refuses it (full, I/O error) the segment is cut back
 * to its last whole line and the append rejects with SpoolWriteError, so a later append never
 * lands behind a partial line. Under `drop_oldest` a full disk counts as the limit (oldest
 * segments go first). Segment files are created 0600: they hold the structure's data.
 */
import { statfsSync } from 'node:fs';
import { mkdir, open, readdir, readFile, stat, unlink, type FileHandle } from 'node:fs/promises';
import { join } from 'node:path';
import { completeLines, nameOf, segmentIdOf } from './segment-files.js';
import { SpoolFullError } from './spool-full-error.js';
import { fsErrorCode, SpoolWriteError } from './spool-write-error.js';
import type { SpoolFullPolicy, SpoolOptions, SpoolSegment, SpoolStatus } from './spool-types.js';

export { SpoolFullError } from './spool-full-error.js';
export { SpoolWriteError } from './spool-write-error.js';

export type { SpoolFullPolicy, SpoolOptions, SpoolSegment, SpoolStatus } from './spool-types.js';

interface SegmentInfo {
  id: number;
  bytes: number;
  lines: number;
  sealed: boolean;
}

/** The spool. All operations are serialised in call order. */
export class Spool {
  private segments: SegmentInfo[] = [];
  private active: FileHandle | null = null;
  private chain: Promise<unknown> = Promise.resolve();
  private droppedPoints = 0;
  /** Never reused within a process, so `has(id)` cannot confuse a dropped segment with a new one. */
  private nextId = 1;
  private aboveHighWater = false;
  private writeFailure: string | null = null;
  private readonly segmentBytes: number;
  private readonly highWaterRatio: number;
  private readonly policy: SpoolFullPolicy;

  private constructor(private readonly opts: SpoolOptions) {
    if (!(opts.limitBytes > 0)) throw new RangeError('spool limitBytes must be > 0');
    this.segmentBytes = opts.segmentBytes ?? Math.min(1 << 20, Math.max(1, Math.floor(opts.limitBytes / 8)));
    this.highWaterRatio = opts.highWaterRatio ?? 0.8;
    this.policy = opts.policy ?? 'block';
  }

  /** Opens (creating) the directory and indexes the segments a previous process left, oldest first. */
  static async open(opts: SpoolOptions): Promise<Spool> {
    const spool = new Spool(opts);
    await mkdir(opts.dir, { recursive: true, mode: 0o700 });
    const ids = (await readdir(opts.dir)).map(segmentIdOf).filter((id) => id !== null).sort((a, b) => a - b);
    for (const id of ids) {
      const path = join(opts.dir, nameOf(id));
      const bytes = (await stat(path)).size;
      const lines = completeLines(await readFile(path, 'utf8')).length;
      spool.segments.push({ id, bytes, lines, sealed: true });
      spool.nextId = id + 1;
    }
    spool.aboveHighWater = spool.fillRatio() >= spool.highWaterRatio;
    return spool;
  }

  /** The spool's directory. */
  get dir(): string {
    return this.opts.dir;
  }

  /** True when no segment holds lines. */
  isEmpty(): boolean {
    return this.segments.every((s) => s.lines === 0);
  }

  /** Whether segment `id` still exists (false once removed or dropped). */
  has(id: number): boolean {
    return this.segments.some((s) => s.id === id);
  }

  status(): SpoolStatus {
    const bytes = this.totalBytes();
    return {
      bytes,
      limitBytes: this.opts.limitBytes,
      fillRatio: this.fillRatio(),
      segments: this.segments.length,
      points: this.segments.reduce((n, s) => n + s.lines, 0),
      aboveHighWater: this.aboveHighWater,
      droppedPoints: this.droppedPoints,
      diskFreeBytes: this.diskFreeBytes(),
      writeFailure: this.writeFailure,
    };
  }

  /**
   * Appends texts of complete lines (each one or more lines, newline-separated, `lineCount` lines
   * in all) behind everything held, all or nothing. Rejects with SpoolFullError at the limit under
   * `block`, and with SpoolWriteError when the disk refuses the write (nothing of it is kept).
   */
  append(texts: readonly string[], lineCount = texts.length): Promise<void> {
    return this.serial(async () => {
      if (texts.length === 0) return;
      const text = texts.join('\n') + '\n';
      const bytes = Buffer.byteLength(text);
      try {
        await this.makeRoom(bytes, lineCount);
        await this.writeWhole(text, bytes, lineCount);
      } catch (err) {
        this.noteWritable(err instanceof Error ? err.message : String(err));
        throw err;
      }
      // Back to writable only with room on the disk: at the edge of a full disk small appends
      // still fit now and then, and the alarm must not flap with them.
      if (this.writeFailure === null || this.diskHasRoom()) this.noteWritable(null);
      this.checkHighWater();
    });
  }

  /** The oldest segment with its lines, sealing it first if appends still go to it; null when empty. */
  takeOldest(): Promise<SpoolSegment | null> {
    return this.serial(async () => {
      const oldest = this.segments[0];
      if (oldest === undefined) return null;
      if (!oldest.sealed) await this.seal();
      // Only the bytes known whole: a tail a failed cut-back left behind is not read.
      const file = await readFile(join(this.opts.dir, nameOf(oldest.id)));
      return { id: oldest.id, lines: completeLines(file.subarray(0, oldest.bytes).toString('utf8')) };
    });
  }

  /** Deletes segment `id` (its lines are written elsewhere). No-op when it is already gone. */
  remove(id: number): Promise<void> {
    return this.serial(async () => {
      const index = this.segments.findIndex((s) => s.id === id);
      if (index < 0) return;
      if (!this.segments[index].sealed) await this.seal();
      await unlink(join(this.opts.dir, nameOf(id)));
      this.segments.splice(index, 1);
      // Drained segments free the disk: writable again even if no append comes (the database took over).
      if (this.writeFailure !== null && this.diskHasRoom()) this.noteWritable(null);
      this.checkHighWater();
    });
  }

  /** Closes the active segment file; the segments stay on disk for the next process. */
  close(): Promise<void> {
    return this.serial(() => this.seal());
  }

  private async makeRoom(bytes: number, lines: number): Promise<void> {
    if (this.totalBytes() + bytes <= this.opts.limitBytes) return;
    if (this.policy === 'drop_oldest' && bytes <= this.opts.limitBytes) {
      while (this.totalBytes() + bytes > this.opts.limitBytes) await this.dropOldest();
      return;
    }
    throw new SpoolFullError(lines, bytes, this.totalBytes(), this.opts.limitBytes);
  }

  /** Deletes the oldest segment and counts its points as dropped. */
  private async dropOldest(): Promise<void> {
    const oldest = this.segments[0];
    if (!oldest.sealed) await this.seal();
    await unlink(join(this.opts.dir, nameOf(oldest.id)));
    this.segments.shift();
    this.droppedPoints += oldest.lines;
  }

  /** Appends `text` to the active segment (a new one when due); on a refused write nothing of it stays. */
  private async writeWhole(text: string, bytes: number, lineCount: number): Promise<void> {
    for (;;) {
      try {
        await this.tryAppend(text, bytes, lineCount);
        return;
      } catch (err) {
        const code = fsErrorCode(err);
        // drop_oldest: a full disk is a limit too, and the newest data is the one kept.
        if (code === 'ENOSPC' && this.policy === 'drop_oldest' && this.totalBytes() > 0) {
          await this.dropOldest();
          continue;
        }
        throw new SpoolWriteError(lineCount, bytes, code, err);
      }
    }
  }

  private async tryAppend(text: string, bytes: number, lineCount: number): Promise<void> {
    let last = this.segments[this.segments.length - 1];
    if (last === undefined || last.sealed || (last.bytes > 0 && last.bytes + bytes > this.segmentBytes)) {
      await this.seal();
      const handle = await open(join(this.opts.dir, nameOf(this.nextId)), 'a', 0o600);
      last = { id: this.nextId++, bytes: 0, lines: 0, sealed: false };
      this.active = handle;
      this.segments.push(last);
    }
    const handle = this.active!;
    try {
      await handle.appendFile(text, 'utf8');
      if (this.opts.fsync ?? true) await handle.sync();
    } catch (err) {
      await this.cutBack(handle, last);
      throw err;
    }
    last.bytes += bytes;
    last.lines += lineCount;
  }

  /**
   * Cuts a failed append off the segment (a partial line would fuse with the next append). If
   * even that fails, the segment is sealed: later appends go to a new file, and reads stop at
   * its last whole line (`bytes`).
   */
  private async cutBack(handle: FileHandle, segment: SegmentInfo): Promise<void> {
    try {
      await handle.truncate(segment.bytes);
    } catch {
      await this.seal();
    }
  }

  private noteWritable(failure: string | null): void {
    const changed = (failure === null) !== (this.writeFailure === null);
    this.writeFailure = failure;
    if (changed) this.opts.onWritable?.(failure, this.status());
  }

  /** Free space of at least min(1 MiB, a tenth of the disk); true when it cannot be read. */
  private diskHasRoom(): boolean {
    try {
      const s = statfsSync(this.opts.dir);
      return s.bavail * s.bsize >= Math.min(1 << 20, (s.blocks * s.bsize) / 10);
    } catch {
      return true;
    }
  }

  private diskFreeBytes(): number | null {
    try {
      const s = statfsSync(this.opts.dir);
      return s.bavail * s.bsize;
    } catch {
      return null;
    }
  }

  private async seal(): Promise<void> {
    const last = this.segments[this.segments.length - 1];
    if (last !== undefined) last.sealed = true;
    if (this.active !== null) {
      const handle = this.active;
      this.active = null;
      await handle.close();
    }
  }

  private checkHighWater(): void {
    const above = this.fillRatio() >= this.highWaterRatio;
    const rising = above && !this.aboveHighWater;
    this.aboveHighWater = above;
    if (rising) this.opts.onHighWater?.(this.status());
  }

  private totalBytes(): number {
    return this.segments.reduce((n, s) => n + s.bytes, 0);
  }

  private fillRatio(): number {
    return this.totalBytes() / this.opts.limitBytes;
  }

  private serial<T>(task: () => Promise<T>): Promise<T> {
    const run = this.chain.then(task);
    this.chain = run.catch(() => undefined);
    return run;
  }
}
