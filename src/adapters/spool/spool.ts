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
 */
import { mkdir, open, readdir, readFile, stat, unlink, type FileHandle } from 'node:fs/promises';
import { join } from 'node:path';
import { completeLines, nameOf, segmentIdOf } from './segment-files.js';
import { SpoolFullError } from './spool-full-error.js';
import type { SpoolFullPolicy, SpoolOptions, SpoolSegment, SpoolStatus } from './spool-types.js';

export { SpoolFullError } from './spool-full-error.js';

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
    await mkdir(opts.dir, { recursive: true });
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
    };
  }

  /**
   * Appends texts of complete lines (each one or more lines, newline-separated, `lineCount` lines
   * in all) behind everything held. Rejects with SpoolFullError at the limit under `block`.
   */
  append(texts: readonly string[], lineCount = texts.length): Promise<void> {
    return this.serial(async () => {
      if (texts.length === 0) return;
      const text = texts.join('\n') + '\n';
      const bytes = Buffer.byteLength(text);
      await this.makeRoom(bytes, lineCount);
      let last = this.segments[this.segments.length - 1];
      if (last === undefined || last.sealed || (last.bytes > 0 && last.bytes + bytes > this.segmentBytes)) {
        await this.seal();
        last = { id: this.nextId++, bytes: 0, lines: 0, sealed: false };
        this.active = await open(join(this.opts.dir, nameOf(last.id)), 'a');
        this.segments.push(last);
      }
      await this.active!.appendFile(text, 'utf8');
      if (this.opts.fsync ?? true) await this.active!.sync();
      last.bytes += bytes;
      last.lines += lineCount;
      this.checkHighWater();
    });
  }

  /** The oldest segment with its lines, sealing it first if appends still go to it; null when empty. */
  takeOldest(): Promise<SpoolSegment | null> {
    return this.serial(async () => {
      const oldest = this.segments[0];
      if (oldest === undefined) return null;
      if (!oldest.sealed) await this.seal();
      return { id: oldest.id, lines: completeLines(await readFile(join(this.opts.dir, nameOf(oldest.id)), 'utf8')) };
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
      while (this.totalBytes() + bytes > this.opts.limitBytes) {
        const oldest = this.segments[0];
        if (!oldest.sealed) await this.seal();
        await unlink(join(this.opts.dir, nameOf(oldest.id)));
        this.segments.shift();
        this.droppedPoints += oldest.lines;
      }
      return;
    }
    throw new SpoolFullError(lines, bytes, this.totalBytes(), this.opts.limitBytes);
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
