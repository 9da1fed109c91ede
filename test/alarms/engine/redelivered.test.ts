/**
 * At-least-once delivery (issue 13): after a takeover or a broker failover a processor gets scans
 * again that were judged before, possibly behind newer ones (NATS redelivers an unacknowledged
 * message only after its ack_wait). A structural rule judges each key's evidence once, in logger
 * time: a result at or before the latest one judged neither raises nor clears, so an alarm is
 * never raised twice for one cause, whichever engine (restored from the snapshot) takes the scans.
 */
import { describe, expect, it } from 'vitest';
import { createAlarmEngine, type AlarmEngine } from '../../../src/alarms/engine/engine.js';
import { parseState } from '../../../src/alarms/engine/state-migration.js';
import type { AlarmInput } from '../../../src/alarms/types.js';
import { config, lookups, result, T0 } from '../fixtures.js';

const res = (s: number, vm: number): AlarmInput => ({ type: 'result', result: result(T0 + s * 1000, vm) });
const steps = (e: AlarmEngine, inputs: AlarmInput[]) => inputs.flatMap((i) => e.step(i).transitions).map((t) => `${t.kind} ${t.alarm.id} #${t.alarm.raiseCount}`);
/** A heavy vehicle: 160 MPa (above the 150 MPa advisory limit of the fixture's rule) for 3 s, then 100 MPa. */
const episode = [res(0, 100), res(1, 160), res(2, 165), res(3, 160), res(4, 100), res(5, 100)];

describe('alarm engine: scans delivered again', () => {
  it('the same scans again, on the same engine: nothing raised a second time', () => {
    const e = createAlarmEngine(config(), lookups);
    expect(steps(e, episode)).toEqual(['raised brannock-mere:vm-girder:g:S1-MID-G2:1 #1', 'cleared brannock-mere:vm-girder:g:S1-MID-G2:1 #1']);
    expect(steps(e, episode)).toEqual([]);
  });

  it('the scans of a cleared alarm redelivered to the next holder, behind newer ones: not raised again; a new excursion is', () => {
    const first = createAlarmEngine(config(), lookups);
    steps(first, episode);
    const next = createAlarmEngine(config(), lookups, first.snapshot());
    expect(parseState(first.snapshot()).keys['vm-girder|g:S1-MID-G2'].judgedToMs).toBe(T0 + 5000);
    // Newer scans first, then the unacknowledged old ones (the excursion among them) come back.
    expect(steps(next, [res(6, 100), res(7, 100), ...episode])).toEqual([]);
    expect(steps(next, [res(8, 170)])).toEqual(['raised brannock-mere:vm-girder:g:S1-MID-G2:1 #2']);
  });

  it('two scans in one millisecond: the one with the higher seq is judged, the same seq again is not, one without a seq is not', () => {
    const e = createAlarmEngine(config(), lookups);
    const at = (s: number, vm: number, seq: number | null): AlarmInput => ({ type: 'result', result: { ...result(T0 + s * 1000, vm), seq } });
    expect(steps(e, [at(0, 100, 1), at(0, 100, 2)])).toEqual([]);
    // The logger's clock gives seq 3 the same millisecond as seq 2: still a new scan.
    expect(steps(e, [at(1, 160, 3), at(1, 165, 4)])).toEqual(['raised brannock-mere:vm-girder:g:S1-MID-G2:1 #1']);
    expect(parseState(e.snapshot()).keys['vm-girder|g:S1-MID-G2']).toMatchObject({ judgedToMs: T0 + 1000, judgedSeq: 4 });
    // Back under the limit at seq 5, then seq 4 delivered again and a scan without a seq at that time: neither is judged.
    expect(steps(e, [at(2, 100, 5), at(2, 100, 6), at(3, 100, 7)])).toEqual(['cleared brannock-mere:vm-girder:g:S1-MID-G2:1 #1']);
    expect(steps(e, [at(3, 210, 7), at(3, 210, null), at(1, 210, 4)])).toEqual([]);
  });

  it('an active alarm neither cleared nor lowered by an old scan arriving late', () => {
    const e = createAlarmEngine(config(), lookups);
    steps(e, [res(0, 100), res(1, 210), res(2, 215)]);
    expect(steps(e, [res(0.5, 100), res(1.5, 120)])).toEqual([]);
    expect(e.visibleAlarms().map((a) => `${a.state} ${a.level} ${a.value}`)).toEqual(['active_unacknowledged alert 215']);
  });
});
