import { describe, expect, it } from 'vitest';
import { ringSlotBytes } from '../../src/config/compile-storage.js';
import { flagsFromBits } from '../../src/model/quality.js';
import { RESULT_QUANTITIES, type GroupResult } from '../../src/model/result.js';
import { inWindow, newResultRing, newWindowSpan, openWindow, ringBytes, ringDropBefore, ringPush, ringTakeFrom } from '../../src/pipeline/event-windows.js';
import { RESULT_FIELD_ORDER } from '../../src/results/group-result.js';

const result = (t: number, extra: Partial<GroupResult> = {}): GroupResult => ({
  structureId: 's', groupId: 'g', zone: 'z', loggerId: 'lg', timeMs: t, seq: t / 10,
  values: { strain_xx_micro: t / 7, stress_xx_MPa: -t / 3, von_mises_MPa: t / 11, temperature_degC: 12.5 },
  elementStrainMicro: { a: 1.5, c: -t }, flags: flagsFromBits(0), ...extra,
});

describe('pre-trigger ring', () => {
  it('keeps its memory fixed: pushing ten times its capacity neither grows it nor keeps more than it holds, and counts what it overwrote', () => {
    const ring = newResultRing('s', 'g', 'z', 'lg', ['a', 'b', 'c'], 64);
    const bytes = ringBytes(ring);
    expect(bytes).toBe(64 * ringSlotBytes(3));
    for (let i = 0; i < 640; i++) ringPush(ring, result(i * 10));
    expect(ringBytes(ring)).toBe(bytes);
    expect(ring.size).toBe(64);
    expect(ring.overwritten).toBe(576);
    const kept: number[] = [];
    ringTakeFrom(ring, Number.NEGATIVE_INFINITY, (r) => kept.push(r.timeMs));
    expect(kept).toEqual(Array.from({ length: 64 }, (_, i) => (576 + i) * 10));
    expect(ring.size).toBe(0);
  });

  it('gives a result back exactly as it was kept: values in the original field order, flags, seq, element strains', () => {
    const ring = newResultRing('s', 'g', 'z', 'lg', ['a', 'b', 'c'], 4);
    const original = result(1230, { seq: null, flags: flagsFromBits(0b1001) });
    ringPush(ring, original);
    const back: GroupResult[] = [];
    ringTakeFrom(ring, 0, (r) => back.push(r));
    expect(back).toEqual([original]);
    expect(Object.keys(back[0].values)).toEqual(Object.keys(original.values));
    expect(back[0].flags).toBe(original.flags); // the shared frozen set
  });

  it('drops what no future window can reach, and hands over only what a window covers', () => {
    const ring = newResultRing('s', 'g', 'z', 'lg', [], 100);
    for (let t = 0; t < 50; t++) ringPush(ring, result(t * 100));
    ringDropBefore(ring, 2000);
    expect(ring.size).toBe(30);
    const taken: number[] = [];
    expect(ringTakeFrom(ring, 4000, (r) => taken.push(r.timeMs))).toBe(10);
    expect(taken[0]).toBe(4000);
    expect(ring.size).toBe(0);
  });

  it('RESULT_FIELD_ORDER names every result quantity once', () => {
    expect([...RESULT_FIELD_ORDER].sort()).toEqual([...RESULT_QUANTITIES].sort());
  });
});

describe('event window spans', () => {
  it('a trigger stores from before_s ahead of it to after_s after it; overlapping or touching triggers merge into one span', () => {
    const w = newWindowSpan();
    expect(inWindow(w, 0)).toBe(false);
    expect(openWindow(w, 10_000, 2000, 3000)).toEqual({ merged: false, fromMs: 8000 });
    expect(inWindow(w, 8000) && inWindow(w, 13_000) && !inWindow(w, 13_001) && !inWindow(w, 7999)).toBe(true);
    // Its pre-trigger part overlaps the span: one span, to the later end.
    expect(openWindow(w, 14_000, 2000, 3000)).toEqual({ merged: true, fromMs: 8000 });
    expect([w.startMs, w.endMs]).toEqual([8000, 17_000]);
    // Touching (start at the end) merges too.
    expect(openWindow(w, 19_000, 2000, 3000).merged).toBe(true);
    expect(w.endMs).toBe(22_000);
    // Clear of it: a new span.
    expect(openWindow(w, 40_000, 2000, 3000)).toEqual({ merged: false, fromMs: 38_000 });
    expect([w.startMs, w.endMs]).toEqual([38_000, 43_000]);
  });
});
