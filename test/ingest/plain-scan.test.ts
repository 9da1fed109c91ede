import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { plainScan, scanMessageSchema, schemaFor } from '../../src/ingest/payload-schema.js';

/**
 * The decoder's shortcut past zod must never accept what the schema refuses, nor change what it
 * accepts: for every payload below, a shortcut result is one the schema accepts with equal data.
 */
const payloads: string[] = [
  '{"ts":1741944413589,"seq":1207,"values":{"ch01":412.7,"ch02":null}}',
  '{"ts":"2025-03-14T09:26:53.589Z","values":{"ch01":-0.0031}}',
  '{"values":{"a":1},"ts":5,"seq":0}',
  '{"ts":1,"seq":-0,"values":{"a":-0}}',
  '{"ts":1,"values":{"":1}}',
  // Refused by the schema: the shortcut must leave each to it.
  '{"ts":1,"values":{}}',
  '{"ts":1,"seq":1.5,"values":{"a":1}}',
  '{"ts":1,"seq":-1,"values":{"a":1}}',
  '{"ts":1,"seq":9007199254740992,"values":{"a":1}}',
  '{"ts":1,"seq":null,"values":{"a":1}}',
  '{"ts":1,"seq":"3","values":{"a":1}}',
  '{"ts":1e999,"values":{"a":1}}',
  '{"ts":null,"values":{"a":1}}',
  '{"ts":true,"values":{"a":1}}',
  '{"values":{"a":1}}',
  '{"ts":1,"values":{"a":1e999}}',
  '{"ts":1,"values":{"a":"1.5"}}',
  '{"ts":1,"values":{"a":[1]}}',
  '{"ts":1,"values":{"a":{"b":1}}}',
  '{"ts":1,"values":{"a":true}}',
  '{"ts":1,"values":[1,2]}',
  '{"ts":1,"values":null}',
  '{"ts":1,"values":{"a":1},"valeus":{}}',
  '{"ts":1,"values":{"__proto__":1,"a":2}}',
  '{"ts":1,"channel":"t1","value":2}',
  '[1,2]',
  '"text"',
  '12',
  'null',
];

describe('plainScan: the scan shape recognised without zod', () => {
  it('accepts only what the scan schema accepts, with the same data', () => {
    let shortcut = 0;
    for (const text of payloads) {
      const input: unknown = JSON.parse(text);
      const plain = plainScan(input);
      if (plain === null) continue;
      shortcut++;
      expect(schemaFor(input), text).toBe(scanMessageSchema);
      const r = scanMessageSchema.safeParse(input);
      expect(r.success, text).toBe(true);
      expect(plain, text).toEqual(r.data);
      expect(Object.keys(plain.values), text).toEqual(Object.keys(r.data!.values));
    }
    expect(shortcut).toBe(5);
  });

  it('the same on generated payloads, scan-like and arbitrary (fast-check)', () => {
    const value = fc.oneof(fc.double(), fc.constant(null), fc.integer(), fc.string(), fc.boolean(), fc.constant(Number.POSITIVE_INFINITY));
    const scanLike = fc.record({
      ts: fc.oneof(fc.integer(), fc.double(), fc.string(), fc.constant(null)),
      seq: fc.oneof(fc.nat(), fc.integer(), fc.double(), fc.constant(2 ** 53)),
      values: fc.dictionary(fc.oneof(fc.string(), fc.constant('__proto__')), value),
      extra: fc.jsonValue(),
    }, { requiredKeys: ['values'] });
    fc.assert(fc.property(fc.oneof(scanLike, fc.jsonValue()), (input) => {
      const plain = plainScan(input);
      if (plain === null) return;
      const r = scanMessageSchema.safeParse(input);
      expect(r.success).toBe(true);
      expect(plain).toEqual(r.data);
    }), { numRuns: 2000 });
  });
});
