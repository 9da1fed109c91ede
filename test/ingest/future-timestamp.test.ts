import { describe, expect, it } from 'vitest';
import { DEFAULT_MAX_FUTURE_MS, decodeMessage } from '../../src/ingest/decode.js';
import { compileTopicPattern } from '../../src/ingest/topic.js';
import { directory, raw } from './fixtures.js';

const pattern = compileTopicPattern();
const ARRIVAL = 1_741_944_414_000;
const scanAt = (ts: number | string) => raw(JSON.stringify({ ts, values: { ch01: 1 } }), undefined, ARRIVAL);

describe('logger time ahead of the processor clock', () => {
  it('accepts up to the tolerance (default 5 s) and refuses beyond it, naming the field and the setting', () => {
    expect(DEFAULT_MAX_FUTURE_MS).toBe(5000);
    expect(decodeMessage(scanAt(ARRIVAL + 5000), directory, pattern).ok).toBe(true);
    const r = decodeMessage(scanAt(ARRIVAL + 5001), directory, pattern);
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.deadLetter.rejections).toEqual([{
      code: 'future_timestamp', path: 'ts',
      reason: "ts: 2025-03-14T09:26:59.001Z is 5.0 s ahead of the processor's clock (arrival 2025-03-14T09:26:54.000Z), more than ingest.max_future_s = 5 s: check the logger's clock",
    }]);
    // The refusal still names the logger and its time: evidence for its clock alarm.
    expect(r.loggerId).toBe('span1-north');
    expect(r.timeMs).toBe(ARRIVAL + 5001);
  });

  it('applies to ISO times too, takes the configured tolerance, and leaves late scans alone', () => {
    expect(decodeMessage(scanAt('2025-03-14T10:26:54Z'), directory, pattern).ok).toBe(false);
    expect(decodeMessage(scanAt('2025-03-14T10:26:54Z'), directory, pattern, { maxFutureMs: 3_600_000 }).ok).toBe(true);
    expect(decodeMessage(scanAt(ARRIVAL - 86_400_000), directory, pattern).ok).toBe(true);
    // An unreadable time is an invalid_timestamp only, never also a future one.
    const bad = decodeMessage(scanAt(ARRIVAL / 1000), directory, pattern);
    expect(bad.ok ? [] : bad.deadLetter.rejections.map((x) => x.code)).toEqual(['invalid_timestamp']);
  });
});
