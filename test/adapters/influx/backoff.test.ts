import { describe, expect, it } from 'vitest';
import { backoffDelay_ms } from '../../../src/adapters/influx/backoff.js';

describe('backoffDelay_ms', () => {
  it('starts at the minimum, doubles, and stops at the cap', () => {
    expect([1, 2, 3, 4, 5, 6].map((a) => backoffDelay_ms(a, 100, 1000))).toEqual([100, 200, 400, 800, 1000, 1000]);
    expect(backoffDelay_ms(1_000, 100, 1000)).toBe(1000);
  });
});
