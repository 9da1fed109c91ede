import { appendFile, mkdtemp, readdir, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { Spool, SpoolFullError, type SpoolStatus } from '../../../src/adapters/spool/spool.js';
import { drainAll } from './support.js';

let dir: string;
/** Spools a test opened; closed after it, so no file handle is left to the garbage collector. */
const opened: Spool[] = [];
beforeEach(async () => {
  dir = await mkdtemp(join(tmpdir(), 'sw-spool-test-'));
});
afterEach(async () => {
  for (const s of opened.splice(0)) await s.close();
  await rm(dir, { recursive: true, force: true });
});

async function openSpool(options: Parameters<typeof Spool.open>[0]): Promise<Spool> {
  const spool = await Spool.open(options);
  opened.push(spool);
  return spool;
}

/** `m v=000042`: 10 bytes, 11 with its newline, so byte counts below are exact. */
const line = (i: number): string => `m v=${String(i).padStart(6, '0')}`;


describe('Spool', () => {
  it('returns appended lines in order across segments and reports bytes and points', async () => {
    const spool = await openSpool({ dir, limitBytes: 10_000, segmentBytes: 50 });
    for (let i = 0; i < 20; i++) await spool.append([line(i)]);
    const status = spool.status();
    expect(status.bytes).toBe(20 * 11);
    expect(status.points).toBe(20);
    expect(status.segments).toBe(5); // 50-byte segments hold 4 lines of 11 bytes
    expect(await drainAll(spool)).toEqual(Array.from({ length: 20 }, (_, i) => line(i)));
    expect(spool.isEmpty()).toBe(true);
    expect(await readdir(dir)).toEqual([]);
  });

  it('survives a restart: a new instance finds old segments and drains them first', async () => {
    const first = await openSpool({ dir, limitBytes: 10_000, segmentBytes: 30 });
    await first.append([line(0), line(1)]);
    await first.append([line(2)]);
    await first.close();
    const second = await openSpool({ dir, limitBytes: 10_000, segmentBytes: 30 });
    expect(second.status().points).toBe(3);
    await second.append([line(3)]);
    expect(await drainAll(second)).toEqual([line(0), line(1), line(2), line(3)]);
  });

  it('ignores a torn last line left by a crash mid-append', async () => {
    const first = await openSpool({ dir, limitBytes: 10_000 });
    await first.append([line(0)]);
    await first.close();
    const [name] = await readdir(dir);
    await appendFile(join(dir, name), 'm v=0000'); // no newline: the process died here
    const second = await openSpool({ dir, limitBytes: 10_000 });
    expect(second.status().points).toBe(1);
    expect(await drainAll(second)).toEqual([line(0)]);
  });

  it('block policy: rejects with SpoolFullError at the limit and stores nothing of that batch', async () => {
    const spool = await openSpool({ dir, limitBytes: 33 });
    await spool.append([line(0), line(1), line(2)]); // 33 bytes: exactly full
    await expect(spool.append([line(3)])).rejects.toBeInstanceOf(SpoolFullError);
    expect(spool.status()).toMatchObject({ bytes: 33, points: 3, fillRatio: 1, droppedPoints: 0 });
  });

  it('drop_oldest policy: deletes the oldest segments, counts their points, keeps the newest', async () => {
    const spool = await openSpool({ dir, limitBytes: 44, segmentBytes: 22, policy: 'drop_oldest' });
    for (let i = 0; i < 6; i++) await spool.append([line(i)]);
    expect(spool.status()).toMatchObject({ droppedPoints: 2, points: 4, bytes: 44 });
    expect(await drainAll(spool)).toEqual([line(2), line(3), line(4), line(5)]);
  });

  it('drop_oldest still refuses one batch larger than the whole spool', async () => {
    const spool = await openSpool({ dir, limitBytes: 20, policy: 'drop_oldest' });
    await expect(spool.append([line(0), line(1)])).rejects.toThrow(/spool full: 2 points \(22 bytes\)/);
  });

  it('calls the high-water hook once when the fill ratio rises across 0.8, again after falling back', async () => {
    const seen: SpoolStatus[] = [];
    const spool = await openSpool({ dir, limitBytes: 110, segmentBytes: 22, onHighWater: (s) => seen.push(s) });
    for (let i = 0; i < 7; i++) await spool.append([line(i)]); // 77 bytes: 0.7
    expect(seen).toHaveLength(0);
    await spool.append([line(7)]); // 88 bytes: 0.8
    await spool.append([line(8)]);
    expect(seen.map((s) => s.fillRatio)).toEqual([0.8]);
    expect(spool.status().aboveHighWater).toBe(true);
    const oldest = await spool.takeOldest();
    await spool.remove(oldest!.id); // 66 bytes: 0.6
    expect(spool.status().aboveHighWater).toBe(false);
    await spool.append([line(9), line(10)]);
    expect(seen).toHaveLength(2);
  });

  it('seals the segment being appended to when a reader takes it, so later lines go to a new one', async () => {
    const spool = await openSpool({ dir, limitBytes: 10_000 });
    await spool.append([line(0)]);
    const taken = await spool.takeOldest();
    await spool.append([line(1)]);
    expect(taken!.lines).toEqual([line(0)]);
    await spool.remove(taken!.id);
    expect(await drainAll(spool)).toEqual([line(1)]);
  });
});
