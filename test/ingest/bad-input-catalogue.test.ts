/**
 * The bad-input catalogue: every kind of broken or hostile message a logger, a misconfigured
 * device or an attacker can put on a structure's topics. Each is refused with a dead-letter reason
 * naming the field, the stream goes on, and the good messages around it are all processed. Then
 * property-based fuzzing (fast-check) of the decoder alone and of the whole pipeline.
 */
import fc from 'fast-check';
import { from, lastValueFrom, toArray } from 'rxjs';
import { describe, expect, it } from 'vitest';
import { decodeMessage, MAX_PAYLOAD_BYTES } from '../../src/ingest/decode.js';
import { compileTopicPattern } from '../../src/ingest/topic.js';
import { jsonShapeProblem, keyTokensAndDepth, parsedKeyCount } from '../../src/ingest/json-guard.js';
import type { DeadLetter } from '../../src/model/rejection.js';
import { loadStructureFile } from '../../src/config/load.js';
import { pipeline, type PipelineInput, type PipelineMessage } from '../../src/pipeline/pipeline.js';
import { directory, raw } from './fixtures.js';

const pattern = compileTopicPattern();
const TS = 1_741_944_413_589;
const enc = (s: string) => new TextEncoder().encode(s);

function refusal(payload: string | Uint8Array, topic?: string): string {
  const r = decodeMessage(raw(payload, topic), directory, pattern);
  expect(r.ok).toBe(false);
  return r.ok ? '' : r.deadLetter.rejections.map((x) => `${x.code} ${x.reason}`).join(' | ');
}

