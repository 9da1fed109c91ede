import { describe, expect, it } from 'vitest';
import { CliOptionsSchema } from '../../simulators/cli-options.js';

const good = {
  config: 'config/brannock-mere.yaml', seed: '4', start: '2025-06-01T06:00:00Z', durationS: '600', dayS: '600', rateFactor: '1',
  speed: '0', faults: 'debond,silent', noise: true, messages: false, out: 'var/x', broker: 'mqtt://127.0.0.1:1883',
};

describe('simulator CLI options', () => {
  it('converts good options', () => {
    const o = CliOptionsSchema.parse(good);
    expect(o.seed).toBe(4);
    expect(o.start).toBe(Date.UTC(2025, 5, 1, 6));
    expect(o.faults).toEqual(['debond', 'silent']);
    expect(CliOptionsSchema.parse({ ...good, faults: 'all' }).faults).toHaveLength(6);
    expect(CliOptionsSchema.parse({ ...good, faults: 'none' }).faults).toEqual([]);
    const now = CliOptionsSchema.parse({ ...good, start: 'now' }).start;
    expect(now % 1000).toBe(0);
    expect(Math.abs(now - Date.now())).toBeLessThan(2000);
  });

  it('names the field and the reason for bad ones', () => {
    const r = CliOptionsSchema.safeParse({ ...good, seed: '1.5', start: 'yesterday', faults: 'debond,flood', broker: 'http://x', durationS: '-3' });
    expect(r.success).toBe(false);
    const paths = r.error!.issues.map((i) => String(i.path[0])).sort();
    expect(paths).toEqual(['broker', 'durationS', 'faults', 'seed', 'start']);
    expect(r.error!.issues.find((i) => i.path[0] === 'faults')!.message).toContain('unknown fault "flood"');
  });
});
