import { mkdtemp, readdir, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { LineFileSink } from '../../../src/adapters/lineproto/file-sink.js';
import type { Point } from '../../../src/model/point.js';

const T0 = Date.UTC(2026, 2, 14, 6, 0, 0);
let dir: string;
beforeEach(async () => {
  dir = await mkdtemp(join(tmpdir(), 'sw-filesink-test-'));
});
afterEach(async () => {
  await rm(dir, { recursive: true, force: true });
});

/** `m v=<i> <t>` lines; with i < 10 and 13-digit t each is 19 bytes plus newline = 20. */
const point = (i: number, t = T0): Point => ({ measurement: 'm', tags: {}, fields: { v: i }, timeMs: t });

describe('LineFileSink', () => {
  it('names files <prefix>-<startIso>.lp and rotates before a write would pass maxFileBytes', async () => {
    let now = T0;
    const sink = new LineFileSink({ dir, prefix: 'brannock-mere', maxFileBytes: 40, maxFileAge_ms: 3_600_000, now: () => now });
    await sink.write([point(1), point(2)]); // 40 bytes: fills the first file exactly
    now += 1;
    await sink.write([point(3)]);
    await sink.close();
    const files = (await readdir(dir)).sort();
    expect(files).toEqual(['brannock-mere-2026-03-14T06:00:00.000Z.lp', 'brannock-mere-2026-03-14T06:00:00.001Z.lp']);
    expect(await readFile(join(dir, files[0]), 'utf8')).toBe(`m v=1 ${T0}\nm v=2 ${T0}\n`);
    expect(await readFile(join(dir, files[1]), 'utf8')).toBe(`m v=3 ${T0}\n`);
  });

  it('rotates by age, and takes the next free millisecond when two files start in the same one', async () => {
    let now = T0;
    const sink = new LineFileSink({ dir, prefix: 'p', maxFileBytes: 20, maxFileAge_ms: 60_000, now: () => now });
    await sink.write([point(1)]);
    await sink.write([point(2)]); // same millisecond, size rotation: next free name
    now += 60_000;
    await sink.write([point(3)]); // age rotation
    await sink.close();
    expect((await readdir(dir)).sort()).toEqual(['p-2026-03-14T06:00:00.000Z.lp', 'p-2026-03-14T06:00:00.001Z.lp', 'p-2026-03-14T06:01:00.000Z.lp']);
    expect(sink.status()).toMatchObject({ filesOpened: 3, writtenPoints: 3, skippedPoints: 0 });
  });

  it('keeps call order for writes not awaited one by one, with fsync on', async () => {
    const sink = new LineFileSink({ dir, prefix: 'p', maxFileBytes: 1e6, maxFileAge_ms: 1e6, fsync: true, now: () => T0 });
    await Promise.all(Array.from({ length: 50 }, (_, i) => sink.write([point(i, T0 + i)])));
    await sink.close();
    const [file] = await readdir(dir);
    const times = (await readFile(join(dir, file), 'utf8')).trim().split('\n').map((l) => Number(l.split(' ')[2]));
    expect(times).toEqual(Array.from({ length: 50 }, (_, i) => T0 + i));
  });

  it('writes nothing for points without a finite field and counts them', async () => {
    const sink = new LineFileSink({ dir, prefix: 'p', maxFileBytes: 1e6, maxFileAge_ms: 1e6, now: () => T0 });
    await sink.write([{ ...point(0), fields: { v: NaN } }]);
    await sink.close();
    expect(await readdir(dir)).toEqual([]);
    expect(sink.status().skippedPoints).toBe(1);
  });
});
