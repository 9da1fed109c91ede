import { from, lastValueFrom, toArray } from 'rxjs';
import { describe, expect, it } from 'vitest';
import type { CompiledFatigue } from '../../src/config/compile-fatigue.js';
import { snCurve } from '../../src/fatigue/sn-curve.js';
import type { GroupResult } from '../../src/model/result.js';
import { fatigueStage, type FatigueStates } from '../../src/pipeline/fatigue-stage.js';
import type { FrameOutput } from '../../src/pipeline/process-frames.js';

const cfg: CompiledFatigue = {
  writeIntervalMs: 10_000,
  details: [{
    id: 'd1', groupId: 'g1', location: 'test bench', describe: 'test', reader: { kind: 'plane', a: 1, b: 0, c: 0 },
    params: { curve: snCurve('direct', 71), scf: 1, gateMPa: 1, binWidthMPa: 10, bins: 20, gapMs: 5000, checkpointMs: 3_600_000, checkpoints: 24 },
  }],
};

function frame(timeMs: number, xx: number, flagged = false): FrameOutput<null> {
  const r = { groupId: 'g1', timeMs, values: { stress_xx_MPa: xx }, flags: flagged ? ['reading_spike'] : [] } as unknown as GroupResult;
  return { kind: 'frame', frame: { structureId: 's', loggerId: 'l', timeMs, seq: null, values: new Map(), arrivalMs: timeMs }, message: null, results: [r], temperatures: {} };
}

describe('fatigue stage', () => {
  it('counts trusted results only, snapshots on the pipeline clock, and continues from restored states', async () => {
    const inputs: FrameOutput<null>[] = [];
    for (let i = 0; i < 400; i++) inputs.push(frame(i * 100, i % 2 === 0 ? 0 : 71, i >= 200 && i < 210));
    const states: FatigueStates = new Map();
    const snaps = await lastValueFrom(from(inputs).pipe(fatigueStage(cfg, states), toArray()));
    expect(snaps.map((s) => s.nowMs)).toEqual([10_000, 20_000, 30_000, 39_900]);
    const f = snaps[3].details[0].figures;
    // Flagged results 200-209 are not counted; 1.1 s from result 199 to 210 is not monitored.
    expect(f.notMonitoredS).toBeCloseTo(1.1, 9);
    expect(f.monitoredS).toBeCloseTo(39.9 - 1.1, 9);
    // Source: EN 1993-1-9:2005 7.1: at delta_sigma_C, N = 2e6; the sequence joins across the flagged stretch.
    expect(f.damage).toBeCloseTo(f.cycles / 2e6, 15);
    expect(f.cycles).toBeCloseTo((399 - 10) / 2, 9);

    // A second run continues the same states (as after a restart with the state file).
    const more: FrameOutput<null>[] = [];
    for (let i = 400; i < 600; i++) more.push(frame(i * 100, i % 2 === 0 ? 0 : 71));
    const snaps2 = await lastValueFrom(from(more).pipe(fatigueStage(cfg, states), toArray()));
    expect(snaps2[snaps2.length - 1].details[0].figures.cycles).toBeCloseTo((599 - 10) / 2, 9);
  });
});
