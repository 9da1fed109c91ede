import { describe, expect, it } from 'vitest';
import { decodeMessage } from '../../src/ingest/decode.js';
import { compileTopicPattern } from '../../src/ingest/topic.js';
import type { Rejection } from '../../src/model/rejection.js';
import { directory, raw } from './fixtures.js';

const pattern = compileTopicPattern();

function rejectionsOf(payload: string | Uint8Array, topic?: string): Rejection[] {
  const r = decodeMessage(raw(payload, topic), directory, pattern);
  if (r.ok) throw new Error('expected a rejection');
  return r.deadLetter.rejections;
}

describe('decodeMessage: accepted', () => {
  it('decodes a scan with an ISO timestamp, seq and a null channel', () => {
    const r = decodeMessage(
      raw('{"ts":"2025-03-14T09:26:53.589+01:00","seq":1207,"values":{"ch01":412.7,"ch02":null}}'),
      directory,
      pattern,
    );
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.frame).toEqual({
      structureId: 'brannock-mere',
      loggerId: 'span1-north',
      // 09:26:53.589 at +01:00 is 08:26:53.589 UTC (ISO 8601 offset arithmetic)
      timeMs: Date.UTC(2025, 2, 14, 8, 26, 53, 589),
      seq: 1207,
      values: new Map([['ch01', 412.7], ['ch02', null]]),
      arrivalMs: 1_741_944_414_000,
    });
  });

  it('decodes a single-channel message with epoch milliseconds and no seq', () => {
    const r = decodeMessage(
      raw('{"ts":1741944413589,"channel":"t01","value":11.25}', 'strainward/brannock-mere/pier-temp/scan'),
      directory,
      pattern,
    );
    expect(r.ok && r.frame).toMatchObject({ loggerId: 'pier-temp', timeMs: 1741944413589, seq: null });
    expect(r.ok && [...r.frame.values]).toEqual([['t01', 11.25]]);
  });
});

describe('decodeMessage: synthetic (simulated) readings', () => {
  it('synthetic: true is accepted and carried on the frame; false or absent leaves the frame unmarked; anything else is refused', () => {
    const frameOf = (payload: string) => {
      const r = decodeMessage(raw(payload), directory, pattern);
      if (!r.ok) throw new Error(JSON.stringify(r.deadLetter.rejections));
      return r.frame;
    };
    expect(frameOf('{"ts":1741944413589,"values":{"ch01":1},"synthetic":true}').synthetic).toBe(true);
    expect('synthetic' in frameOf('{"ts":1741944413589,"values":{"ch01":1},"synthetic":false}')).toBe(false);
    expect('synthetic' in frameOf('{"ts":1741944413589,"values":{"ch01":1}}')).toBe(false);
    const single = decodeMessage(raw('{"ts":1741944413589,"channel":"t01","value":11.25,"synthetic":true}', 'strainward/brannock-mere/pier-temp/scan'), directory, pattern);
    expect(single.ok && single.frame.synthetic).toBe(true);
    expect(rejectionsOf('{"ts":1741944413589,"values":{"ch01":1},"synthetic":"yes"}')).toEqual([
      { code: 'invalid_payload', path: 'synthetic', reason: 'synthetic: expected true or false, received string' },
    ]);
  });
});

