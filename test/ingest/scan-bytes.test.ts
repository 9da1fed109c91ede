/**
 * The byte reader of the common scan (src/ingest/scan-bytes.ts) against the general decoder
 * (UTF-8, JSON.parse, duplicate-key guard, schema): for every payload, decodeMessage with the byte
 * path must answer exactly what it answers without it (same frame, Map order, Object.is on every
 * number, same dead letter). Payloads are random scans and random corruptions of them (fast-check).
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { decodeMessage, type DecodeResult } from '../../src/ingest/decode.js';
import { scanFromBytes } from '../../src/ingest/scan-bytes.js';
import { compileTopicPattern } from '../../src/ingest/topic.js';
import type { ChannelDirectory } from '../../src/model/channel-directory.js';
import type { RawMessage } from '../../src/model/raw-message.js';

const pattern = compileTopicPattern();
const ARRIVAL = Date.UTC(2025, 2, 14, 9, 26, 54);
const enc = (s: string) => new TextEncoder().encode(s);

// Channel names a logger may use, with the awkward ones: digits only (an object lists them
// first), `__proto__`, punctuation, non-ASCII, characters JSON escapes; `zz` is not configured.
const CHANNELS = ['ch01', 'ch02', 'ch03', 'ch10', 'ch31', 't1', 't2', 'a', 'ch-1', 'x.y', '1a', '0', '12', '__proto__', 'pier é', 'q"uote', 'tab\there', 'zz'];
const LOGGERS = ['lg-a', 'lg-b', 'lg-c'];
const dir: ChannelDirectory = {
  structureId: 'brannock-mere',
  hasLogger: (l) => l === 'lg-a' || l === 'lg-b',
  hasChannel: (l, c) => (l === 'lg-a' || l === 'lg-b') && c !== 'zz' && CHANNELS.includes(c),
};
const topicOf = (logger: string) => `strainward/brannock-mere/${logger}/scan`;
const message = (payload: Uint8Array, logger = 'lg-a'): RawMessage => ({ topic: topicOf(logger), payload, arrivalMs: ARRIVAL });

/** The two paths agree: same result, and on a frame the same value order and the very same doubles. */
function expectSamePaths(m: RawMessage): DecodeResult {
  const fast = decodeMessage(m, dir, pattern);
  const general = decodeMessage(m, dir, pattern, undefined, { fastPath: false });
  expect(fast).toEqual(general);
  if (fast.ok && general.ok) {
    const a = [...fast.frame.values];
    const b = [...general.frame.values];
    expect(a.map(([k]) => k)).toEqual(b.map(([k]) => k));
    a.forEach(([, v], i) => expect(Object.is(v, b[i][1]), `${a[i][0]}: ${v} vs ${b[i][1]}`).toBe(true));
    expect(Object.is(fast.frame.seq, general.frame.seq)).toBe(true);
    expect(Object.is(fast.frame.timeMs, general.frame.timeMs)).toBe(true);
    expect(fast.frame.synthetic).toBe(general.frame.synthetic);
  }
  return fast;
}

// --- generators: a scan as tokens, rendered with random whitespace ---------------------------

