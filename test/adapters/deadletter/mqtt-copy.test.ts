import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { deadLetterCopy, MIN_COPY_BYTES } from '../../../src/adapters/deadletter/mqtt-copy.js';
import { toDeadLetter } from '../../../src/ingest/dead-letter-record.js';
import type { Rejection } from '../../../src/model/rejection.js';
import { raw } from '../../ingest/fixtures.js';

const bytesOf = (v: unknown) => Buffer.byteLength(JSON.stringify(v), 'utf8');
const unknownChannel = (i: number): Rejection => ({ code: 'unknown_channel', path: `values.ch${i}`, reason: `channel "ch${i}" is not configured for logger "span1-north"` });

describe('dead-letter copy for MQTT', () => {
  it('keeps a small refusal whole: every reason, the whole payload as text, its size and SHA-256', () => {
    const copy = deadLetterCopy(toDeadLetter(raw('abc'), [unknownChannel(99)]), 4096);
    // SHA-256 of "abc": FIPS 180-2, appendix B.1 (one-block message example).
    expect(copy.payloadSha256).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
    expect(copy).toMatchObject({ payloadBytes: 3, excerptText: 'abc', excerptBase64: null, excerptBytes: 3, rejectionCount: 1, topicTruncated: false });
    expect(copy.rejections).toEqual([unknownChannel(99)]);
  });

  it('cuts a large refusal to the limit: reasons while they fit, then the longest excerpt', () => {
    const payload = JSON.stringify({ ts: 1, values: Object.fromEntries(Array.from({ length: 5000 }, (_, i) => [`ch${i}`, i])) });
    const letter = toDeadLetter(raw(payload), Array.from({ length: 5000 }, (_, i) => unknownChannel(i)));
    expect(bytesOf(letter)).toBeGreaterThan(100_000);
    const copy = deadLetterCopy(letter, 8192);
    const size = bytesOf(copy);
    expect(size).toBeLessThanOrEqual(8192);
    expect(size).toBeGreaterThan(8192 - 16); // the excerpt fills what is left, to within one escaped character
    expect(copy.rejectionCount).toBe(5000);
    expect(copy.rejections.length).toBeGreaterThan(10);
    expect(copy.rejections).toEqual(letter.rejections.slice(0, copy.rejections.length));
    expect(payload.startsWith(copy.excerptText!)).toBe(true);
    expect(bytesOf(copy.excerptText)).toBeGreaterThanOrEqual(8192 / 4 - 16); // a quarter of the copy kept for the excerpt (JSON-escaped)
    expect(copy.excerptBytes).toBe(copy.excerptText!.length);
    expect(copy.payloadBytes).toBe(Buffer.byteLength(payload));
  });

  it('gives a binary payload as base64 of its first bytes', () => {
    const payload = new Uint8Array(20_000).map((_, i) => (i * 7919) % 256);
    const copy = deadLetterCopy(toDeadLetter(raw(payload), [{ code: 'not_json', path: '', reason: 'payload is not valid UTF-8' }]), 4096);
    expect(copy.excerptText).toBeNull();
    const excerpt = Buffer.from(copy.excerptBase64!, 'base64');
    expect(excerpt.length).toBe(copy.excerptBytes);
    expect(excerpt.equals(Buffer.from(payload.subarray(0, excerpt.length)))).toBe(true);
    expect(bytesOf(copy)).toBeLessThanOrEqual(4096);
  });

  it('refuses a limit too small for the fixed fields', () => {
    expect(() => deadLetterCopy(toDeadLetter(raw('x'), []), MIN_COPY_BYTES - 1)).toThrow(RangeError);
  });

  it('never exceeds the limit, whatever the payload, topic and reasons (property)', () => {
    fc.assert(fc.property(
      fc.oneof(fc.string({ unit: 'grapheme', maxLength: 3000 }), fc.string({ unit: 'binary', maxLength: 3000 })),
      fc.uint8Array({ maxLength: 3000 }),
      fc.boolean(),
      fc.string({ unit: 'binary', maxLength: 400 }),
      fc.array(fc.record({ path: fc.string({ maxLength: 300 }), reason: fc.string({ unit: 'binary', maxLength: 500 }) }), { maxLength: 40 }),
      fc.integer({ min: MIN_COPY_BYTES, max: 6000 }),
      (text, bytes, asText, topic, reasons, limit) => {
        const rejections = reasons.map((r): Rejection => ({ code: 'invalid_payload', ...r }));
        const letter = toDeadLetter(raw(asText ? text : bytes, topic), rejections);
        const copy = deadLetterCopy(letter, limit);
        expect(bytesOf(copy)).toBeLessThanOrEqual(limit);
        const original = Buffer.from(letter.payloadBase64, 'base64');
        const excerpt = copy.excerptText === null ? Buffer.from(copy.excerptBase64!, 'base64') : Buffer.from(copy.excerptText, 'utf8');
        expect(excerpt.equals(original.subarray(0, excerpt.length))).toBe(true);
        expect(copy.excerptBytes).toBe(excerpt.length);
        expect(copy.rejectionCount).toBe(rejections.length);
      },
    ), { numRuns: 200 });
  });
});
