import { describe, expect, it } from 'vitest';
import { createAlarmEngine } from '../../../src/alarms/engine/engine.js';
import { alarmMessage, alarmText, selectDeliveries, transitionToPoint } from '../../../src/alarms/index.js';
import type { AlarmInput, AlarmTransition } from '../../../src/alarms/types.js';
import { config, lookups, T0 } from '../fixtures.js';

const fault = (s: number, failure: string | null): AlarmInput => ({ type: 'component', component: 'spool', failure, atMs: T0 + s * 1000 });
const ENOSPC = 'spool cannot be written: 3 points (3003 bytes) not stored: ENOSPC: no space left on device, write';

function run(inputs: AlarmInput[], cfg = config()): AlarmTransition[] {
  const engine = createAlarmEngine(cfg, lookups);
  return inputs.flatMap((i) => engine.step(i).transitions);
}

describe('alarm engine: component_fault (the processor\'s own parts)', () => {
  it('raises one health alarm per component while it fails, merges repeats, clears when it works again', () => {
    const t = run([fault(0, ENOSPC), fault(1, ENOSPC), fault(30, null)]);
    expect(t.map((x) => x.kind)).toEqual(['raised', 'cleared']);
    expect(t[0].alarm).toMatchObject({
      id: 'brannock-mere:component_fault:p:spool:1', alarmClass: 'health', ruleId: 'component_fault', zone: 'processor',
      subject: { kind: 'component', component: 'spool' }, location: 'processor spool', level: 'advisory', sinceMs: T0,
    });
    expect(t[0].alarm.action).toContain(`Reported: ${ENOSPC}`);
    expect(t[1].atMs).toBe(T0 + 30_000);
  });

  it('is routed to the health crews and says what failed in the message, the text and the sw_alarm point', () => {
    const cfg = config();
    const [raised] = run([fault(0, ENOSPC)], cfg);
    expect(selectDeliveries(cfg, raised).map((d) => d.recipientId)).toEqual(['instr-crew']);
    expect(alarmMessage(raised).subject).toEqual({ kind: 'component', component: 'spool' });
    expect(alarmText(raised)).toContain('(processor spool)');
    expect(alarmText(raised)).toContain('ENOSPC');
    expect(transitionToPoint(raised).tags).toMatchObject({ rule: 'component_fault', component: 'spool', zone: 'processor' });
  });

  it('a component that never failed, or the check disabled, raises nothing', () => {
    expect(run([fault(0, null)])).toEqual([]);
    expect(run([fault(0, ENOSPC)], config({ health: { level: 'advisory', component_fault: { enabled: false } } }))).toEqual([]);
  });
});
