/** A damaged capture: one bad member costs that member only, and every gap is reported with its count. */
import { mkdtemp, readdir, readFile, rm, truncate, unlink, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { gunzipSync, gzipSync } from 'node:zlib';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { captureFileName, encodeCaptureLine } from '../../../src/adapters/capture/capture-format.js';
import { readCaptureIndex, writeCaptureIndex } from '../../../src/adapters/capture/capture-index.js';
import { readCapture, type CaptureGap } from '../../../src/adapters/capture/capture-reader.js';
import { CaptureWriter } from '../../../src/adapters/capture/capture-writer.js';
import { readGzipMembers } from '../../../src/adapters/capture/gzip-members.js';
import type { RawMessage } from '../../../src/model/raw-message.js';

const T0 = Date.UTC(2025, 2, 14, 9, 0, 0);
const msg = (i: number): RawMessage => ({
  topic: 'strainward/brannock-mere/lg-span1/scan', arrivalMs: T0 + i * 100,
  payload: new TextEncoder().encode(`{"ts":${T0 + i * 100},"seq":${i},"values":{"ch01":${(i * 0.37) % 1}}}`),
});
const seqs = (ms: RawMessage[]) => ms.map((m) => (m.arrivalMs - T0) / 100);
async function readAll(dir: string, window = {}): Promise<{ messages: RawMessage[]; gaps: CaptureGap[] }> {
  const messages: RawMessage[] = [];
  const gaps: CaptureGap[] = [];
  for await (const m of readCapture(dir, window, (g) => gaps.push(g))) messages.push(m);
  return { messages, gaps };
}
/** Byte offsets where each gzip member of an undamaged file starts. */
const memberStarts = (file: Buffer): number[] => [...readGzipMembers(file)].map((m) => m.fromByte);

describe('capture with damaged members', () => {
  let dir: string;
  let file: string;
  beforeEach(async () => {
    dir = await mkdtemp(join(tmpdir(), 'sw-capture-damage-'));
    // Ten batches of 100 messages: ten gzip members in one file.
    const w = await CaptureWriter.open({ dir, rotateBytes: 1e9, rotateEvery_ms: 3_600_000, now: () => T0 });
    for (let b = 0; b < 10; b++) {
      for (let i = 0; i < 100; i++) w.append(msg(b * 100 + i));
      await w.flush();
    }
    await w.close();
    [file] = (await readdir(dir)).filter((n) => n.endsWith('.gz')).map((n) => join(dir, n));
  });
  afterEach(async () => { await rm(dir, { recursive: true, force: true }); });

  it('writes members any gunzip reads, each carrying its figures', async () => {
    const bytes = await readFile(file);
    expect(gunzipSync(bytes).toString('utf8').split('\n')).toHaveLength(1001);
    const members = [...readGzipMembers(bytes)];
    expect(members).toHaveLength(10);
    expect(members[3]).toMatchObject({ kind: 'intact', figures: { messages: 100, firstArrivalMs: T0 + 30_000, lastArrivalMs: T0 + 39_900 } });
  });

  it('one corrupted byte in the fourth member: the other nine are read, one gap of 100 messages with its time range', async () => {
    const bytes = await readFile(file);
    const starts = memberStarts(bytes);
    bytes[starts[3] + 200] ^= 0x01; // inside the fourth member's compressed data
    await writeFile(file, bytes);
    const { messages, gaps } = await readAll(dir);
    expect(seqs(messages)).toEqual([...Array(300).keys(), ...Array.from({ length: 600 }, (_, k) => 400 + k)]);
    expect(gaps).toEqual([{
      file: file.split('/').at(-1), fromMs: T0 + 30_000, toMs: T0 + 39_900, messages: 100,
      reason: `damaged gzip member at bytes ${starts[3]}..${starts[4]}`,
    }]);
  });

  it('a damaged header too: the count comes from the index, the times from the messages around it', async () => {
    const bytes = await readFile(file);
    const starts = memberStarts(bytes);
    bytes[starts[5] + 20] ^= 0x40; // inside the header's figures (the header CRC no longer matches)
    bytes[starts[5] + 100] ^= 0x40;
    await writeFile(file, bytes);
    const { messages, gaps } = await readAll(dir);
    expect(messages).toHaveLength(900);
    expect(gaps).toMatchObject([{ messages: 100, fromMs: T0 + 49_900, toMs: T0 + 60_000 }]);
  });

  it('files of the former format (no figures) with a damaged member: the count from the index', async () => {
    // Rewrite the file as plain gzip members, as writers before member figures did.
    const name = captureFileName(T0, 7);
    const old = Buffer.concat(Array.from({ length: 4 }, (_, b) => gzipSync(Array.from({ length: 50 }, (_, i) => encodeCaptureLine(msg(2000 + b * 50 + i))).join(''))));
    const second = memberStarts(old)[1];
    expect([...readGzipMembers(old)].map((m) => m.figures)).toEqual([null, null, null, null]);
    old[second + 60] ^= 0x08; // inside the second member
    await writeFile(join(dir, name), old);
    const index = await readCaptureIndex(dir);
    index.files.push({ name, firstArrivalMs: msg(2000).arrivalMs, lastArrivalMs: msg(2199).arrivalMs, count: 200, bytes: old.length, closed: true });
    await writeCaptureIndex(dir, index);
    const { messages, gaps } = await readAll(dir);
    expect(messages).toHaveLength(1150);
    expect(gaps).toMatchObject([{ file: name, messages: 50, fromMs: msg(2049).arrivalMs, toMs: msg(2100).arrivalMs }]);
  });

  it('a closed file cut short, and a listed file gone: gaps with the index counts', async () => {
    const bytes = await readFile(file);
    const starts = memberStarts(bytes);
    await truncate(file, starts[8]); // the last two members gone
    const { messages, gaps } = await readAll(dir);
    expect(messages).toHaveLength(800);
    expect(gaps).toMatchObject([{ messages: 200, fromMs: T0 + 79_900, toMs: T0 + 99_900, reason: 'the index lists 1000 messages, 800 read' }]);
    await unlink(file);
    expect((await readAll(dir)).gaps).toMatchObject([{ messages: 1000, fromMs: T0, toMs: T0 + 99_900, reason: 'file listed in the index is missing' }]);
  });

  it('a crash\'s torn last write in a file the index does not close is no gap; a window reports only its own gaps', async () => {
    const bytes = await readFile(file);
    const starts = memberStarts(bytes);
    const index = await readCaptureIndex(dir);
    index.files[0].closed = false; // as a crash leaves it
    await writeCaptureIndex(dir, index);
    await truncate(file, starts[9] + 40);
    expect(await readAll(dir)).toMatchObject({ gaps: [] });
    expect((await readAll(dir)).messages).toHaveLength(900);

    const damaged = await readFile(file);
    damaged[starts[2] + 150] ^= 0x10;
    await writeFile(file, damaged);
    expect((await readAll(dir, { fromMs: T0 + 50_000 })).gaps).toEqual([]);
    expect((await readAll(dir, { toMs: T0 + 25_000 })).gaps).toMatchObject([{ messages: 100, fromMs: T0 + 20_000 }]);
  });
});
