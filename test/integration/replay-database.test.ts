/**
 * Replay into the database under its own run tag, against a real VictoriaMetrics started here on a
 * free loopback port: live data (no run tag) is never overwritten.
 */
import { mkdtemp } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { main } from '../../src/cli/main.js';
import { loadStructureFile } from '../../src/config/load.js';
import { defaultScenario } from '../../simulators/default-scenario.js';
import { captureSink } from '../../simulators/outputs.js';
import { createSimulation } from '../../simulators/run.js';
import { startVictoriaMetrics } from '../support/servers.js';
import { writeRuntimeFile } from '../support/runtime-file.js';

describe('replay into the database', () => {
  let vm: Awaited<ReturnType<typeof startVictoriaMetrics>>;
  beforeAll(async () => { vm = await startVictoriaMetrics(); });
  afterAll(async () => { await vm?.stop(); });

  it('writes every result tagged with the run, beside (not over) other runs', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'sw-replay-db-'));
    const structure = await loadStructureFile('config/brannock-mere.yaml');
    const sim = createSimulation(structure, defaultScenario({ seed: 5, start_ms: Date.UTC(2026, 7, 1, 6), duration_s: 30, day_s: 600, faults: [] }));
    const sink = await captureSink(join(dir, 'capture'));
    let results = 0;
    for (const scan of sim.scans()) { await sink.send(scan); results += scan.truth.filter((t) => t.group === 'flange-south-mid1').length; }
    await sink.close();
    const runtime = await writeRuntimeFile(dir, 'mqtt://127.0.0.1:1', 'unused', [
      `database: { url: "${vm.url}", org: o, bucket: b, spool: { dir: ${join(dir, 'spool')} } }`,
    ]);
    const quiet = vi.spyOn(process.stderr, 'write').mockImplementation(() => true);
    try {
      for (const tag of ['before-fix', 'after-fix']) {
        expect(await main(['node', 'strainward', 'replay', '--capture', join(dir, 'capture'), '-c', runtime, '--database', '--run-tag', tag])).toBe(0);
      }
    } finally {
      quiet.mockRestore();
    }
    await vm.forceFlush();
    const series = await vm.exportSeries('sw_result_stress_axial_MPa{group="flange-south-mid1"}');
    expect(series.map((s) => s.metric.run).sort()).toEqual(['after-fix', 'before-fix']);
    for (const s of series) expect(s.values).toHaveLength(results);
    expect(series[0].values).toEqual(series[1].values); // same capture, same configuration
  });
});