describe('decodeMessage: each rejection kind, exact path and reason', () => {
  it('not_json: empty, not UTF-8, bad JSON', () => {
    expect(rejectionsOf('')).toEqual([{ code: 'not_json', path: '', reason: 'payload is empty' }]);
    expect(rejectionsOf(new Uint8Array([0xff, 0xfe, 0x7b]))).toEqual([
      { code: 'not_json', path: '', reason: 'payload is not valid UTF-8 text' },
    ]);
    const [bad] = rejectionsOf('{"ts": 1,');
    expect(bad.code).toBe('not_json');
    expect(bad.reason.startsWith('payload is not valid JSON: ')).toBe(true);
  });

  it('invalid_payload: wrong type, missing field, unknown key, bad seq, empty values', () => {
    expect(rejectionsOf('{"ts":1741944413589,"values":{"ch07":"12.5"}}')).toEqual([
      { code: 'invalid_payload', path: 'values.ch07', reason: 'values.ch07: expected a number or null, received string' },
    ]);
    expect(rejectionsOf('{"values":{"ch01":1}}')).toEqual([
      { code: 'invalid_payload', path: 'ts', reason: 'ts: required: an ISO 8601 string or epoch milliseconds number' },
    ]);
    expect(rejectionsOf('{"ts":1741944413589,"seq":-3,"valeus":{},"values":{"ch01":1}}')).toEqual([
      { code: 'invalid_payload', path: 'seq', reason: 'seq: expected a non-negative integer, received -3' },
      { code: 'invalid_payload', path: 'valeus', reason: 'valeus: unknown key (the contract is strict)' },
    ]);
    expect(rejectionsOf('{"ts":1741944413589,"values":{}}')).toEqual([
      { code: 'invalid_payload', path: 'values', reason: 'values: expected at least one channel' },
    ]);
    expect(rejectionsOf('[1,2]')).toEqual([
      { code: 'invalid_payload', path: '', reason: 'payload: expected a JSON object, received array' },
    ]);
    expect(rejectionsOf('{"ts":1741944413589,"channel":"ch01"}')).toEqual([
      { code: 'invalid_payload', path: 'value', reason: 'value: required: a number or null' },
    ]);
  });

  it('unknown_topic, including another structure', () => {
    expect(rejectionsOf('{"ts":1741944413589,"values":{"ch01":1}}', 'strainward/other-bridge/span1-north/scan')).toEqual([
      {
        code: 'unknown_topic',
        path: '',
        reason: 'topic "strainward/other-bridge/span1-north/scan" names structure "other-bridge", this processor serves "brannock-mere"',
      },
    ]);
  });

  it('unknown_logger', () => {
    expect(rejectionsOf('{"ts":1741944413589,"values":{"ch01":1}}', 'strainward/brannock-mere/span9/scan')).toEqual([
      { code: 'unknown_logger', path: '', reason: 'logger "span9" is not configured (topic "strainward/brannock-mere/span9/scan")' },
    ]);
  });

  it('unknown_channel refuses the whole message even when other channels are fine', () => {
    expect(rejectionsOf('{"ts":1741944413589,"values":{"ch01":1,"ch99":2}}')).toEqual([
      { code: 'unknown_channel', path: 'values.ch99', reason: 'values.ch99: channel "ch99" is not configured on logger "span1-north"' },
    ]);
    expect(rejectionsOf('{"ts":1741944413589,"channel":"t02","value":3}', 'strainward/brannock-mere/pier-temp/scan')).toEqual([
      { code: 'unknown_channel', path: 'channel', reason: 'channel: channel "t02" is not configured on logger "pier-temp"' },
    ]);
  });

  it('non_finite_value: huge exponent and NaN-like strings', () => {
    expect(rejectionsOf('{"ts":1741944413589,"values":{"ch01":1e999,"ch02":-1e999,"ch07":"NaN"}}')).toEqual([
      { code: 'non_finite_value', path: 'values.ch01', reason: 'values.ch01: Infinity is not a finite number' },
      { code: 'non_finite_value', path: 'values.ch02', reason: 'values.ch02: -Infinity is not a finite number' },
      {
        code: 'non_finite_value',
        path: 'values.ch07',
        reason: 'values.ch07: "NaN" is not a finite number (send null for an unreadable channel)',
      },
    ]);
    expect(rejectionsOf('{"ts":1e999,"values":{"ch01":1}}')).toEqual([
      { code: 'non_finite_value', path: 'ts', reason: 'ts: Infinity is not a finite number' },
    ]);
  });

  it('invalid_timestamp: no zone, impossible date, epoch seconds', () => {
    expect(rejectionsOf('{"ts":"2025-03-14T09:26:53","values":{"ch01":1}}')).toEqual([
      {
        code: 'invalid_timestamp',
        path: 'ts',
        reason: 'ts: expected an ISO 8601 date-time with time zone, received "2025-03-14T09:26:53"',
      },
    ]);
    expect(rejectionsOf('{"ts":"2025-02-30T00:00:00Z","values":{"ch01":1}}')[0].code).toBe('invalid_timestamp');
    expect(rejectionsOf('{"ts":1741944413,"values":{"ch01":1}}')).toEqual([
      {
        code: 'invalid_timestamp',
        path: 'ts',
        reason: 'ts: 1741944413 is outside 2000-01-01..2100-01-01 (epoch seconds sent instead of milliseconds?)',
      },
    ]);
  });

  it('collects every problem of one message at once', () => {
    const got = rejectionsOf('{"ts":"yesterday","seq":1.5,"values":{"ch01":"x","ch99":1e999},"extra":true}');
    expect(got.map((r) => `${r.code} ${r.path}`)).toEqual([
      'invalid_payload seq',
      'invalid_payload values.ch01',
      'non_finite_value values.ch99',
      'invalid_payload extra',
      'invalid_timestamp ts',
      'unknown_channel values.ch99',
    ]);
  });

  it('keeps the original bytes in the dead letter, text only when printable', () => {
    const bytes = new Uint8Array([0x00, 0x9f, 0x41]);
    const r = decodeMessage(raw(bytes), directory, pattern);
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.deadLetter).toMatchObject({
      topic: 'strainward/brannock-mere/span1-north/scan',
      arrivalMs: 1_741_944_414_000,
      arrivalIso: '2025-03-14T09:26:54.000Z',
      payloadBase64: 'AJ9B',
      payloadText: null,
    });
    const text = decodeMessage(raw('{"ts":1}'), directory, pattern);
    expect(!text.ok && text.deadLetter.payloadText).toBe('{"ts":1}');
  });
});
