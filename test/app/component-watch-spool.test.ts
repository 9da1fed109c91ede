import { VirtualTimeScheduler } from 'rxjs';
import { describe, expect, it } from 'vitest';
import { watchComponents, type ComponentChange } from '../../src/app/component-watch.js';

describe('watchComponents: the database alarm says where the spool stands', () => {
  it('names the fill of the spool\'s own limit and the free space of its disk', () => {
    const scheduler = new VirtualTimeScheduler();
    const changes: ComponentChange[] = [];
    const watch = watchComponents({
      report: (c) => changes.push(c), brokerUrl: 'mqtt://127.0.0.1:1883', every_ms: 1000, scheduler,
      // 30 KiB spooled of a 1 GiB limit, while its disk has 12 KiB left (as on the full test disk).
      database: () => ({ dbReachable: false, lastError: 'connect ECONNREFUSED', spoolFillRatio: 30 * 1024 / 1024 ** 3, spoolDiskFreeBytes: 12 * 1024 }),
    });
    scheduler.schedule(() => watch.stop(), 1500);
    scheduler.flush();
    expect(changes).toEqual([{
      component: 'database', event: 'database_unreachable',
      failure: 'unreachable: connect ECONNREFUSED; results go to the spool (spool 0.0 % of its limit, 12.0 KiB free on its disk)',
    }]);
  });

  it('names the spool\'s size too when the sink gives it', () => {
    const scheduler = new VirtualTimeScheduler();
    const changes: ComponentChange[] = [];
    const watch = watchComponents({
      report: (c) => changes.push(c), brokerUrl: 'mqtt://127.0.0.1:1883', every_ms: 1000, scheduler,
      database: () => ({ dbReachable: false, lastError: 'connect ECONNREFUSED', spoolBytes: 3 * 1024 ** 2, spoolFillRatio: 3 / 1024, spoolDiskFreeBytes: 2 * 1024 ** 3 }),
    });
    scheduler.schedule(() => watch.stop(), 1500);
    scheduler.flush();
    expect(changes.map((c) => c.failure)).toEqual(['unreachable: connect ECONNREFUSED; results go to the spool (spool 3.0 MiB, 0.3 % of its limit, 2.0 GiB free on its disk)']);
  });
});
