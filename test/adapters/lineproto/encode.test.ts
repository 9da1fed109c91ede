import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { decodeLine, decodeLines, LineDecodeError } from '../../../src/adapters/lineproto/decode.js';
import { encodeLine, encodeLines, escapeKey, escapeMeasurement } from '../../../src/adapters/lineproto/encode.js';
import type { Point } from '../../../src/model/point.js';

const T = 1_764_000_000_000;

describe('escaping against the InfluxDB v2 line protocol reference', () => {
  // Source: InfluxDB v2 docs, "Line protocol" reference, section "Special characters",
  // example "Measurement name with spaces": `my\ Measurement fieldKey="string value"`.
  it('escapes a space in a measurement name', () => {
    expect(escapeMeasurement('my Measurement')).toBe('my\\ Measurement');
  });

  // Same source, example "Tag keys and values with spaces":
  // `myMeasurement,tag\ Key1=tag\ Value1,tag\ Key2=tag\ Value2 fieldKey=100`.
  it('escapes spaces in tag keys and values (reference example, float field)', () => {
    const line = encodeLine({
      measurement: 'myMeasurement',
      tags: { 'tag Key1': 'tag Value1', 'tag Key2': 'tag Value2' },
      fields: { fieldKey: 100 },
      timeMs: 1556813561098,
    });
    expect(line).toBe('myMeasurement,tag\\ Key1=tag\\ Value1,tag\\ Key2=tag\\ Value2 fieldKey=100 1556813561098');
  });

  // Same source, table "Special characters": measurement escapes comma and space only; tag keys,
  // tag values and field keys escape comma, equals sign and space.
  it('escapes comma in a measurement but leaves its equals sign', () => {
    expect(escapeMeasurement('a,b=c d')).toBe('a\\,b=c\\ d');
  });
  it('escapes comma, equals sign and space in keys and tag values', () => {
    expect(escapeKey('k,1=2 3')).toBe('k\\,1\\=2\\ 3');
  });
  // Same source, "Escaping backslashes": `\\` is read as one `\`, so doubling reads back unchanged.
  it('doubles backslashes, including a trailing one', () => {
    expect(escapeKey('a\\b\\')).toBe('a\\\\b\\\\');
    expect(decodeLine('m,t=a\\\\b\\\\ f=1 0').tags.t).toBe('a\\b\\');
  });
  // Same source: "You do not need to escape other special characters" (emoji example).
  it('leaves other characters, quotes and emoji alone', () => {
    expect(escapeKey('🍭"\'')).toBe('🍭"\'');
  });
});

describe('encodeLine', () => {
  const base: Point = { measurement: 'sw_result', tags: { structure: 'brannock-mere', group: 'g01' }, fields: { von_mises_MPa: 12.5 }, timeMs: T };

  it('sorts tags by key and writes a millisecond timestamp', () => {
    expect(encodeLine(base)).toBe(`sw_result,group=g01,structure=brannock-mere von_mises_MPa=12.5 ${T}`);
  });
  it('drops non-finite fields and keeps the finite ones', () => {
    const line = encodeLine({ ...base, fields: { a_MPa: NaN, b_MPa: -3.25, c_MPa: Infinity, d_MPa: -Infinity } });
    expect(line).toBe(`sw_result,group=g01,structure=brannock-mere b_MPa=-3.25 ${T}`);
  });
  it('skips a point with no finite field, an empty measurement, a comment-like name or a NaN time', () => {
    expect(encodeLine({ ...base, fields: { a: NaN } })).toBeNull();
    expect(encodeLine({ ...base, fields: {} })).toBeNull();
    expect(encodeLine({ ...base, measurement: '' })).toBeNull();
    expect(encodeLine({ ...base, measurement: '#x' })).toBeNull();
    expect(encodeLine({ ...base, timeMs: NaN })).toBeNull();
    expect(encodeLines([base, { ...base, fields: { a: NaN } }, base])).toHaveLength(2);
  });
  it('omits empty tag values and replaces line breaks by escaped spaces', () => {
    expect(encodeLine({ ...base, tags: { a: '', b: 'x\ny' } })).toBe(`sw_result,b=x\\ y von_mises_MPa=12.5 ${T}`);
  });
  it('writes floats in shortest round-trip form (exponents allowed, -0 as 0)', () => {
    const line = encodeLine({ ...base, tags: {}, fields: { a: 1e-7, b: 1e21, c: -0, d: 0.1 + 0.2 } });
    expect(line).toBe(`sw_result a=1e-7,b=1e+21,c=0,d=0.30000000000000004 ${T}`);
  });
  it('rounds the time to whole milliseconds', () => {
    expect(encodeLine({ ...base, tags: {}, timeMs: T + 0.6 })).toBe(`sw_result von_mises_MPa=12.5 ${T + 1}`);
  });
});

describe('decodeLine', () => {
  it('refuses a line without fields, naming the column', () => {
    expect(() => decodeLine('m,t=1')).toThrow(LineDecodeError);
    expect(() => decodeLine('m f="s" 1')).toThrow(/field f is not a number/);
  });
  it('skips comments and blank lines', () => {
    expect(decodeLines('# c\n\nm f=1 5\n')).toEqual([{ measurement: 'm', tags: {}, fields: { f: 1 }, timeMs: 5 }]);
  });
});

describe('round trip encode -> decode (property)', () => {
  const name = fc.string({ minLength: 1, maxLength: 12 }).filter((s) => !/[\r\n]/.test(s));
  it('returns the same point for any names and finite floats', () => {
    fc.assert(
      fc.property(
        name.filter((s) => !s.startsWith('#')),
        fc.dictionary(name, name, { maxKeys: 4 }),
        fc.dictionary(name, fc.double({ noNaN: true, noDefaultInfinity: true }), { minKeys: 1, maxKeys: 4 }),
        fc.integer({ min: 0, max: 4_102_444_800_000 }),
        (measurement, tags, fields, timeMs) => {
          const point: Point = { measurement, tags, fields, timeMs };
          const back = decodeLine(encodeLine(point)!);
          expect(back.measurement).toBe(measurement);
          expect(back.tags).toEqual(tags);
          expect(back.timeMs).toBe(timeMs);
          for (const [k, v] of Object.entries(fields)) expect(Object.is(back.fields[k], Object.is(v, -0) ? 0 : v)).toBe(true);
        },
      ),
      { numRuns: 500, examples: [[" ", {}, JSON.parse("{\"__proto__\": 0}"), 0]] },
    );
  });
});