const finiteDouble = fc.double({ noNaN: true, noDefaultInfinity: true });
const numberText = fc.oneof(
  // What loggers send: a reading rounded to 0.01.
  { weight: 100, arbitrary: fc.integer({ min: -500_000, max: 500_000 }).map((n) => JSON.stringify(n / 100)) },
  finiteDouble.map((x) => (Object.is(x, -0) ? '-0' : JSON.stringify(x))),
  fc.double({ min: -1e-300, max: 1e-300, noNaN: true }).map((x) => JSON.stringify(x)),
  fc.integer().map(String),
  fc.constantFrom('-0', '0', '-0.0', '0.000', '1e999', '-1e999'),
  // Written digit by digit, around the reader's limits (15 significant digits, 22 decimals).
  fc.tuple(fc.boolean(), fc.stringMatching(/^(0|[1-9][0-9]{0,16})$/), fc.option(fc.stringMatching(/^[0-9]{1,25}$/)))
    .map(([neg, int, frac]) => `${neg ? '-' : ''}${int}${frac === null ? '' : `.${frac}`}`),
  // Numbers JSON writes with an exponent, or refuses.
  fc.constantFrom('1e5', '1E-3', '2.5e+2', '012', '-012', '00', '.5', '5.', '-', '+1', '0x10', '1.2.3', '--1', 'NaN', 'Infinity', '١'),
);
const valueText = fc.oneof({ weight: 150, arbitrary: numberText }, { weight: 15, arbitrary: fc.constant('null') }, fc.constantFrom('true', '"1.5"', '{}', '{"a":1}', '[1]', '"NaN"'));
const PLAIN = CHANNELS.slice(0, 11);
const keyText = fc.oneof(
  { weight: 200, arbitrary: fc.constantFrom(...PLAIN).map((c) => JSON.stringify(c)) },
  { weight: 4, arbitrary: fc.constantFrom(...CHANNELS.slice(11)).map((c) => JSON.stringify(c)) },
  // Escaped forms of a plain name: the same key to JSON.parse, not plain to the reader.
  fc.constantFrom('"ch\\u00301"', '"t\\u0031"', '"ch\\/1"', '""', '"\\u00e9"'),
);
const tsText = fc.oneof(
  { weight: 4, arbitrary: fc.integer({ min: ARRIVAL - 86_400_000, max: ARRIVAL + 4_000 }).map(String) },
  fc.integer({ min: ARRIVAL, max: ARRIVAL + 10_000 }).map((t) => `${t}.5`),
  fc.constantFrom(String(ARRIVAL / 1000), String(ARRIVAL + 5_000), String(ARRIVAL + 5_001), '946684800000', '946684799999', '4102444800000', '-1', '"2025-03-14T09:26:53.589Z"', '"yesterday"', 'null', '1.7419444e12'),
);
const seqText = fc.oneof({ weight: 8, arbitrary: fc.nat().map(String) }, fc.constantFrom('0', '-0', '-1', '1.5', '1.0', '9007199254740991', '9007199254740992', 'null', '"3"', '1e3'));
// JSON's four whitespace characters; others (vertical tab, no-break space) come as corruptions.
const ws = fc.constantFrom('', '', '', '', '', '', ' ', '  ', '\n', '\t', '\r\n');

interface ScanModel {
  members: Array<[string, string]>;
  channels: Array<[string, string]>;
  gaps: string[];
}
const scanModel = fc.record({
  // Mostly distinct keys (a key given twice is also a corruption below), now and then empty.
  channels: fc.oneof(
    { weight: 6, arbitrary: fc.uniqueArray(fc.tuple(keyText, valueText), { minLength: 1, maxLength: 8, selector: ([k]) => k }) },
    fc.array(fc.tuple(keyText, valueText), { minLength: 0, maxLength: 8 }),
  ),
  ts: fc.option(tsText, { freq: 12 }),
  seq: fc.option(seqText, { freq: 3 }),
  synthetic: fc.option(fc.constantFrom('true', 'false', 'true', 'false', '"yes"', 'null'), { freq: 2 }),
  // Keys the contract does not have (one scan in ten).
  extra: fc.oneof({ weight: 9, arbitrary: fc.constant(null) }, fc.constantFrom(['"valeus"', '{}'], ['"channel"', '"t1"'], ['"value"', '1'], ['"ts "', '1'])),
  order: fc.func(fc.integer()),
  gaps: fc.array(ws, { minLength: 1, maxLength: 8 }),
}).map((r): ScanModel => {
  const members: Array<[string, string]> = [];
  if (r.ts !== null) members.push(['"ts"', r.ts]);
  if (r.seq !== null) members.push(['"seq"', r.seq]);
  members.push(['"values"', '']);
  if (r.synthetic !== null) members.push(['"synthetic"', r.synthetic]);
  if (r.extra !== null) members.push(r.extra as [string, string]);
  members.sort((x, y) => r.order(x[0]) - r.order(y[0]));
  return { members, channels: r.channels, gaps: r.gaps };
});

