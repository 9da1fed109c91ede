/**
 * Contract every PointSink must keep, run against each implementation (memory, line-protocol
 * files, database): writes resolve; what reads back equals what was written (tags exactly, numeric
 * fields within 1e-9 relative, times exactly); order is kept; non-finite fields never arrive.
 */
import { afterEach, describe, expect, it } from 'vitest';
import type { Point, PointSink } from '../../src/model/point.js';

/** One sink under test, opened fresh per test. */
export interface SinkUnderTest {
  sink: PointSink;
  /** Every point the sink's storage holds for `measurement`, in stored order (time order for a database). */
  readBack(measurement: string): Promise<Point[]>;
  /** Closes the sink if still open and removes what the test created. */
  cleanup(): Promise<void>;
}

/** Relative tolerance of numeric fields (the database keeps about 12 significant digits). */
export const FIELD_REL_TOL = 1e-9;

let counter = 0;
/** A measurement name no other test uses (tests may share one database server). */
export function uniqueMeasurement(): string {
  counter += 1;
  return `sw_contract_${process.pid}_${counter}`;
}

/**
 * Invented Brannock Mere readings: point i has time t0 + i * 10 ms (unique, increasing), two gauge
 * groups alternating, values with many significant digits.
 */
export function samplePoints(measurement: string, count: number, t0 = Date.now() - 3_600_000): Point[] {
  return Array.from({ length: count }, (_, i) => ({
    measurement,
    tags: { structure: 'brannock-mere', group: i % 2 === 0 ? 'span1-web' : 'span2-flange', zone: 'span 1, north=web' },
    fields: { von_mises_MPa: 80 + 40 * Math.sin(i / 7), stress_xx_MPa: -12.345678901 * Math.cos(i / 3) - 0.5, temperature_degC: 11.25 + i / 1000 },
    timeMs: Math.round(t0) + i * 10,
  }));
}

/** Asserts equal measurement, tags and times, and fields within FIELD_REL_TOL relative. */
export function expectSamePoints(actual: Point[], expected: Point[]): void {
  expect(actual.length).toBe(expected.length);
  expected.forEach((want, i) => {
    const got = actual[i];
    expect({ measurement: got.measurement, tags: got.tags, timeMs: got.timeMs }).toEqual({ measurement: want.measurement, tags: want.tags, timeMs: want.timeMs });
    expect(Object.keys(got.fields).sort()).toEqual(Object.keys(want.fields).sort());
    for (const [key, value] of Object.entries(want.fields)) {
      const error = Math.abs(got.fields[key] - value);
      expect(error, `${key} of point ${i}: ${got.fields[key]} vs ${value}`).toBeLessThanOrEqual(FIELD_REL_TOL * Math.abs(value));
    }
  });
}

/** Registers the contract tests for one sink implementation. */
export function describeSinkContract(name: string, open: () => Promise<SinkUnderTest>): void {
  describe(`PointSink contract: ${name}`, () => {
    let subject: SinkUnderTest | null = null;
    const start = async (): Promise<SinkUnderTest> => (subject = await open());
    afterEach(async () => {
      await subject?.cleanup();
      subject = null;
    });

    it('an empty write resolves and stores nothing', async () => {
      const { sink, readBack } = await start();
      const m = uniqueMeasurement();
      await sink.write([]);
      expect(await readBack(m)).toEqual([]);
    });

    it('resolves every write and reads back 1000 points from 40 unawaited writes, in order', async () => {
      const { sink, readBack } = await start();
      const m = uniqueMeasurement();
      const points = samplePoints(m, 1000);
      await Promise.all(Array.from({ length: 40 }, (_, k) => sink.write(points.slice(k * 25, k * 25 + 25))));
      expectSamePoints(await readBack(m), points);
    });

    it('drops non-finite fields and skips a point left with none', async () => {
      const { sink, readBack } = await start();
      const m = uniqueMeasurement();
      const [a, b, c] = samplePoints(m, 3);
      await sink.write([{ ...a, fields: { ...a.fields, ratio: NaN } }, { ...b, fields: { x: Infinity, y: -Infinity } }, c]);
      expectSamePoints(await readBack(m), [a, c]);
    });

    it('keeps tag values with spaces, commas, equals signs and backslashes, and negative and tiny values', async () => {
      const { sink, readBack } = await start();
      const m = uniqueMeasurement();
      const base = samplePoints(m, 1)[0];
      const point: Point = { ...base, tags: { structure: 'brannock-mere', note: 'a b,c=d\\e' }, fields: { tiny: 1.5e-12, neg: -987654.321, zero: 0 } };
      await sink.write([point]);
      const back = await readBack(m);
      expect(back).toHaveLength(1);
      expect(back[0].tags).toEqual(point.tags);
      expect(back[0].fields.zero).toBe(0);
      expectSamePoints(back, [point]);
    });

    it('keeps UTF-8 tag values (two-, three- and four-byte characters) as written', async () => {
      const { sink, readBack } = await start();
      const m = uniqueMeasurement();
      const base = samplePoints(m, 1)[0];
      const point: Point = { ...base, tags: { structure: 'brannock-mere', zone: 'M\u00fchlfeld \u2013 \u00e9tage \u00b0C \u{1F309}' } };
      await sink.write([point]);
      const back = await readBack(m);
      expect(back.map((p) => p.tags)).toEqual([point.tags]);
    });
  });
}