describe('the bad-input catalogue: each refused with a reason naming the field', () => {
  const cases: Array<[string, string | Uint8Array, RegExp, string?]> = [
    ['invalid JSON', '{"ts":1741944413589,"values":{"ch01":1}', /^not_json payload is not valid JSON/],
    ['invalid UTF-8', new Uint8Array([0x7b, 0x22, 0xff, 0xfe, 0x22, 0x7d]), /^not_json payload is not valid UTF-8 text/],
    ['an empty payload', '', /^not_json payload is empty/],
    ['a payload over the size limit', `{"ts":${TS},"values":{"ch01":1},"pad":"${'x'.repeat(MAX_PAYLOAD_BYTES)}"}`, /invalid_payload payload is \d+ bytes, over the 262144-byte limit/],
    ['deeply nested JSON', `${'['.repeat(5000)}${']'.repeat(5000)}`, /invalid_payload payload nests deeper than 32 levels/],
    ['deeply nested objects', `{"ts":${TS},"values":${'{"a":'.repeat(100)}1${'}'.repeat(100)}}`, /invalid_payload payload nests deeper than 32 levels/],
    ['strings for numbers', `{"ts":${TS},"values":{"ch01":"412.7"}}`, /invalid_payload values\.ch01: expected a number or null, received string/],
    ['NaN as text', `{"ts":${TS},"values":{"ch01":"NaN"}}`, /non_finite_value values\.ch01: "NaN" is not a finite number/],
    ['Infinity as text', `{"ts":${TS},"values":{"ch01":"-Infinity"}}`, /non_finite_value values\.ch01: "-Infinity" is not a finite number/],
    ['1e999 (parses to Infinity)', `{"ts":${TS},"values":{"ch01":1e999}}`, /non_finite_value values\.ch01: Infinity is not a finite number/],
    ['a duplicate channel', `{"ts":${TS},"values":{"ch01":1,"ch01":900}}`, /invalid_payload values\.ch01: key given twice/],
    ['a duplicate top-level key', `{"ts":${TS},"ts":${TS + 1},"values":{"ch01":1}}`, /invalid_payload ts: key given twice/],
    ['a duplicate key written with an escape', `{"ts":${TS},"values":{"ch01":1,"ch\\u00301":2}}`, /invalid_payload values\.ch01: key given twice/],
    ['a byte-order mark', new Uint8Array([0xef, 0xbb, 0xbf, ...enc(`{"ts":${TS},"values":{"ch01":1}}`)]), /^not_json payload starts with a UTF-8 byte-order mark/],
    ['__proto__ as a channel', `{"ts":${TS},"values":{"__proto__":1,"ch01":2}}`, /unknown_channel values\.__proto__: channel "__proto__" is not configured/],
    ['constructor as a channel', `{"ts":${TS},"values":{"constructor":1}}`, /unknown_channel values\.constructor: channel "constructor" is not configured/],
    ['__proto__ as a top-level key', `{"ts":${TS},"values":{"ch01":1},"__proto__":{"x":1}}`, /invalid_payload __proto__: unknown key/],
    ['seconds instead of milliseconds', `{"ts":${Math.floor(TS / 1000)},"values":{"ch01":1}}`, /invalid_timestamp ts: .* is outside 2000-01-01\.\.2100-01-01 \(epoch seconds sent instead of milliseconds\?\)/],
    ['a timestamp far in the past', `{"ts":"1999-12-31T23:59:59Z","values":{"ch01":1}}`, /invalid_timestamp ts: .*outside 2000-01-01\.\.2100-01-01/],
    ['a timestamp far in the future', `{"ts":"2150-01-01T00:00:00Z","values":{"ch01":1}}`, /invalid_timestamp ts: .*outside 2000-01-01\.\.2100-01-01/],
    ['a negative sequence number', `{"ts":${TS},"seq":-3,"values":{"ch01":1}}`, /invalid_payload seq: expected a non-negative integer/],
    ['an unknown logger', `{"ts":${TS},"values":{"ch01":1}}`, /unknown_logger logger "ghost" is not configured/, 'strainward/brannock-mere/ghost/scan'],
    ['an unknown channel', `{"ts":${TS},"values":{"ch99":1}}`, /unknown_channel values\.ch99: channel "ch99" is not configured on logger "span1-north"/],
    ['a topic outside the layout', `{"ts":${TS},"values":{"ch01":1}}`, /unknown_topic/, 'strainward/brannock-mere/span1-north/scan/extra'],
    ['a topic with a wildcard', `{"ts":${TS},"values":{"ch01":1}}`, /unknown_(topic|logger)/, 'strainward/brannock-mere/+/scan'],
    ['a very long topic', `{"ts":${TS},"values":{"ch01":1}}`, /unknown_(topic|logger)/, `strainward/brannock-mere/${'x'.repeat(60_000)}/scan`],
    ['unusual Unicode in the topic', `{"ts":${TS},"values":{"ch01":1}}`, /unknown_(topic|logger)/, 'strainward/brannock-mere/span1\u2011north/scan'],
    ['another structure\'s topic', `{"ts":${TS},"values":{"ch01":1}}`, /unknown_topic .*names structure "other-bridge"/, 'strainward/other-bridge/span1-north/scan'],
  ];
  it.each(cases)('%s', (_name, payload, reason, topic) => {
    expect(refusal(payload, topic)).toMatch(reason);
  });

  it('a million channels: refused by size before parsing (the limit is 256 KiB)', () => {
    const values = Array.from({ length: 1_000_000 }, (_, i) => `"c${i}":1`).join(',');
    const text = `{"ts":${TS},"values":{${values}}}`;
    expect(text.length).toBeGreaterThan(MAX_PAYLOAD_BYTES);
    expect(refusal(text)).toMatch(/over the 262144-byte limit/);
  });

  it('keeps the original bytes of every refusal in the dead letter', () => {
    const bytes = new Uint8Array([0xef, 0xbb, 0xbf, 0x7b, 0x7d]);
    const r = decodeMessage(raw(bytes), directory, pattern);
    expect(r.ok ? null : Buffer.from(r.deadLetter.payloadBase64, 'base64')).toEqual(Buffer.from(bytes));
  });

  it('the duplicate-key check: same key in different objects is fine, braces inside strings are text', () => {
    expect(jsonShapeProblem('{"a":{"b":1,"c":{"b":2}},"d":[{"b":1},{"b":1}]}')).toBeNull();
    expect(jsonShapeProblem('{"a":"{\\"a\\":1,\\"a\\":2}"}')).toBeNull(); // braces inside a string are text
    expect(jsonShapeProblem('{"a":[1,{"x":1,"x":2}]}')).toEqual({ kind: 'duplicate_key', key: 'x', path: 'a' });
  });
});

