import { describe, expect, it } from 'vitest';
import { ComponentFaultRegister } from '../../src/app/component-faults.js';
import { readableBytes, statusDetailLines, statusDetails } from '../../src/app/status-details.js';

describe('status details: what a processor reports, read back from its presence message', () => {
  const online = {
    state: 'online', processor: 'sw-1', structure: 'brannock-mere', at: '2026-12-02T00:00:00.000Z', every_s: 10,
    database_reachable: false, spool_fill_ratio: 0.25, spool_bytes: 268_435_456, spool_limit_bytes: 1024 ** 3, spool_disk_free_bytes: 5 * 1024 ** 3,
    rejected_messages: 3, rejected_by_code: { unknown_channel: 1, not_json: 2 },
    open_alarms: { total: 2, by_level: { action: 0, alert: 1, advisory: 1 }, unacknowledged: 1 },
    component_faults: [{ component: 'database', failure: 'unreachable: connect ECONNREFUSED', since: '2026-12-01T23:59:00.000Z' }],
  };

  it('prints the database, the spool (a quarter of 1 GiB = 256 MiB), dead letters by reason, alarms by level and each fault', () => {
    expect(statusDetailLines(statusDetails(online)!)).toEqual([
      '  database: UNREACHABLE (results go to the spool)',
      '  spool: 25.0 % of its limit 1.0 GiB (256.0 MiB); disk free 5.0 GiB',
      '  rejected messages (dead letters): 3 (not_json 2, unknown_channel 1)',
      '  open alarms: 2 (action 0, alert 1, advisory 1); unacknowledged 1',
      '  COMPONENT FAULT database since 2026-12-01T23:59:00.000Z: unreachable: connect ECONNREFUSED',
    ]);
  });

  it('a field missing or malformed (an older processor) is unknown, not a failure; the last will has no details', () => {
    const d = statusDetails({ ...online, spool_bytes: 'lots', open_alarms: undefined, component_faults: undefined })!;
    expect(d.spool_bytes).toBeNull();
    expect(statusDetailLines(d).slice(1)).toEqual([
      '  spool: 25.0 % of its limit 1.0 GiB (unknown); disk free 5.0 GiB',
      '  rejected messages (dead letters): 3 (not_json 2, unknown_channel 1)',
      '  open alarms: unknown (no alarms section, or not reported)',
      '  component faults: unknown',
    ]);
    expect(statusDetails({ ...online, state: 'offline' })).toBeNull();
    expect(statusDetails(null)).toBeNull();
  });

  it('bytes: B below 1 KiB, then one decimal in binary units', () => {
    expect([readableBytes(1023), readableBytes(1536), readableBytes(3 * 1024 ** 2), readableBytes(1024 ** 4)]).toEqual(['1023 B', '1.5 KiB', '3.0 MiB', '1.0 TiB']);
  });
});

describe('component fault register', () => {
  it('keeps the first time a fault was reported and the newest reason, and forgets a component once it works', () => {
    const r = new ComponentFaultRegister();
    r.note({ type: 'component', component: 'spool', failure: 'ENOSPC', atMs: Date.UTC(2026, 0, 1, 0, 0, 0) });
    r.note({ type: 'component', component: 'database', failure: 'unreachable', atMs: Date.UTC(2026, 0, 1, 0, 0, 5) });
    r.note({ type: 'component', component: 'spool', failure: 'ENOSPC again', atMs: Date.UTC(2026, 0, 1, 0, 1, 0) });
    expect(r.list()).toEqual([
      { component: 'database', failure: 'unreachable', since: '2026-01-01T00:00:05.000Z' },
      { component: 'spool', failure: 'ENOSPC again', since: '2026-01-01T00:00:00.000Z' },
    ]);
    r.note({ type: 'component', component: 'database', failure: null, atMs: Date.UTC(2026, 0, 1, 0, 2, 0) });
    expect(r.list().map((f) => f.component)).toEqual(['spool']);
  });
});
