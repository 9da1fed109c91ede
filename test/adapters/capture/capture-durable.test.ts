/**
 * The capture's group commit (`durable()`), and the capture on a real full disk: a 256 KiB tmpfs
 * mounted here (the tests run as root, as CI does; a failed mount fails them).
 */
import { randomBytes } from 'node:crypto';
import { mkdtemp, readdir, rm, stat, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readCapture } from '../../../src/adapters/capture/capture-reader.js';
import { CaptureWriter } from '../../../src/adapters/capture/capture-writer.js';
import type { RawMessage } from '../../../src/model/raw-message.js';
import { mountTmpfs, type Tmpfs } from '../../support/tmpfs.js';

const T0 = Date.UTC(2025, 2, 14, 9, 0, 0);
/** Payloads of random bytes (base64 in the capture), so gzip cannot shrink them and the disk fills. */
const PAYLOADS = Array.from({ length: 1000 }, () => new Uint8Array(randomBytes(100)));
const msg = (i: number): RawMessage => ({ topic: 'strainward/brannock-mere/lg-span1/scan', arrivalMs: T0 + i, payload: PAYLOADS[i] });
async function all(it: AsyncIterable<RawMessage>): Promise<RawMessage[]> {
  const out: RawMessage[] = [];
  for await (const m of it) out.push(m);
  return out;
}

let disk: Tmpfs;
let mountPoint: string;
beforeAll(async () => {
  disk = await mountTmpfs('sw-capture-tmpfs-', '256k');
  mountPoint = disk.path;
});
afterAll(async () => { await disk.remove(); });

describe('capture durable() (group commit)', () => {
  it('writes one gzip member for every caller within the delay, and resolves them once it is synced', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'sw-capture-durable-'));
    const w = await CaptureWriter.open({ dir, rotateBytes: 1e9, rotateEvery_ms: 3_600_000, now: () => T0, syncDelay_ms: 30 });
    const order: string[] = [];
    const waits: Array<Promise<void>> = [];
    for (let i = 0; i < 100; i++) {
      w.append(msg(i));
      waits.push(w.durable().then(() => { order.push(`durable ${i}`); }));
    }
    expect(w.pending).toBe(100);
    await Promise.all(waits);
    expect(w.pending).toBe(0);
    expect(order).toHaveLength(100);
    const [name] = (await readdir(dir)).filter((n) => n.endsWith('.gz'));
    expect((await stat(join(dir, name))).mode & 0o777).toBe(0o600);
    expect((await stat(join(dir, 'capture-index.json'))).mode & 0o777).toBe(0o600);
    expect(await all(readCapture(dir))).toEqual(Array.from({ length: 100 }, (_, i) => msg(i)));
    await expect(w.durable()).resolves.toBeUndefined(); // nothing waiting: at once
    await w.close();
    await rm(dir, { recursive: true, force: true });
  });

  it('a full disk delays durable() instead of losing records; once space is back everything is written once, in order', async () => {
    const dir = join(mountPoint, 'capture');
    const filler = join(mountPoint, 'filler');
    const failures: Array<string | null> = [];
    const w = await CaptureWriter.open({
      dir, rotateBytes: 1e9, rotateEvery_ms: 3_600_000, now: () => T0, syncDelay_ms: 5, retryDelay_ms: 500,
      onWritable: (f) => failures.push(f),
    });
    // Leave about 24 KiB free, then offer 1,000 records of ~110 bytes of capture each once compressed.
    await writeFile(filler, Buffer.alloc(232 * 1024));
    let i = 0;
    for (; i < 1000; i++) w.append(msg(i));
    let settled = false;
    const durable = w.durable().then(() => { settled = true; });
    while (failures.length === 0) await new Promise((r) => setTimeout(r, 5));
    // Looked at before the next try (500 ms later): the failed write was cut off the file.
    expect(settled).toBe(false); // not on disk, so not durable
    expect(failures).toHaveLength(1);
    expect(failures[0]).toMatch(/ENOSPC/);
    // The file holds no torn member: its bytes are exactly the index's (nothing of the failed batch).
    const names = (await readdir(dir)).filter((n) => n.endsWith('.gz'));
    for (const n of names) expect((await stat(join(dir, n))).size).toBe(0);

    await rm(filler);
    await durable;
    expect(failures).toEqual([failures[0], null]);
    await w.close();
    expect(await all(readCapture(dir))).toEqual(Array.from({ length: 1000 }, (_, k) => msg(k)));
  });
});