describe('fuzzing (fast-check)', () => {
  const chars = fc.constantFrom(...'{}[]":,0123456789.-+eEtruefalsn \\\u00ff\u2028ab'.split(''));
  const nearJson = fc.oneof(
    fc.string({ unit: chars, maxLength: 200 }),
    fc.json({ maxDepth: 4 }),
    fc.record({ ts: fc.oneof(fc.integer(), fc.string(), fc.double()), values: fc.dictionary(fc.string({ maxLength: 6 }), fc.oneof(fc.double(), fc.constant(null), fc.string())) })
      .map((o) => JSON.stringify(o)),
  );

  it('the duplicate-key check finds exactly the objects whose key lists repeat (against a walk of the parsed value)', () => {
    // Reference: build the text from a list of [key, value] pairs, so the duplicates are known beforehand.
    const pairs = fc.array(fc.tuple(fc.constantFrom('a', 'b', 'c', 'ch01'), fc.oneof(fc.integer(), fc.constant(null))), { maxLength: 6 });
    fc.assert(fc.property(pairs, pairs, (outer, inner) => {
      const obj = (ps: Array<[string, number | null]>) => `{${ps.map(([k, v]) => `${JSON.stringify(k)}:${JSON.stringify(v)}`).join(',')}}`;
      const text = `{"ts":1,"values":${obj(inner)}${outer.map(([k, v]) => `,${JSON.stringify(`x${k}`)}:${JSON.stringify(v)}`).join('')}}`;
      const dupInner = new Set(inner.map(([k]) => k)).size !== inner.length;
      const dupOuter = new Set(outer.map(([k]) => k)).size !== outer.length;
      const found = jsonShapeProblem(text);
      expect(found !== null).toBe(dupInner || dupOuter);
      // The values object comes first in the text, so its duplicate is the one reported.
      if (found?.kind === 'duplicate_key') expect(found.path).toBe(dupInner ? 'values' : '');
    }), { numRuns: 500 });
  });

  it('the allocation-free count finds as many keys in the text as JSON.parse keeps when none repeats', () => {
    fc.assert(fc.property(fc.json({ maxDepth: 5 }), fc.boolean(), (text, spaced) => {
      const t = spaced ? JSON.stringify(JSON.parse(text), null, 2) : text;
      expect(keyTokensAndDepth(t).keys).toBe(parsedKeyCount(JSON.parse(t)));
    }), { numRuns: 1000 });
    expect(keyTokensAndDepth('{"a":{"b":[1,{"c":2}]}}')).toEqual({ keys: 3, depth: 4 });
    expect(keyTokensAndDepth('{"a":1,"a":2}').keys).toBe(2);
  });

  it('the decoder never throws and always answers a frame or a dead letter with a reason', () => {
    fc.assert(fc.property(nearJson, fc.uint8Array({ maxLength: 64 }), fc.boolean(), (text, bytes, useBytes) => {
      const r = decodeMessage(raw(useBytes ? bytes : enc(text)), directory, pattern);
      if (!r.ok) {
        expect(r.deadLetter.rejections.length).toBeGreaterThan(0);
        for (const x of r.deadLetter.rejections) expect(x.reason.length).toBeGreaterThan(0);
      }
    }), { numRuns: 3000 });
  });

  it('the whole pipeline never stops: fuzzed messages between good scans, every good scan computed', async () => {
    const structure = await loadStructureFile('config/brannock-mere.yaml');
    const span = 'strainward/brannock-mere/lg-span1/scan';
    const thermal = 'strainward/brannock-mere/lg-thermal/scan';
    await fc.assert(fc.asyncProperty(fc.array(nearJson, { minLength: 1, maxLength: 30 }), async (junk) => {
      const t0 = Date.UTC(2026, 5, 1);
      const inputs: PipelineInput<PipelineMessage>[] = [];
      const msg = (topic: string, payload: string, at: number): PipelineInput<PipelineMessage> =>
        ({ kind: 'message', message: { raw: { topic, payload: enc(payload), arrivalMs: at }, ack: () => {} } });
      inputs.push(msg(thermal, JSON.stringify({ ts: t0, values: { t1: 14, t2: 14, t3: 14, t4: 14 } }), t0));
      junk.forEach((j, k) => {
        inputs.push(msg(span, j, t0 + 100 * k + 50));
        inputs.push(msg(span, JSON.stringify({ ts: t0 + 100 * k + 99, values: { ch01: 0, ch02: 0, ch03: 0, ch04: 0.001 * k } }), t0 + 100 * k + 99));
      });
      inputs.push(msg(thermal, JSON.stringify({ ts: t0 + 100 * junk.length + 100, values: { t1: 14, t2: 14, t3: 14, t4: 14 } }), t0 + 100 * junk.length + 100));
      const dead: DeadLetter[] = [];
      const out = await lastValueFrom(from(inputs).pipe(
        pipeline({ structure, topicPattern: compileTopicPattern(), deadLetters: { write: async (d: DeadLetter) => void dead.push(d) } }),
        toArray(),
      ));
      const computed = out.filter((o) => o.kind === 'frame' && o.frame.loggerId === 'lg-span1' && o.frame.timeMs % 100 === 99);
      expect(computed).toHaveLength(junk.length);
      // Each junk message is either refused (dead letter) or a valid scan in its own right.
      const acceptedJunk = out.filter((o) => o.kind === 'frame' && o.frame.loggerId === 'lg-span1' && o.frame.timeMs % 100 !== 99).length;
      expect(dead.length + acceptedJunk).toBe(junk.length);
    }), { numRuns: 60 });
  });
});
