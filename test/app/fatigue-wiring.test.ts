import { mkdtempSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { lastValueFrom, Subject, toArray } from 'rxjs';
import { describe, expect, it } from 'vitest';
import { MemorySink } from '../../src/adapters/memory-sink.js';
import { openFatigueStates, serialiseFatigueStates } from '../../src/app/fatigue-state-file.js';
import { attachFatigue } from '../../src/app/fatigue-wiring.js';
import type { FatigueInput } from '../../src/alarms/types.js';
import type { CompiledFatigue } from '../../src/config/compile-fatigue.js';
import { snCurve } from '../../src/fatigue/sn-curve.js';
import type { GroupResult } from '../../src/model/result.js';
import type { FatigueStates } from '../../src/pipeline/fatigue-stage.js';
import type { FrameOutput } from '../../src/pipeline/process-frames.js';

const cfg: CompiledFatigue = {
  writeIntervalMs: 300_000,
  details: [{
    id: 'd1', groupId: 'g1', location: 'test bench', describe: 'test', reader: { kind: 'axial', factor: 1 },
    params: { curve: snCurve('direct', 71), scf: 1, gateMPa: 1, binWidthMPa: 10, bins: 20, gapMs: 5000, checkpointMs: 60_000, checkpoints: 24 },
  }],
};
const T0 = Date.UTC(2026, 5, 1, 6); // on the 300 s grid

function frame(timeMs: number, stress: number, flagged = false): FrameOutput<null> {
  const r = { groupId: 'g1', timeMs, values: { stress_axial_MPa: stress }, flags: flagged ? ['reading_spike'] : [] } as unknown as GroupResult;
  return { kind: 'frame', frame: { structureId: 's', loggerId: 'l', timeMs, seq: null, values: new Map(), arrivalMs: timeMs + 40 }, message: null, results: [r], temperatures: {} };
}
/** Category-range cycles (0 / 71 MPa) every 2 s for 25 min, a flagged stretch of 10 s at 12 min. */
const frames = Array.from({ length: 1500 }, (_, i) => frame(T0 + i * 1000, i % 2 === 0 ? 0 : 71, i >= 720 && i < 730));

async function run(inputs: FrameOutput<null>[], states: FatigueStates, statePath: string, sink: MemorySink) {
  const processed$ = new Subject<FrameOutput<null>>();
  const w = attachFatigue(processed$, { cfg, structureId: 's', zoneOf: () => 'z1', locationOf: () => 'test bench', states, statePath, sink, pointTags: { run: 't' } });
  const alarms = lastValueFrom(w.alarmInputs$.pipe(toArray()));
  for (const f of inputs) processed$.next(f);
  processed$.complete();
  await w.close();
  return { wiring: w, alarms: await alarms };
}

describe('fatigue wiring: sw_fatigue points, the state file, alarm inputs', () => {
  it('writes every detail\'s figures and histogram on the logger-time grid, saves the state, hands each snapshot to the alarms', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'sw-fw-'));
    const sink = new MemorySink();
    const states: FatigueStates = new Map();
    const { alarms, wiring } = await run(frames, states, join(dir, 'fatigue.json'), sink);
    const figures = sink.points.filter((p) => p.measurement === 'sw_fatigue' && p.tags.bin_from_MPa === undefined);
    // Grid boundaries 06:05 ... 06:20 (the first result at or past each), then the end at 06:24:59.
    expect(figures.map((p) => (p.timeMs - T0) / 1000)).toEqual([300, 600, 900, 1200, 1499]);
    expect(figures[0].tags).toEqual({ structure: 's', detail: 'd1', group: 'g1', zone: 'z1', run: 't' });
    const last = figures[4].fields;
    // Source: EN 1993-1-9:2005 7.1: delta_sigma_C = 71 MPa is the strength at 2e6 cycles (Miner's rule, annex A):
    // damage = cycles / 2e6. 1500 values alternate 0/71 less the 10 flagged: 1490 values, 1489 ranges of 71 MPa, 744.5 cycles
    // (the last range a half cycle of the residue, ASTM E1049-85 5.4.4 step 6).
    expect(last.cycles).toBeCloseTo(744.5, 9);
    expect(last.damage).toBeCloseTo(744.5 / 2e6, 15);
    // From the last trusted value before the flagged stretch (719 s) to the next (730 s): 11 s not monitored.
    expect(last.not_monitored_s).toBeCloseTo(11, 9);
    expect(last.monitored_s).toBeCloseTo(1499 - 11, 9);
    // One cycle of 71 MPa every 2 s of monitored time: 43,200 cycles a day, 0.0216 damage a day, within 0.1 %: a cycle is
    // counted when the range after it closes it, so the counted damage lags its checkpoint by up to one 1 s range of the
    // 1488 s window: all the monitored time, shorter than 24 checkpoints of 60 s (0.07 %). The rest of the life is (1 - D) / rate.
    expect(Math.abs(last.damage_per_day / (43_200 / 2e6) - 1)).toBeLessThan(1e-3);
    expect(last.remaining_life_years).toBeCloseTo((1 - 744.5 / 2e6) / last.damage_per_day / 365.25, 9);
    const bins = sink.points.filter((p) => p.measurement === 'sw_fatigue' && p.tags.bin_from_MPa !== undefined && p.timeMs === figures[4].timeMs);
    expect(bins).toHaveLength(21);
    expect(bins.find((p) => p.tags.bin_from_MPa === '70')).toMatchObject({ tags: { bin_to_MPa: '80' }, fields: { bin_cycles: 744.5 } });
    expect(bins[20].tags).toMatchObject({ bin_from_MPa: '200', bin_to_MPa: 'inf' });
    expect(bins.reduce((n, p) => n + p.fields.bin_cycles, 0)).toBeCloseTo(744.5, 9);
    // The state file holds the end state; the alarms saw every snapshot, in order.
    expect(readFileSync(join(dir, 'fatigue.json'), 'utf8')).toBe(serialiseFatigueStates(states));
    expect(alarms.map((a: FatigueInput) => a.atMs)).toEqual(figures.map((p) => p.timeMs));
    expect(alarms[4].details[0]).toMatchObject({ detailId: 'd1', location: 'test bench', damage: last.damage, rateWindowS: 1488 });
    expect(wiring.status()?.details[0]).toMatchObject({ detail: 'd1', damage: last.damage });
    expect(wiring.counts()).toEqual({ snapshots: 5, errors: { points: 0, state: 0 } });
  });

  it('a run stopped and restarted from its state file counts what one run counts', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'sw-fw-'));
    const path = join(dir, 'fatigue.json');
    const whole = new MemorySink();
    await run(frames, new Map(), join(dir, 'whole.json'), whole);
    const warn = () => { throw new Error('no warning expected'); };
    await run(frames.slice(0, 777), (await openFatigueStates(cfg, path, { now: Date.now, warn })).states, path, new MemorySink());
    const second = new MemorySink();
    await run(frames.slice(777), (await openFatigueStates(cfg, path, { now: Date.now, warn })).states, path, second);
    const end = (s: MemorySink) => s.points.filter((p) => p.tags.bin_from_MPa === undefined).at(-1)!;
    expect(end(second).fields).toEqual(end(whole).fields);
    expect(readFileSync(path, 'utf8')).toBe(readFileSync(join(dir, 'whole.json'), 'utf8'));
  });

  it('a state file that cannot be read is kept aside and counting starts afresh, with an operations alarm', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'sw-fw-'));
    const path = join(dir, 'fatigue.json');
    writeFileSync(path, '{"version":1,"details":{"d1":{"damageCounted":');
    const warnings: string[] = [];
    const opened = await openFatigueStates(cfg, path, { now: () => Date.UTC(2026, 11, 2, 7, 30, 12), warn: (e) => warnings.push(e) });
    expect(opened.states.size).toBe(0);
    expect(warnings).toEqual(['fatigue_state_reset']);
    expect(readdirSync(dir)).toEqual(['fatigue.json.unreadable-20261202T073012Z']);
    expect(opened.startInputs.map((i) => [i.component, i.failure === null])).toEqual([['fatigue-state', false], ['fatigue-state', true]]);
  });

  it('a detail whose histogram changed starts afresh, the old file kept; other details continue', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'sw-fw-'));
    const path = join(dir, 'fatigue.json');
    const states: FatigueStates = new Map();
    await run(frames.slice(0, 100), states, path, new MemorySink());
    const wider: CompiledFatigue = { ...cfg, details: [{ ...cfg.details[0], params: { ...cfg.details[0].params, bins: 30 } }] };
    const warnings: string[] = [];
    const opened = await openFatigueStates(wider, path, { now: () => Date.UTC(2026, 11, 2), warn: (e) => warnings.push(e) });
    expect(opened.states.get('d1')!.samples).toBe(0);
    expect(opened.states.get('d1')!.histogram.counts).toHaveLength(31);
    expect(warnings).toEqual(['fatigue_detail_reset']);
    expect(readdirSync(dir).sort()).toEqual(['fatigue.json', 'fatigue.json.before-20261202T000000Z']);
    const kept = await openFatigueStates(cfg, path, { now: Date.now, warn: () => {} });
    expect(kept.states.get('d1')!.samples).toBe(100);
  });
});
