import { afterEach, describe, expect, it, vi } from 'vitest';
import { settlesWithin, withTimeout } from '../../src/app/time-bound.js';

afterEach(() => { vi.useRealTimers(); });

describe('waiting with a bound', () => {
  it('settlesWithin: true in time, false past the bound, a rejection in time rethrown; no timer left behind', async () => {
    vi.useFakeTimers();
    expect(await settlesWithin(Promise.resolve(), 1000)).toBe(true);
    expect(vi.getTimerCount()).toBe(0);
    const never = settlesWithin(new Promise(() => {}), 1000);
    await vi.advanceTimersByTimeAsync(999);
    const early = await Promise.race([never, Promise.resolve('pending')]);
    expect(early).toBe('pending');
    await vi.advanceTimersByTimeAsync(1);
    expect(await never).toBe(false);
    await expect(settlesWithin(Promise.reject(new Error('broker gone')), 1000)).rejects.toThrow('broker gone');
    expect(vi.getTimerCount()).toBe(0);
  });

  it('withTimeout: the value in time, else the message; no timer left behind', async () => {
    vi.useFakeTimers();
    expect(await withTimeout(Promise.resolve(7), 500, 'late')).toBe(7);
    expect(vi.getTimerCount()).toBe(0);
    const late = withTimeout(new Promise(() => {}), 500, 'no answer within 500 ms');
    const caught = late.catch((e: Error) => e.message);
    await vi.advanceTimersByTimeAsync(500);
    expect(await caught).toBe('no answer within 500 ms');
  });
});
