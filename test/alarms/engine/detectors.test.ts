import { describe, expect, it } from 'vitest';
import { hampelStateSchema, hampelStep, MAD_TO_SIGMA, median, SPIKE_RETURN_FRACTION } from '../../../src/alarms/engine/hampel.js';
import { hysteresisLevel } from '../../../src/alarms/engine/hysteresis.js';
import { debounce, newDebounce } from '../../../src/alarms/engine/debounce.js';
import { flatlineStep, newFlatline, resetFlatline } from '../../../src/alarms/engine/flatline.js';
import { newSampleWindow, pushSample, slopePerS } from '../../../src/alarms/engine/sample-window.js';
import { silence, silenceLimitMs } from '../../../src/alarms/engine/no-data.js';

describe('hampel', () => {
  it('uses the normal-consistency constant 1/Phi^-1(3/4)', () => {
    // Phi^-1(0.75) = 0.6744897502 (standard normal quantile table, from memory); Rousseeuw & Croux (1993) give 1.4826
    expect(MAD_TO_SIGMA).toBeCloseTo(1 / 0.6744897502, 4);
  });
  it('holds a reading beyond k MADs of both the median and the reading before; a spike when the next is back', () => {
    const s = { window: [10, 11, 9, 10, 12, 10, 11] }; // median 10, MAD 1 -> limit 3 x 1.4826 = 4.4478
    const inside = hampelStep({ window: [...s.window] }, 14, 7, 3, 0);
    expect(inside).toEqual({ spike: false, ended: 0, held: false, median: 10, limit: expect.closeTo(4.4478, 6), deviation: null });
    expect(hampelStep(s, 16, 7, 3, 0)).toMatchObject({ spike: false, held: true }); // spike or real change? the next reading tells
    // Back within SPIKE_RETURN_FRACTION x limit = 2.2239 of the reading before it (11): 10 is.
    expect(hampelStep(s, 10, 7, 3, 0)).toMatchObject({ spike: true, ended: 1, held: false, median: 10, deviation: 6 });
    expect(s.window).toEqual([11, 9, 10, 12, 10, 11, 10]); // the spike stays out; the window slides, oldest out
  });
  it('a reading barely back inside the limit is not a return: a peak that eases off is no spike', () => {
    const s = { window: [10, 11, 9, 10, 12, 10, 11] };
    expect(hampelStep(s, 15.6, 7, 3, 0).held).toBe(true); // 5.6 from the median, 4.6 from the reading before
    expect(SPIKE_RETURN_FRACTION * 4.4478).toBeCloseTo(2.2239, 4);
    // 14.3 is inside the limit of the median (4.3 < 4.4478) but 3.3 from 11, more than 2.2239: not back.
    expect(hampelStep(s, 14.3, 7, 3, 0)).toMatchObject({ spike: false, held: true });
    expect(hampelStep(s, 14.1, 7, 3, 0)).toMatchObject({ spike: false, ended: 2, held: false }); // SPIKE_MAX_SAMPLES = 2 passed: a real change
    expect(s.window).toEqual([9, 10, 12, 10, 11, 14.3, 14.1]);
  });
  it('does not start an excursion on a reading close to the one before it (a ramp)', () => {
    const s = { window: [10, 11, 9, 10, 12, 10, 14] }; // median 10, MAD 1; the reading before is 14
    expect(hampelStep(s, 15, 7, 3, 0)).toMatchObject({ held: false, spike: false }); // 5 from the median, 1 from 14
  });
  it('finds a two-reading spike that comes back', () => {
    const s = { window: [10, 11, 9, 10, 12, 10, 11] };
    expect(hampelStep(s, 30, 7, 3, 0).held).toBe(true);
    expect(hampelStep(s, 31, 7, 3, 0)).toMatchObject({ held: true, ended: 0 });
    expect(hampelStep(s, 11.5, 7, 3, 0)).toMatchObject({ spike: true, ended: 2, deviation: 21 });
    expect(s.window).toEqual([11, 9, 10, 12, 10, 11, 11.5]);
  });
  it('takes an outlier that stays (a ramp or a step) as a real change, not a spike', () => {
    const s = { window: [10, 11, 9, 10, 12, 10, 11] };
    expect(hampelStep(s, 20, 7, 3, 0).spike).toBe(false);
    expect(hampelStep(s, 21, 7, 3, 0).spike).toBe(false);
    expect(hampelStep(s, 21, 7, 3, 0)).toMatchObject({ spike: false, ended: 2 });
    expect(s.window).toEqual([9, 10, 12, 10, 11, 21, 21]);
  });
  it('reads a snapshot written before the excursion count (count absent = 1)', () => {
    const s = hampelStateSchema.parse({ window: [10, 11, 9, 10, 12, 10, 11], pending: { x: 15, median: 10, limit: 4.4478 } });
    expect(hampelStep(s, 10.5, 7, 3, 0)).toMatchObject({ spike: true, ended: 1 });
    expect(() => hampelStateSchema.parse({ window: [], pending: { x: 1, median: 0, limit: 1, count: 0 } })).toThrow();
  });
  it('judges nothing until the window is full; min_deviation guards a zero MAD', () => {
    const s = { window: [] as number[] };
    for (let i = 0; i < 5; i++) expect(hampelStep(s, 5, 5, 3, 0.5).median).toBeNull();
    expect(hampelStep(s, 5.4, 5, 3, 0.5).held).toBe(false);
    expect(hampelStep(s, 5.8, 5, 3, 0.5).held).toBe(false); // 0.8 from the median but only 0.4 from 5.4
    expect(hampelStep(s, 6.5, 5, 3, 0.5).held).toBe(true); // window [5 5 5 5.4 5.8]: 1.5 from 5, 0.7 from 5.8
    expect(hampelStep(s, 5.6, 5, 3, 0.5).spike).toBe(true); // within 0.25 of 5.8
  });
  it('median of even and odd lists, without mutating', () => {
    const xs = [4, 1, 3, 2];
    expect(median(xs)).toBe(2.5);
    expect(xs).toEqual([4, 1, 3, 2]);
    expect(median([3, 1, 2])).toBe(2);
  });
});