function render(s: ScanModel): string {
  let g = 0;
  const w = () => s.gaps[g++ % s.gaps.length];
  const object = (ms: Array<[string, string]>) => `{${w()}${ms.map(([k, v]) => `${k}${w()}:${w()}${v}`).join(`${w()},${w()}`)}${w()}}`;
  const values = object(s.channels);
  return `${w()}${object(s.members.map(([k, v]) => [k, k === '"values"' ? values : v]))}${w()}`;
}

const corruption = fc.oneof(
  { weight: 20, arbitrary: fc.constant((t: string) => t) },
  fc.nat().map((n) => (t: string) => t.slice(0, n % (t.length + 1))),
  fc.tuple(fc.nat(), fc.integer({ min: 0, max: 255 })).map(([n, byte]) => (t: string) => `${t.slice(0, n % t.length)}${String.fromCharCode(byte)}${t.slice((n % t.length) + 1)}`),
  fc.constant((t: string) => t.replace(/("ch01"\s*:\s*[^,}]*)/, '$1,$1')),
  fc.constant((t: string) => t.replace(/("values"\s*:\s*\{)/, '$1"ch02":1,')),
  fc.constant((t: string) => t.replace('"ch0', '"\\u0063h0')),
  fc.constant((t: string) => t.replace(/:(\s*)(-?\d+(\.\d+)?)/, ':$1$2e0')),
  fc.constant((t: string) => t.replace(/:(\s*)(\d)/, ':$10$2')),
  fc.constant((t: string) => t.replace(/("t1"\s*:)/, '$1{"deep":1},"t9":')),
  fc.constantFrom('x', ',', '}', ' {}', '\u0000').map((tail) => (t: string) => t + tail),
  fc.constant((t: string) => `\ufeff${t}`),
  fc.constantFrom('\u000b', '\u00a0', '\u2028').map((c) => (t: string) => t.replace(',', `${c},`)),
);

