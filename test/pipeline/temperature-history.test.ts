import { describe, expect, it } from 'vitest';
import { HISTORY_CAPACITY, TemperatureHistory } from '../../src/pipeline/temperature-history.js';

describe('TemperatureHistory', () => {
  const out = new Float64Array(2);

  it('is empty at first', () => {
    expect(new TemperatureHistory().at(0, true, out)).toBe(false);
  });

  it('interpolates between neighbours and reports the wider side as age', () => {
    const h = new TemperatureHistory();
    h.add(1000, 10);
    h.add(6000, 20);
    expect(h.at(2000, true, out)).toBe(true);
    expect(out[0]).toBeCloseTo(12, 12);
    expect(out[1]).toBe(4000);
    h.at(2000, false, out);
    expect([out[0], out[1]]).toEqual([10, 1000]);
  });

  it('uses the last reading past the end and the first before the start', () => {
    const h = new TemperatureHistory();
    h.add(1000, 10);
    h.add(2000, 11);
    h.at(9000, true, out);
    expect([out[0], out[1]]).toEqual([11, 7000]);
    h.at(500, true, out);
    expect([out[0], out[1]]).toEqual([10, 500]);
    expect(h.hasAfter(1500)).toBe(true);
    expect(h.hasAfter(2000)).toBe(false);
  });

  it('keeps readings sorted when they arrive out of order, and stays bounded', () => {
    const h = new TemperatureHistory();
    for (const t of [5, 1, 3, 2, 4]) h.add(t * 1000, t);
    h.at(2500, true, out);
    expect(out[0]).toBeCloseTo(2.5, 12);
    for (let t = 6; t < 100; t++) h.add(t * 1000, t);
    expect(h.size).toBe(HISTORY_CAPACITY);
    h.at(99_000, false, out);
    expect(out[0]).toBe(99);
  });

  it('replaces a reading at the same instant', () => {
    const h = new TemperatureHistory();
    h.add(1000, 10);
    h.add(1000, 12);
    expect(h.size).toBe(1);
    h.at(1000, true, out);
    expect(out[0]).toBe(12);
  });
});
