import { mkdtemp, readdir, readFile, rm, stat, truncate, appendFile, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { gunzipSync } from 'node:zlib';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { captureFileName, parseCaptureFileName } from '../../../src/adapters/capture/capture-format.js';
import { CAPTURE_INDEX_NAME, readCaptureIndex } from '../../../src/adapters/capture/capture-index.js';
import { readCapture, selectCaptureFiles } from '../../../src/adapters/capture/capture-reader.js';
import { filesBeyondRetention } from '../../../src/adapters/capture/capture-retention.js';
import { CaptureWriter, type CaptureWriterOptions } from '../../../src/adapters/capture/capture-writer.js';
import type { RawMessage } from '../../../src/model/raw-message.js';

const T0 = Date.UTC(2025, 2, 14, 9, 0, 0);
const TOPIC = 'strainward/brannock-mere/span1-north/scan';
const msg = (i: number, bytes?: number[]): RawMessage => ({
  topic: TOPIC,
  arrivalMs: T0 + i * 1000,
  payload: bytes ? new Uint8Array(bytes) : new TextEncoder().encode(`{"ts":${T0 + i * 1000},"values":{"ch01":${i}}}`),
});
async function all(it: AsyncIterable<RawMessage>): Promise<RawMessage[]> {
  const out: RawMessage[] = [];
  for await (const m of it) out.push(m);
  return out;
}
const captureFiles = async (dir: string) => (await readdir(dir)).filter((n) => n.endsWith('.ndjson.gz')).sort();

describe('raw capture', () => {
  let dir: string;
  const options = (over: Partial<CaptureWriterOptions> = {}): CaptureWriterOptions => ({
    dir,
    rotateBytes: 1_000_000,
    rotateEvery_ms: 3_600_000,
    now: () => T0,
    ...over,
  });
  beforeEach(async () => {
    dir = await mkdtemp(join(tmpdir(), 'sw-capture-'));
  });
  afterEach(async () => {
    await rm(dir, { recursive: true, force: true });
  });

  it('round-trips topic, arrival time and payload bytes, including non-UTF-8 and empty payloads', async () => {
    const w = await CaptureWriter.open(options());
    const messages = [msg(0), msg(1, [0xff, 0xfe, 0x00, 0xc3, 0x28]), msg(2, []), msg(3)];
    for (const m of messages.slice(0, 2)) w.append(m);
    await w.flush();
    for (const m of messages.slice(2)) w.append(m);
    await w.close();
    const back = await all(readCapture(dir));
    expect(back).toEqual(messages);
    expect(await captureFiles(dir)).toEqual(['capture-20250314T090000.000Z.ndjson.gz']);
    // two flushes = two gzip members; any gunzip reads them as one stream (RFC 1952 section 2.2)
    const plain = gunzipSync(await readFile(join(dir, 'capture-20250314T090000.000Z.ndjson.gz'))).toString('utf8');
    expect(plain.split('\n').length).toBe(5);
    expect((await readCaptureIndex(dir)).files).toMatchObject([
      { name: 'capture-20250314T090000.000Z.ndjson.gz', firstArrivalMs: T0, lastArrivalMs: T0 + 3000, count: 4, closed: true },
    ]);
  });

  it('names files in ISO 8601 basic format and parses them back', () => {
    expect(captureFileName(T0)).toBe('capture-20250314T090000.000Z.ndjson.gz');
    expect(captureFileName(T0, 2)).toBe('capture-20250314T090000.000Z-2.ndjson.gz');
    expect(parseCaptureFileName('capture-20250314T090000.000Z-2.ndjson.gz')).toEqual({ startMs: T0, n: 2 });
    expect(parseCaptureFileName('capture-index.json')).toBeNull();
  });

  it('rotates by time: a message 10 s after the file start opens a new file', async () => {
    const w = await CaptureWriter.open(options({ rotateEvery_ms: 10_000 }));
    for (let i = 0; i < 25; i++) w.append(msg(i));
    await w.close();
    expect(await captureFiles(dir)).toEqual([
      'capture-20250314T090000.000Z.ndjson.gz',
      'capture-20250314T090010.000Z.ndjson.gz',
      'capture-20250314T090020.000Z.ndjson.gz',
    ]);
    expect((await readCaptureIndex(dir)).files.map((f) => f.count)).toEqual([10, 10, 5]);
    expect((await all(readCapture(dir))).map((m) => m.arrivalMs)).toEqual(Array.from({ length: 25 }, (_, i) => T0 + i * 1000));
  });

  it('rotates by size once a flushed file reaches the limit', async () => {
    const w = await CaptureWriter.open(options({ rotateBytes: 1 }));
    for (let i = 0; i < 3; i++) {
      w.append(msg(i));
      await w.flush();
    }
    await w.close();
    expect((await captureFiles(dir)).length).toBe(3);
    expect((await all(readCapture(dir))).length).toBe(3);
  });

  it('selects only the files that can hold a window, and filters to it (from inclusive, to exclusive)', async () => {
    const w = await CaptureWriter.open(options({ rotateEvery_ms: 10_000 }));
    for (let i = 0; i < 40; i++) w.append(msg(i));
    await w.close();
    const window = { fromMs: T0 + 12_000, toMs: T0 + 25_000 };
    const index = await readCaptureIndex(dir);
    expect(selectCaptureFiles(await captureFiles(dir), index, window)).toEqual([
      'capture-20250314T090010.000Z.ndjson.gz',
      'capture-20250314T090020.000Z.ndjson.gz',
    ]);
    const got = (await all(readCapture(dir, window))).map((m) => (m.arrivalMs - T0) / 1000);
    expect(got).toEqual([12, 13, 14, 15, 16, 17, 18, 19, 20, 21, 22, 23, 24]);
  });

  it('an open file (no final index figures) is bounded by the next file start', () => {
    const names = [captureFileName(T0), captureFileName(T0 + 10_000)];
    const index = { version: 1 as const, files: [] };
    expect(selectCaptureFiles(names, index, { fromMs: T0 + 20_000 })).toEqual([names[1]]);
    expect(selectCaptureFiles(names, index, { fromMs: T0 + 5_000, toMs: T0 + 6_000 })).toEqual([names[0]]);
  });

  it('after a crash, a file torn mid-batch keeps every earlier batch and is recovered on open', async () => {
    const w = await CaptureWriter.open(options());
    for (let i = 0; i < 5; i++) w.append(msg(i));
    await w.flush(); // one complete gzip member
    for (let i = 5; i < 10; i++) w.append(msg(i));
    await w.flush(); // a second member, to be cut
    const [name] = await captureFiles(dir);
    const path = join(dir, name);
    const size = (await stat(path)).size;
    await truncate(path, size - 30); // the process died while writing the second member
    const index = await readCaptureIndex(dir);
    expect(index.files[0].closed).toBe(false);

    // the torn batch is dropped whole: only flushed-and-intact batches count (the first five)
    const survived = await all(readCapture(dir));
    expect(survived).toEqual([0, 1, 2, 3, 4].map((i) => msg(i)));

    // garbage after the tear (a torn write, zero-filled blocks) does not hide or alter what came before
    await appendFile(path, Buffer.from([0x1f, 0x8b, 0x08, 0x00, 0x42, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0]));
    expect(await all(readCapture(dir))).toEqual(survived);

    // the next run closes the cut file with its real figures and writes a new one
    const next = await CaptureWriter.open(options());
    expect((await readCaptureIndex(dir)).files[0]).toMatchObject({ name, count: survived.length, closed: true });
    next.append(msg(100));
    await next.close();
    expect((await all(readCapture(dir))).at(-1)).toEqual(msg(100));
    expect(JSON.parse(await readFile(join(dir, CAPTURE_INDEX_NAME), 'utf8')).files.length).toBe(2);
  });

  it('a batch whose bytes were altered fails its CRC: it is left out and reported as a gap of its size', async () => {
    const w = await CaptureWriter.open(options());
    for (let b = 0; b < 3; b++) {
      w.append(msg(b));
      await w.flush();
    }
    await w.close();
    const [name] = await captureFiles(dir);
    const bytes = await readFile(join(dir, name));
    bytes[bytes.length - 6] ^= 0xff; // inside the last member's trailer (ISIZE)
    await writeFile(join(dir, name), bytes);
    const gaps: unknown[] = [];
    expect((await all(readCapture(dir, {}, (g) => gaps.push(g)))).map((m) => m.arrivalMs)).toEqual([T0, T0 + 1000]);
    expect(gaps).toMatchObject([{ messages: 1, fromMs: T0 + 2000, toMs: T0 + 2000 }]); // the member's own figures
  });

  it('retention deletes files older than the age limit and the oldest beyond the byte limit', async () => {
    let nowMs = T0;
    const w = await CaptureWriter.open(options({ rotateEvery_ms: 3_600_000, retention: { maxAge_h: 2 }, now: () => nowMs }));
    for (let h = 0; h < 4; h++) w.append({ ...msg(0), arrivalMs: T0 + h * 3_600_000 });
    await w.flush();
    expect((await captureFiles(dir)).length).toBe(4);
    nowMs = T0 + 4 * 3_600_000; // files whose last message is older than 2 h: hours 0 and 1
    w.append({ ...msg(0), arrivalMs: nowMs });
    await w.close();
    expect(await captureFiles(dir)).toEqual([
      'capture-20250314T110000.000Z.ndjson.gz',
      'capture-20250314T120000.000Z.ndjson.gz',
      'capture-20250314T130000.000Z.ndjson.gz',
    ]);
  });

  it('byte retention keeps the newest files and never the one being written', () => {
    const e = (name: string, bytes: number, closed = true) => ({ name, firstArrivalMs: 0, lastArrivalMs: 0, count: 1, bytes, closed });
    const entries = [e('a', 100), e('b', 100), e('c', 100), e('d', 500, false)];
    expect(filesBeyondRetention(entries, { maxBytes: 650 }, 0)).toEqual(['a', 'b']);
    expect(filesBeyondRetention(entries, { maxBytes: 10 }, 0)).toEqual(['a', 'b', 'c']);
    expect(filesBeyondRetention(entries, {}, 0)).toEqual([]);
  });
});