describe('scanFromBytes: the common scan read from its bytes', () => {
  it('reads the benchmark shape with the doubles JSON.parse gives (ECMA-404 numbers, correctly rounded: common practice)', () => {
    const s = scanFromBytes(enc('{"ts":1733212345678,"seq":12,"values":{"ch01":123.45,"ch02":-0.5,"ch03":-0,"t1":14.2,"t2":null}}'), null);
    expect(s).not.toBeNull();
    expect(s!.ts).toBe(1733212345678);
    expect(s!.seq).toBe(12);
    expect(s!.synthetic).toBe(false);
    expect([...s!.values]).toEqual([['ch01', 123.45], ['ch02', -0.5], ['ch03', -0], ['t1', 14.2], ['t2', null]]);
    expect(Object.is(s!.values.get('ch03'), -0)).toBe(true);
  });

  it('takes the limits of the exact range and the literals JS reads (15 significant digits, 10^22: common practice)', () => {
    const cases: Array<[string, number]> = [
      ['123456789012.345', 123456789012.345],
      ['999999999999999', 999999999999999],
      ['0.0000000000000000000001', 1e-22],
      ['0.000000123456789012345', 1.23456789012345e-7],
      ['-0.0', -0],
      ['0.1', 0.1],
      ['1.0', 1],
    ];
    for (const [text, expected] of cases) {
      const s = scanFromBytes(enc(`{"ts":1,"values":{"a":${text}}}`), null);
      expect(s, text).not.toBeNull();
      expect(Object.is(s!.values.get('a'), expected), text).toBe(true);
    }
  });

  it('declines what it does not read exactly, leaving it to the general path', () => {
    const declined = [
      '{"ts":1,"values":{"a":1e5}}', // exponent
      '{"ts":1,"values":{"a":0.1234567890123456}}', // 16 significant digits
      '{"ts":1,"values":{"a":0.00000000000000000000001}}', // 23 decimals
      '{"ts":1,"values":{"a":012}}', '{"ts":1,"values":{"a":.5}}', '{"ts":1,"values":{"a":5.}}', '{"ts":1,"values":{"a":-}}',
      '{"ts":1,"values":{"ch\\u0030":1}}', // escape
      '{"ts":1,"values":{"pier é":1}}', // non-ASCII
      '\ufeff{"ts":1,"values":{"a":1}}', // byte-order mark
      '{"ts":1,"values":{"a":1,"a":2}}', // duplicate
      '{"ts":1,"ts":2,"values":{"a":1}}',
      '{"ts":1,"values":{"b":1,"12":2}}', // digits only: an object lists it first
      '{"ts":1,"values":{"__proto__":1}}',
      '{"ts":1,"values":{"a":{"b":1}}}', '{"ts":1,"values":{"a":[1]}}', '{"ts":1,"values":{"a":"1"}}',
      '{"ts":1,"values":{"a":1}}x', '{"ts":1,"values":{"a":1},}', '{"ts":1,"values":{"a":1}',
      '{"ts":"2025-03-14T09:26:53.589Z","values":{"a":1}}', // ISO time: the general path reads it
      '{"ts":1,"values":{"a":1},"valeus":{}}', '{"ts":1,"values":{}}', '{"values":{"a":1}}',
      '{"ts":1,"seq":1.5,"values":{"a":1}}', '{"ts":1,"seq":-1,"values":{"a":1}}', '{"ts":1,"synthetic":1,"values":{"a":1}}',
      '{"ts":1,"values":{"a":1}\u000b}', '', ' ',
    ];
    for (const text of declined) expect(scanFromBytes(enc(text), null), text).toBeNull();
  });

  it('reuses the previous scan\'s channel keys when the bytes are the same, and reads changed ones anew', () => {
    const first = scanFromBytes(enc('{"ts":1,"values":{"ch01":1,"ch02":2}}'), null)!;
    const same = scanFromBytes(enc('{"ts":2,"values":{"ch01":3,"ch02":4}}'), first.keys)!;
    expect(same.keys).toBe(first.keys);
    expect([...same.values]).toEqual([['ch01', 3], ['ch02', 4]]);
    const longer = scanFromBytes(enc('{"ts":3,"values":{"ch01":5,"ch02":6,"ch021":7}}'), first.keys)!;
    expect(longer.keys.ids).toEqual(['ch01', 'ch02', 'ch021']);
    const fewer = scanFromBytes(enc('{"ts":4,"values":{"ch01":8}}'), longer.keys)!;
    expect(fewer.keys.ids).toEqual(['ch01']);
    const renamed = scanFromBytes(enc('{"ts":5,"values":{"ch0":9,"ch01":10}}'), first.keys)!;
    expect([...renamed.values]).toEqual([['ch0', 9], ['ch01', 10]]);
    // A remembered key given twice is still a duplicate.
    expect(scanFromBytes(enc('{"ts":6,"values":{"ch01":1,"ch01":2}}'), first.keys)).toBeNull();
  });

  it('accepts every number of the exact range with the double JSON.parse gives (fast-check)', () => {
    const text = fc.tuple(fc.boolean(), fc.stringMatching(/^(0|[1-9][0-9]{0,14})$/), fc.option(fc.stringMatching(/^[0-9]{1,22}$/)))
      .map(([neg, int, frac]) => `${neg ? '-' : ''}${int}${frac === null ? '' : `.${frac}`}`)
      .filter((t) => t.replace(/^-?0*\.?0*/, '').replace('.', '').length <= 15);
    fc.assert(fc.property(text, (t) => {
      const s = scanFromBytes(enc(`{"ts":1,"values":{"a":${t}}}`), null);
      expect(s, t).not.toBeNull();
      expect(Object.is(s!.values.get('a'), JSON.parse(t)), t).toBe(true);
    }), { numRuns: 20_000 });
  });
});

