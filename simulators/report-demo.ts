/**
 * Demo: a compressed simulated day through the mechanics and into the diagnosis report.
 * Results are evaluated at the true group temperature (not through the live pipeline); the
 * health "alarms" are the fault log's expected alarms, so the page shows what a run should raise.
 * A second, noise-free run is compared with the first. Usage:
 *   npx tsx simulators/report-demo.ts [out.html] [duration_s]
 */
import { writeFile } from 'node:fs/promises';
import { loadStructureFile } from '../src/config/load.js';
import { evaluateGroup } from '../src/mechanics/evaluate-group.js';
import { createGroupOutput } from '../src/mechanics/group-model.js';
import type { GroupResult } from '../src/model/result.js';
import { renderReport } from '../src/report/render-report.js';
import type { ReportAlarmTransition } from '../src/report/types.js';
import { toGroupResult } from '../src/results/group-result.js';
import { defaultScenario } from './default-scenario.js';
import type { FaultLogEntry } from './faults.js';
import { createSimulation } from './run.js';

const outPath = process.argv[2] ?? 'report-demo.html';
const duration = Number(process.argv[3] ?? 600);
const structure = await loadStructureFile('config/brannock-mere.yaml');
const start = Date.UTC(2025, 5, 1, 6);

function results(noise: boolean): { results: GroupResult[]; log: FaultLogEntry[] } {
  const scn = defaultScenario({ seed: 1, start_ms: start, duration_s: duration, day_s: duration, noise });
  const sim = createSimulation(structure, scn);
  const outs = new Map(structure.groups.map((g) => [g.config.id, createGroupOutput(g.model.m)]));
  const rs: GroupResult[] = [];
  for (const scan of sim.scans()) {
    for (const t of scan.truth) {
      const g = structure.groupsById.get(t.group)!;
      const v = (ch: string) => { const x = scan.values[ch]; return x === null || x === undefined ? Number.NaN : x; };
      const out = outs.get(t.group)!;
      evaluateGroup(g.model, Float64Array.from(g.elementChannels, v), t.temperature_degC, g.companion ? v(g.companion.channelId) : Number.NaN, out);
      rs.push(toGroupResult(structure.structureId, g, out, scan.loggerMs, scan.seq, 0, 0));
    }
  }
  return { results: rs, log: sim.faultLog };
}

const a = results(true);
const b = results(false);
const alarms: ReportAlarmTransition[] = a.log.flatMap((f) => f.expected_health.flatMap((check) => {
  const base = { alarm_id: `${f.id}:${check}`, class: 'health' as const, level: 'notice', group_id: f.groups[0], channel: f.channel ?? f.logger, quantity: check, message: `expected from fault ${f.id}: ${f.note}` };
  return [
    { ...base, time_ms: f.start_ms, state: 'active_unacknowledged' },
    ...(f.end_ms !== null ? [{ ...base, time_ms: f.end_ms, state: 'cleared_unacknowledged' }] : []),
  ];
}));
const t0 = performance.now();
const html = renderReport({
  title: 'Brannock Mere Crossing – simulated compressed day', structureId: structure.structureId, generatedAtMs: start + duration * 1000,
  run: { label: 'noisy', results: a.results }, comparison: { label: 'noise-free', results: b.results }, alarms,
  limits: { von_mises_MPa: [{ level: 'warning', upper: 80 }, { level: 'alarm', upper: 150 }], fit_std_error_micro: [{ level: 'limit', upper: 20 }] },
});
const renderMs = performance.now() - t0;
await writeFile(outPath, html);
console.log(JSON.stringify({ out: outPath, results: a.results.length, bytes: html.length, render_ms: Math.round(renderMs) }));