describe('hysteresis', () => {
  const t = [150, 200, 250];
  it('enters at the threshold, holds until threshold - margin', () => {
    expect(hysteresisLevel(149.9, t, 10, 0)).toBe(0);
    expect(hysteresisLevel(150, t, 10, 0)).toBe(1);
    expect(hysteresisLevel(140.1, t, 10, 1)).toBe(1);
    expect(hysteresisLevel(140, t, 10, 1)).toBe(0);
    expect(hysteresisLevel(255, t, 10, 0)).toBe(3);
    expect(hysteresisLevel(241, t, 10, 3)).toBe(3);
    expect(hysteresisLevel(240, t, 10, 3)).toBe(2);
    expect(hysteresisLevel(100, t, 10, 3)).toBe(0);
  });
});

describe('debounce', () => {
  it('confirms a level held for on-delay and drops one absent for off-delay', () => {
    const s = newDebounce(2);
    expect(debounce(s, 1, 0, 3000, 2000)).toBe(0);
    expect(debounce(s, 2, 1000, 3000, 2000)).toBe(0);
    expect(debounce(s, 2, 3000, 3000, 2000)).toBe(1); // level 1 held since 0
    expect(debounce(s, 2, 4000, 3000, 2000)).toBe(2); // level 2 held since 1000
    expect(debounce(s, 0, 5000, 3000, 2000)).toBe(2);
    expect(debounce(s, 1, 6000, 3000, 2000)).toBe(2);
    expect(debounce(s, 0, 7000, 3000, 2000)).toBe(1); // below 2 since 5000; below 1 only since 7000
    expect(debounce(s, 0, 9000, 3000, 2000)).toBe(0);
  });
});

describe('flatline', () => {
  it('reports the spread only once the run covers the window; a gap restarts it', () => {
    const s = newFlatline();
    expect(flatlineStep(s, 0, 5, 60_000)).toBeNull();
    expect(flatlineStep(s, 30_000, 5.3, 60_000)).toBeNull();
    expect(flatlineStep(s, 60_000, 5.1, 60_000)).toBeCloseTo(0.3, 12);
    expect(flatlineStep(s, 80_000, 5.2, 60_000)).toBeCloseTo(0.2, 12); // the 5 at 0 s left the window
    expect(flatlineStep(s, 100_000, 5.1, 60_000)).toBeCloseTo(0.1, 12); // and the 5.3 at 30 s
    resetFlatline(s);
    expect(flatlineStep(s, 110_000, 9, 60_000)).toBeNull();
  });
});

describe('sample window slope', () => {
  it('is the least-squares slope in units per second', () => {
    const w = newSampleWindow();
    for (let t = 0; t <= 60; t += 5) pushSample(w, t * 1000, 2 + 0.5 * t + (t % 10 === 0 ? 0.1 : -0.1), 120_000, 0);
    expect(slopePerS(w, 30_000)).toBeCloseTo(0.5, 2);
    expect(slopePerS(w, 90_000)).toBeNull();
  });
  it('thins samples and forgets old ones', () => {
    const w = newSampleWindow();
    for (let t = 0; t < 100; t++) pushSample(w, t * 1000, t, 10_000, 2000);
    expect(w.tMs).toEqual([90_000, 92_000, 94_000, 96_000, 98_000]);
  });
});

describe('no-data arithmetic', () => {
  it('silent at missing_after_intervals x interval', () => {
    expect(silenceLimitMs(10, 3)).toBe(30_000);
    expect(silence(29_999, 0, 30_000)).toEqual({ silentS: 29.999, silent: false });
    expect(silence(30_000, 0, 30_000)).toEqual({ silentS: 30, silent: true });
  });
});