describe('decodeMessage: the byte path answers exactly as the general path', () => {
  it('on hand-written scans, with the expected frame', () => {
    const r = expectSamePaths(message(enc('{"ts":1741944413589,"seq":12,"values":{"ch01":123.45,"t1":14.2,"t2":null},"synthetic":true}')));
    expect(r.ok && r.frame).toEqual({
      structureId: 'brannock-mere', loggerId: 'lg-a', timeMs: 1741944413589, seq: 12,
      values: new Map([['ch01', 123.45], ['t1', 14.2], ['t2', null]]), arrivalMs: ARRIVAL, synthetic: true,
    });
    // Read by the byte path, refused by the shared checks: the dead letter is the general path's.
    for (const text of ['{"ts":1741944413589,"values":{"zz":1}}', `{"ts":${ARRIVAL + 5001},"values":{"ch01":1}}`, '{"ts":1741944,"values":{"ch01":1}}']) {
      expect(scanFromBytes(enc(text), null), text).not.toBeNull();
      expect(expectSamePaths(message(enc(text))).ok, text).toBe(false);
    }
    expect(expectSamePaths(message(enc('{"ts":1741944413589,"values":{"ch01":1}}'), 'lg-c')).ok).toBe(false);
  });

  it('asks another directory again about channel keys the first one knew', () => {
    const m = message(enc('{"ts":1741944413589,"values":{"ch01":1,"ch02":2}}'), 'lg-b');
    expect(decodeMessage(m, dir, pattern).ok).toBe(true);
    expect(decodeMessage(m, dir, pattern).ok).toBe(true);
    const withoutCh02: ChannelDirectory = { ...dir, hasChannel: (l, c) => c !== 'ch02' && dir.hasChannel(l, c) };
    const r = decodeMessage(m, withoutCh02, pattern);
    expect(r.ok).toBe(false);
    expect(!r.ok && r.deadLetter.rejections.map((x) => x.path)).toEqual(['values.ch02']);
    expect(decodeMessage(m, dir, pattern).ok).toBe(true);
  });

  it('on random scans and random corruptions of them, in runs of one logger (fast-check)', () => {
    let read = 0;
    let decoded = 0;
    let runs = 0;
    const scan = fc.tuple(scanModel, corruption);
    fc.assert(fc.property(fc.constantFrom(...LOGGERS), fc.array(scan, { minLength: 1, maxLength: 4 }), (logger, scans) => {
      for (const [model, corrupt] of scans) {
        const bytes = enc(corrupt(render(model)));
        runs++;
        if (scanFromBytes(bytes, null) !== null) read++;
        if (expectSamePaths(message(bytes, logger)).ok) decoded++;
      }
    }), { numRuns: 3000 });
    // The comparison means something only if both paths are exercised: many read, many declined.
    expect(read / runs).toBeGreaterThan(0.1);
    expect(read / runs).toBeLessThan(0.9);
    expect(decoded).toBeGreaterThan(0);
  });

  it('on runs of one logger whose channel keys drift from scan to scan (fast-check)', () => {
    const plain = CHANNELS.filter((c) => /^[a-z][a-z0-9.-]*$/.test(c) && c !== 'zz');
    const values = fc.array(fc.tuple(fc.constantFrom(...plain), fc.oneof(finiteDouble, fc.constant(null), fc.constant(-0))), { minLength: 1, maxLength: 8 });
    fc.assert(fc.property(fc.array(values, { minLength: 1, maxLength: 6 }), (scans) => {
      for (const v of scans) {
        const body = v.map(([k, x]) => `"${k}":${x !== null && Object.is(x, -0) ? '-0' : JSON.stringify(x)}`).join(',');
        expectSamePaths(message(enc(`{"ts":1741944413589,"values":{${body}}}`), 'lg-b'));
      }
    }), { numRuns: 1000 });
  });
});
