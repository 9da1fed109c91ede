import { describe, expect, it } from 'vitest';
import { MemorySink } from '../../src/adapters/memory-sink.js';

describe('MemorySink', () => {
  it('keeps copies in write order, drops non-finite fields and skips points with none left', async () => {
    const sink = new MemorySink();
    const tags = { structure: 'brannock-mere' };
    const first = { measurement: 'sw_result', tags, fields: { a_MPa: 1.5, b_MPa: NaN }, timeMs: 10 };
    await sink.write([first, { measurement: 'sw_result', tags, fields: { a_MPa: Infinity }, timeMs: 11 }]);
    await sink.write([{ measurement: 'sw_result', tags, fields: { a_MPa: -2 }, timeMs: 12 }]);
    expect(sink.points).toEqual([
      { measurement: 'sw_result', tags, fields: { a_MPa: 1.5 }, timeMs: 10 },
      { measurement: 'sw_result', tags, fields: { a_MPa: -2 }, timeMs: 12 },
    ]);
    expect(sink.points[0].tags).not.toBe(tags);
    await sink.close();
    await expect(sink.write([first])).rejects.toThrow(/after close/);
  });
});
