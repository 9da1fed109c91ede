import { VirtualTimeScheduler } from 'rxjs';
import { describe, expect, it } from 'vitest';
import { failureSummary } from '../../src/app/failure-summary.js';

describe('failureSummary', () => {
  it('a burst of 15,696 failures in 20 s gives 1 line at once and 1 line per 10 s with the count and the first reason', () => {
    const scheduler = new VirtualTimeScheduler();
    const lines: Array<{ event: string; detail?: Record<string, unknown> }> = [];
    const s = failureSummary((event, detail) => lines.push({ event, detail }), 'write_failed', 10_000, scheduler);
    // One failure every 1.274 ms for 20 s (15,696 frames), the reason changing halfway.
    for (let k = 0; k < 15_696; k++) {
      const at = Math.round(k * 1.274);
      scheduler.schedule(() => s.note(k < 8000 ? 'spool full: 32 points' : 'spool cannot be written: ENOSPC'), at);
    }
    scheduler.flush(); // runs every failure and the timers up to the quiet interval after them
    expect(lines).toEqual([
      { event: 'write_failed', detail: { failures: 1, reason: 'spool full: 32 points' } },
      { event: 'write_failed', detail: { failures: 7849, over_s: 10, first_reason: 'spool full: 32 points' } },
      { event: 'write_failed', detail: { failures: 7846, over_s: 10, first_reason: 'spool full: 32 points' } },
    ]);
    expect(lines.reduce((n, l) => n + (l.detail!.failures as number), 0)).toBe(15_696);
  });

  it('after a quiet interval the next failure is logged at once again; stop() logs what is left', () => {
    const scheduler = new VirtualTimeScheduler();
    const lines: Array<Record<string, unknown> | undefined> = [];
    const s = failureSummary((_e, detail) => lines.push(detail), 'write_failed', 1000, scheduler);
    s.note('a');
    scheduler.schedule(() => s.note('b'), 3500);
    scheduler.schedule(() => s.note('c'), 3600);
    scheduler.schedule(() => s.stop(), 3700);
    scheduler.flush();
    expect(lines).toEqual([
      { failures: 1, reason: 'a' },
      { failures: 1, reason: 'b' },
      { failures: 1, over_s: 1, first_reason: 'c' },
    ]);
  });
});
