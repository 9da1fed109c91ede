/**
 * PointSink appending line protocol to files `<prefix>-<startIso>.lp` in a directory: the embedded
 * default when no database is configured. Files rotate by size and by age; both are checked when
 * a write arrives (no timer, so an idle sink never wakes up). Any tool that reads line protocol
 * (precision ms) can load the files.
 */
import { mkdir, open, readdir, type FileHandle } from 'node:fs/promises';
import { join } from 'node:path';
import type { LineBlock, Point, PointSink } from '../../model/point.js';
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

/** File sink. Writes are serialised in call order; each resolves once its lines are appended. */
export class LineFileSink implements PointSink {
  private handle: FileHandle | null = null;
  private fileName: string | null = null;
  private fileBytes = 0;
  private fileStartMs = 0;
  private filesOpened = 0;
  private writtenPoints = 0;
  private skippedPoints = 0;
  private chain: Promise<void> = Promise.resolve();
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
    return this.writeLines({ text: lines.join('\n'), lines: lines.length });
  }

  writeLines(block: LineBlock): Promise<void> {
    if (this.closed) return Promise.reject(new Error('line file sink: write after close'));
    if (block.lines === 0) return this.chain;
    const text = block.text + '\n';
    const run = this.chain.then(() => this.append(text, block.lines));
    this.chain = run.catch(() => undefined); // one failed write must not poison the next
    return run;
  }

  async close(): Promise<void> {
    this.closed = true;
    await this.chain;
    await this.closeFile();
  }

  status(): LineFileSinkStatus {
    return { currentFile: this.fileName, filesOpened: this.filesOpened, writtenPoints: this.writtenPoints, skippedPoints: this.skippedPoints };
  }

  private async append(text: string, count: number): Promise<void> {
    const bytes = Buffer.byteLength(text);
    const now = this.now();
    const tooBig = this.fileBytes > 0 && this.fileBytes + bytes > this.opts.maxFileBytes;
    const tooOld = now - this.fileStartMs >= this.opts.maxFileAge_ms;
    if (this.handle === null || tooBig || tooOld) await this.rotate(now);
    await this.handle!.appendFile(text, 'utf8');
    if (this.opts.fsync) await this.handle!.sync();
    this.fileBytes += bytes;
    this.writtenPoints += count;
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
