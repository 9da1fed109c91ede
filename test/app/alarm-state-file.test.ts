import { mkdtemp, readdir, readFile, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Subject } from 'rxjs';
import { describe, expect, it } from 'vitest';
import { MemorySink } from '../../src/adapters/memory-sink.js';
import { attachAlarms, openAlarmFiles, type AckEvent } from '../../src/app/alarms-wiring.js';
import { createAlarmEngine } from '../../src/alarms/engine/engine.js';
import type { FrameOutput } from '../../src/pipeline/process-frames.js';
import { config, frame, lookups, result, T0 } from '../alarms/fixtures.js';

const NOW = T0 + 3_600_000; // the restart, an hour after the alarms below were raised

async function files() {
  const dir = await mkdtemp(join(tmpdir(), 'sw-alarm-state-'));
  return { dir, state: join(dir, 'alarm-state.json'), log: join(dir, 'alarms.ndjson') };
}

/** Opens the files as `run` does and feeds one over-limit scan; returns the alarm ids and the log events. */
async function startAndRaise(state: string, log: string) {
  const events: Array<{ event: string; detail: Record<string, unknown> }> = [];
  const opened = await openAlarmFiles(config(), lookups, state, log, { now: () => NOW, log: (event, detail) => events.push({ event, detail }) });
  const processed$ = new Subject<FrameOutput<unknown>>();
  const wiring = attachAlarms(processed$, new Subject<AckEvent>(), { cfg: config(), lookups, now: () => NOW, sink: new MemorySink(), ...opened });
  const ids: string[] = [];
  const f = frame(NOW, { ch01: 1, ch02: 2 });
  processed$.next({ kind: 'frame', frame: f, message: null, results: [result(NOW, 260)], temperatures: {} });
  processed$.complete();
  await wiring.close();
  const lines = (await readFile(log, 'utf8')).trim().split('\n').map((l) => JSON.parse(l)).filter((l) => l.type === 'transition');
  for (const l of lines) ids.push(`${l.message.transition} ${l.message.alarm_id}`);
  return { events, ids, visible: wiring.visibleAlarms() };
}

describe('alarm state file at start', () => {
  it('a snapshot that cannot be read: kept aside, fresh state, operations alarm, ids past the earlier ones', async () => {
    const f = await files();
    // Before: a run raised vm-girder occurrence 1 (in the log), and its snapshot was then damaged.
    const first = await startAndRaise(f.state, f.log);
    expect(first.ids).toEqual(['raised brannock-mere:vm-girder:g:S1-MID-G2:1']);
    const damaged = '{"format":"strainward.alarm-state","version":2,"keys":{"vm-girder|g:S1-MID';
    await writeFile(f.state, damaged);

    const second = await startAndRaise(f.state, f.log);
    const floor = Math.floor(NOW / 1000);
    const kept = `alarm-state.json.unreadable-20310512T090000Z`;
    expect((await readdir(f.dir)).sort()).toEqual(['alarm-state.json', kept, 'alarms.ndjson']);
    expect(await readFile(join(f.dir, kept), 'utf8')).toBe(damaged);
    expect(second.events.map((e) => e.event)).toEqual(['alarm_state_reset']);
    expect(second.events[0].detail.message).toMatch(/kept as .*unreadable-20310512T090000Z.*fresh alarm state.*look in the alarm log .*alarms\.ndjson.*acknowledge the "alarm-state" operations alarm/);
    expect(second.ids.slice(1)).toEqual([
      `raised brannock-mere:component_fault:p:alarm-state:${floor + 1}`,
      `cleared brannock-mere:component_fault:p:alarm-state:${floor + 1}`,
      `raised brannock-mere:vm-girder:g:S1-MID-G2:${floor + 1}`,
    ]);
    // The reset alarm stays visible until acknowledged, and says why.
    const reset = second.visible.find((a) => a.ruleId === 'component_fault')!;
    expect(reset.state).toBe('cleared_unacknowledged');
    expect(reset.action).toMatch(/alarm state file could not be read \(alarm snapshot is not JSON.*\); started with fresh state/);
    // And the fresh state is written where the damaged one was, readable.
    const restored = createAlarmEngine(config(), lookups, await readFile(f.state, 'utf8'));
    expect(restored.visibleAlarms().map((a) => a.id).sort()).toEqual(second.visible.map((a) => a.id).sort());
  });

  it('no state file but alarms in the log (the file removed by hand): fresh state numbered past the earlier ids', async () => {
    const f = await files();
    await startAndRaise(f.state, f.log);
    await writeFile(f.state + '.gone', await readFile(f.state));
    const { rm } = await import('node:fs/promises');
    await rm(f.state);
    const again = await startAndRaise(f.state, f.log);
    expect(again.events.map((e) => e.event)).toEqual(['alarm_state_missing']);
    expect(again.ids.slice(1)).toEqual([`raised brannock-mere:vm-girder:g:S1-MID-G2:${Math.floor(NOW / 1000) + 1}`]);
  });

  it('a first start (no state file, empty log) numbers alarms from 1; a readable snapshot is restored as is', async () => {
    const f = await files();
    const first = await startAndRaise(f.state, f.log);
    expect(first.events).toEqual([]);
    expect(first.ids).toEqual(['raised brannock-mere:vm-girder:g:S1-MID-G2:1']);
    const again = await startAndRaise(f.state, f.log);
    expect(again.events).toEqual([]);
    expect(again.visible.map((a) => `${a.id} ${a.state}`)).toEqual(['brannock-mere:vm-girder:g:S1-MID-G2:1 active_unacknowledged']);
  });
});
