import { mkdir, open, type FileHandle } from 'node:fs/promises';
import { dirname } from 'node:path';
import type { DeadLetter } from '../../model/rejection.js';
import type { DeadLetterSink } from './sink.js';

/**
 * Appends dead letters to an NDJSON file, one JSON record per line. Each write is one `appendFile`
 * of a whole line followed by `datasync`, so a crash leaves at most the last line incomplete.
 * Writes are serialised (one chain) to keep lines whole and in order. A new file is created 0600
 * (it holds the original payloads).
 */
export class NdjsonFileDeadLetterSink implements DeadLetterSink {
  private handle: Promise<FileHandle> | null = null;
  private chain: Promise<void> = Promise.resolve();

  constructor(readonly path: string) {}

  /** Append one record. Mutates the file. */
  write(deadLetter: DeadLetter): Promise<void> {
    const line = JSON.stringify(deadLetter) + '\n';
    const next = this.chain.then(async () => {
      const fh = await this.file();
      await fh.appendFile(line, 'utf8');
      await fh.datasync();
    });
    this.chain = next.catch(() => {}); // one failed write must not block the later ones
    return next;
  }

  /** Wait for pending writes and close the file. */
  async close(): Promise<void> {
    await this.chain;
    if (this.handle) await (await this.handle).close();
    this.handle = null;
  }

  private file(): Promise<FileHandle> {
    this.handle ??= mkdir(dirname(this.path), { recursive: true }).then(() => open(this.path, 'a', 0o600));
    return this.handle;
  }
}
