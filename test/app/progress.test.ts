import { describe, expect, it } from 'vitest';
import { formatDuration, ProgressBar } from '../../src/app/progress.js';

describe('replay progress bar', () => {
  it('shows the fraction, the rate and the time left from an injected clock', () => {
    let now = 0;
    const lines: string[] = [];
    const bar = new ProgressBar(1000, { write: (s: string) => lines.push(s), isTTY: false }, () => now, 'replay');
    now = 2000; // 250 messages in 2 s: 125 msg/s, 750 left -> 6 s
    bar.update(250);
    expect(lines.at(-1)).toBe('replay [########......................] 25.0% 250/1000 messages, 125 msg/s, 0:06 left\n');
    now = 2050;
    bar.update(260); // within 100 ms of the last draw: not redrawn
    expect(lines).toHaveLength(1);
    now = 8000;
    bar.finish(1000);
    expect(lines.at(-1)).toContain('100.0% 1000/1000 messages, 125 msg/s, 0:00 left');
  });

  it('redraws in place on a terminal', () => {
    const out: string[] = [];
    const bar = new ProgressBar(10, { write: (s: string) => out.push(s), isTTY: true }, () => 1000);
    bar.finish(10);
    expect(out[0].startsWith('\r')).toBe(true);
    expect(out.at(-1)).toBe('\n');
    expect(formatDuration(3725)).toBe('1:02:05');
  });
});
