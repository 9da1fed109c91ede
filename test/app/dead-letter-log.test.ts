import { VirtualTimeScheduler } from 'rxjs';
import { describe, expect, it } from 'vitest';
import { deadLetterLog } from '../../src/app/dead-letter-log.js';
import type { DeadLetter, Rejection } from '../../src/model/rejection.js';

const letter = (logger: string, rejection: Rejection): DeadLetter => ({
  topic: `strainward/deck/${logger}/scan`, arrivalMs: 0, arrivalIso: '1970-01-01T00:00:00.000Z', payloadBase64: '', payloadText: '', rejections: [rejection],
});
const notJson: Rejection = { code: 'not_json', path: '', reason: 'payload is not JSON' };
const badValue: Rejection = { code: 'non_finite_value', path: 'values.ch07', reason: 'values.ch07 is not a finite number' };

describe('deadLetterLog', () => {
  it('per logger: the first refusal at once, then one line per 10 s with the count and the first reason; every letter reaches the sink', async () => {
    const scheduler = new VirtualTimeScheduler();
    const lines: Array<Record<string, unknown> | undefined> = [];
    const written: DeadLetter[] = [];
    const log = deadLetterLog({ write: async (d) => { written.push(d); } }, (_e, d) => lines.push(d), 10_000, scheduler, (t) => t.split('/')[2]);
    // LG-01 refused every 100 ms for 25 s (250 letters); LG-02 twice.
    for (let k = 0; k < 250; k++) scheduler.schedule(() => { void log.write(letter('LG-01', k < 120 ? notJson : badValue)); }, k * 100);
    scheduler.schedule(() => { void log.write(letter('LG-02', badValue)); }, 500);
    scheduler.schedule(() => { void log.write(letter('LG-02', notJson)); }, 700);
    scheduler.flush();
    await Promise.resolve();
    expect(written).toHaveLength(252);
    const of = (logger: string) => lines.filter((l) => l?.logger === logger);
    expect(of('LG-01')).toEqual([
      { logger: 'LG-01', messages: 1, over_s: undefined, first_reason: 'not_json: payload is not JSON' },
      { logger: 'LG-01', messages: 100, over_s: 10, first_reason: 'not_json: payload is not JSON' }, // 100 ms .. 10.0 s
      { logger: 'LG-01', messages: 100, over_s: 10, first_reason: 'not_json: payload is not JSON' }, // the reason changes at 12 s
      { logger: 'LG-01', messages: 49, over_s: 10, first_reason: 'non_finite_value at values.ch07: values.ch07 is not a finite number' },
    ]);
    expect(of('LG-01').reduce((n, l) => n + (l!.messages as number), 0)).toBe(250);
    expect(of('LG-02')).toEqual([
      { logger: 'LG-02', messages: 1, over_s: undefined, first_reason: 'non_finite_value at values.ch07: values.ch07 is not a finite number' },
      { logger: 'LG-02', messages: 1, over_s: 10, first_reason: 'not_json: payload is not JSON' },
    ]);
  });
});
