import { mkdir, open, type FileHandle } from 'node:fs/promises';
import { dirname } from 'node:path';
import type { DeadLetter } from '../../model/rejection.js';
import type { DeadLetterSink } from './sink.js';

interface PendingLine { line: string; resolve: () => void; reject: (err: unknown) => void }

/**
 * Appends dead letters to an NDJSON file, one JSON record per line. Lines go in whole, in call
 * order, each write resolving once its line is appended and `datasync`ed, so a crash leaves at most
 * the last line incomplete. Records that arrive while an append is running are appended (and
 * synced) together by the next one: one sync per record limited a replay through a logger's clock
 * fault to a few hundred refused messages a second, and let them pile up. A new file is created
 * 0600 (it holds the original payloads).
 */
export class NdjsonFileDeadLetterSink implements DeadLetterSink {
  private handle: Promise<FileHandle> | null = null;
  private pending: PendingLine[] = [];
  private draining: Promise<void> | null = null;

  constructor(readonly path: string) {}

  /** Append one record. Mutates the file. */
  write(deadLetter: DeadLetter): Promise<void> {
    const line = JSON.stringify(deadLetter) + '\n';
    return new Promise<void>((resolve, reject) => {
      this.pending.push({ line, resolve, reject });
      this.draining ??= this.drain();
    });
  }

  /** Wait for pending writes and close the file. */
  async close(): Promise<void> {
    await this.draining;
    if (this.handle) await (await this.handle).close();
    this.handle = null;
  }

  private async drain(): Promise<void> {
    while (this.pending.length > 0) {
      const batch = this.pending;
      this.pending = [];
      try {
        const fh = await this.file();
        let text = '';
        for (const p of batch) text += p.line;
        await fh.appendFile(text, 'utf8');
        await fh.datasync();
      } catch (err) {
        // One failed append fails its records only; the next ones are tried as usual.
        for (const p of batch) p.reject(err);
        continue;
      }
      for (const p of batch) p.resolve();
    }
    this.draining = null;
  }

  private file(): Promise<FileHandle> {
    this.handle ??= mkdir(dirname(this.path), { recursive: true }).then(() => open(this.path, 'a', 0o600));
    return this.handle;
  }
}
