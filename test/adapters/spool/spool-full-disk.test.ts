/**
 * The spool on a real full disk: a 256 KiB tmpfs mounted for this file (the tests run as root, as
 * CI does; a failed mount fails the tests). Appends must be all or nothing.
 */
import { readdir, readFile, rm, stat, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { afterAll, afterEach, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { Spool, SpoolWriteError } from '../../../src/adapters/spool/spool.js';
import { drainAll } from './support.js';
import { mountTmpfs, type Tmpfs } from '../../support/tmpfs.js';

let disk: Tmpfs;
let mountPoint: string;
let dir: string;
const opened: Spool[] = [];

beforeAll(async () => {
  disk = await mountTmpfs('sw-spool-tmpfs-', '256k');
  mountPoint = disk.path;
});
afterAll(async () => { await disk.remove(); });
beforeEach(() => { dir = join(mountPoint, 'spool'); });
afterEach(async () => {
  for (const s of opened.splice(0)) await s.close();
  for (const name of await readdir(mountPoint)) await rm(join(mountPoint, name), { recursive: true, force: true });
});

/** One line-protocol line of 1,000 bytes (newline excluded), numbered so fused lines show. */
const line = (i: number): string => {
  const head = `m,k=v i=${i}i `;
  return head + 'x'.repeat(1000 - head.length - 14) + ` ${String(i).padStart(13, '0')}`;
};


/** Appends batches of three lines until the disk refuses one; returns the lines stored and the error. */
async function fillDisk(spool: Spool, from = 0): Promise<{ stored: string[]; error: unknown; next: number }> {
  const stored: string[] = [];
  for (let i = from; i < from + 3000; i += 3) {
    const batch = [line(i), line(i + 1), line(i + 2)];
    try {
      await spool.append(batch);
      stored.push(...batch);
    } catch (error) {
      return { stored, error, next: i + 3 };
    }
  }
  throw new Error('the 256 KiB disk never filled');
}

describe('Spool on a full disk (tmpfs)', () => {
  it('block: a refused append leaves no partial line; appends after space is back are whole, in order', async () => {
    // A filler file to delete later: "space is back".
    await writeFile(join(mountPoint, 'filler'), Buffer.alloc(64 * 1024));
    const failures: Array<string | null> = [];
    const spool = await Spool.open({ dir, limitBytes: 10 * 1024 ** 2, segmentBytes: 32 * 1024, onWritable: (f) => failures.push(f) });
    opened.push(spool);
    const { stored, error, next } = await fillDisk(spool);
    expect(error).toBeInstanceOf(SpoolWriteError);
    expect((error as SpoolWriteError).code).toBe('ENOSPC');
    expect(stored.length).toBeGreaterThan(100); // about 190 KiB of the disk's 256 KiB went to the spool
    const status = spool.status();
    expect(status.points).toBe(stored.length);
    expect(status.writeFailure).toMatch(/^spool cannot be written: 3 points \(3003 bytes\) not stored: ENOSPC/);
    expect(status.diskFreeBytes).toBeLessThan(3003); // the disk, not the spool's 10 MiB limit, is what is full
    expect(status.fillRatio).toBeLessThan(0.02);
    // Every segment ends on a whole line: the bytes on disk are exactly the stored lines.
    let onDisk = 0;
    for (const name of await readdir(dir)) {
      const text = await readFile(join(dir, name), 'utf8');
      expect(text === '' || text.endsWith('\n')).toBe(true);
      onDisk += Buffer.byteLength(text);
    }
    expect(onDisk).toBe(stored.length * 1001);
    // A second refusal does not call the hook again.
    await expect(spool.append([line(next)])).rejects.toBeInstanceOf(SpoolWriteError);
    expect(failures).toHaveLength(1);

    await rm(join(mountPoint, 'filler'));
    const after = [line(next + 1), line(next + 2)];
    await spool.append(after);
    expect(failures).toHaveLength(2);
    expect(failures[1]).toBeNull();
    expect(spool.status().writeFailure).toBeNull();
    expect(spool.status().diskFreeBytes).toBeGreaterThan(56 * 1024); // the filler's 64 KiB, less the two lines

    // A new process reads the same whole lines from the files (no fused or cut line).
    await spool.close();
    const reopened = await Spool.open({ dir, limitBytes: 10 * 1024 ** 2, segmentBytes: 32 * 1024 });
    opened.push(reopened);
    expect(await drainAll(reopened)).toEqual([...stored, ...after]);
  });

  it('drop_oldest: a full disk counts as the limit, the oldest segments go and the newest lines are kept', async () => {
    const spool = await Spool.open({ dir, limitBytes: 10 * 1024 ** 2, segmentBytes: 16 * 1024, policy: 'drop_oldest' });
    opened.push(spool);
    const appended: string[] = [];
    for (let i = 0; i < 600; i += 3) { // 600 KB into a 256 KiB disk
      const batch = [line(i), line(i + 1), line(i + 2)];
      await spool.append(batch);
      appended.push(...batch);
    }
    const { droppedPoints, points } = spool.status();
    expect(droppedPoints).toBeGreaterThan(300);
    expect(droppedPoints + points).toBe(600);
    expect(await drainAll(spool)).toEqual(appended.slice(droppedPoints));
  });

  it('creates its segment files readable by their owner only (0600)', async () => {
    const spool = await Spool.open({ dir, limitBytes: 1024 ** 2 });
    opened.push(spool);
    await spool.append([line(0)]);
    const [name] = await readdir(dir);
    expect((await stat(join(dir, name))).mode & 0o777).toBe(0o600);
    expect((await stat(dir)).mode & 0o777).toBe(0o700);
  });
});
