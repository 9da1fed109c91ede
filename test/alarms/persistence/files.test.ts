import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { mkdtemp, readdir, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { loadSnapshot, saveSnapshot } from '../../../src/alarms/persistence/snapshot-file.js';
import { openAlarmLog } from '../../../src/alarms/routing/alarm-log.js';
import { createAlarmEngine } from '../../../src/alarms/engine/engine.js';
import { config, lookups, result, T0 } from '../fixtures.js';

let dir = '';
beforeEach(async () => {
  dir = await mkdtemp(join(tmpdir(), 'sw-alarms-'));
});
afterEach(async () => {
  await rm(dir, { recursive: true, force: true });
});

describe('snapshot file', () => {
  it('is absent at first, then holds the last snapshot, written without leaving temp files', async () => {
    const path = join(dir, 'state', 'alarms.json');
    expect(await loadSnapshot(path)).toBeNull();
    const e = createAlarmEngine(config(), lookups);
    e.step({ type: 'result', result: result(T0, 260) });
    await saveSnapshot(path, e.snapshot());
    e.step({ type: 'result', result: result(T0 + 1000, 100) });
    await saveSnapshot(path, e.snapshot());
    expect(await readdir(join(dir, 'state'))).toEqual(['alarms.json']);
    const restored = createAlarmEngine(config(), lookups, (await loadSnapshot(path))!);
    expect(restored.visibleAlarms().map((a) => a.state)).toEqual(['cleared_unacknowledged']);
  });
});

describe('alarm log', () => {
  it('appends one JSON object per line, in call order, across reopenings', async () => {
    const path = join(dir, 'log', 'alarms.ndjson');
    const e = createAlarmEngine(config(), lookups);
    const t = e.step({ type: 'result', result: result(T0, 260) }).transitions[0];
    let log = await openAlarmLog(path);
    void log.transition(t);
    void log.refusal({ code: 'user_not_allowed', alarmId: t.alarm.id, user: 'x', userReason: 'r', reason: 'no', atMs: T0 });
    await log.close();
    log = await openAlarmLog(path);
    await log.transition(t);
    await log.close();
    const lines = (await readFile(path, 'utf8')).trimEnd().split('\n').map((l) => JSON.parse(l));
    expect(lines.map((l) => l.type)).toEqual(['transition', 'refusal', 'transition']);
    expect(lines[0]).toMatchObject({ at: '2031-05-12T08:00:00.000Z', message: { alarm_id: t.alarm.id, level: 'action', value: 260 } });
  });
});
