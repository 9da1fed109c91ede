/**
 * bench:fatigue - what fatigue counting costs the pipeline, per frame of CPU, in one run.
 *
 * The benchmark logger (bench/support/bench-structure.ts: 32 channels, ten rosettes) gets a
 * `fatigue` section with one detail per rosette (half the stress along x, half principal 1),
 * and the same scans (100 Hz of logger time, encoded beforehand) go through `replay()` - the
 * pipeline that runs live: decode, frame processor, write encoding into a sink that takes the
 * lines and drops them (no server: the database's own cost would only hide the ratio), and, with
 * fatigue, the fatigue wiring (stage, `sw_fatigue` points, alarm inputs). Rounds alternate the
 * structure without and with fatigue, so a neighbour's load on the shared machine touches both;
 * each variant's figure is its median round. CPU is this process's (`process.cpuUsage`, every
 * thread), after a full collection before each round. Then the fatigue stage alone, over the
 * outputs recorded from one run: an upper bound rather than the cost in the pipeline (the results
 * are read back cold from a large array, and iterating them with RxJS is counted too), but one the
 * neighbours' load touches less. Last printed line: one JSON object.
 * Environment: SW_BENCH_FRAMES (default 40,000 per round), SW_BENCH_ROUNDS (default 7 per variant).
 */
import { benchStructure, benchStructureDoc, BENCH_LOGGER, ROSETTES, scanValueBodies } from './support/bench-structure.js';
import { round } from './support/measure.js';
import { replay } from '../src/app/replay.js';
import { compileStructure, type CompiledStructure } from '../src/config/compile.js';
import type { LineBlock, Point, PointSink } from '../src/model/point.js';
import type { RawMessage } from '../src/model/raw-message.js';
import { fatigueStage } from '../src/pipeline/fatigue-stage.js';
import type { FrameOutput } from '../src/pipeline/process-frames.js';
import { from, lastValueFrom, toArray } from 'rxjs';

const envInt = (name: string, fallback: number) => (process.env[name] ? Number.parseInt(process.env[name]!, 10) : fallback);
const FRAMES = envInt('SW_BENCH_FRAMES', 40_000);
const ROUNDS = envInt('SW_BENCH_ROUNDS', 7);
const START_MS = Date.UTC(2026, 5, 1, 6);
const SCAN_MS = 10;
const TOPIC = `strainward/brannock-mere/${BENCH_LOGGER}/scan`;
const median = (xs: number[]) => { const s = [...xs].sort((a, b) => a - b); return s[Math.floor(s.length / 2)]; };

/** Takes everything and keeps counts only. */
class CountingSink implements PointSink {
  lines = 0;
  points = 0;
  fatiguePoints = 0;
  async write(points: readonly Point[]): Promise<void> {
    this.points += points.length;
    for (const p of points) if (p.measurement === 'sw_fatigue') this.fatiguePoints++;
  }
  async writeLines(block: LineBlock): Promise<void> { this.lines += block.lines; }
  async close(): Promise<void> {}
}

function withFatigue(): CompiledStructure {
  const doc = benchStructureDoc();
  doc.fatigue = {
    details: Array.from({ length: ROSETTES }, (_, r) => ({
      id: `bench-detail-${r}`, group: `bench-rosette-${r}`, category_MPa: 71,
      stress: r % 2 === 0 ? { kind: 'direction', angle_deg: 0 } : { kind: 'principal', which: 1 },
    })),
  };
  const c = compileStructure(doc);
  if (!c.ok) throw new Error(c.problems.map((p) => `${p.path}: ${p.reason}`).join('\n'));
  return c.structure;
}

function messages(bodies: string[]): RawMessage[] {
  const enc = new TextEncoder();
  return Array.from({ length: FRAMES }, (_, k) => {
    const ts = START_MS + k * SCAN_MS;
    return { topic: TOPIC, payload: enc.encode(`{"ts":${ts},"seq":${k},"values":${bodies[k % bodies.length]}}`), arrivalMs: ts + 5 };
  });
}

async function* iterate(ms: readonly RawMessage[]): AsyncIterable<RawMessage> {
  for (const m of ms) yield m;
}

/**
 * The fatigue stage alone over outputs recorded from one pipeline run: its CPU per frame, an upper
 * bound (cold results, the RxJS iteration counted; points and saves not included).
 */
async function stageAlone(structure: CompiledStructure, ms: readonly RawMessage[]): Promise<number> {
  const outputs: FrameOutput<unknown>[] = [];
  await replay({
    structure, messages: iterate(ms), sink: new CountingSink(), deadLetters: { write: async () => {} }, runTag: 'bench', tickMs: 1000, speed: 0, sleep: async () => {},
    attach: (p$) => { p$.subscribe((o) => { outputs.push(o); }); },
  });
  const runs: number[] = [];
  for (let i = 0; i < ROUNDS; i++) {
    (globalThis as { gc?: () => void }).gc?.();
    const before = process.cpuUsage();
    await lastValueFrom(from(outputs).pipe(fatigueStage(structure.fatigue!, new Map()), toArray()));
    const cpu = process.cpuUsage(before);
    runs.push((cpu.user + cpu.system) / ms.length);
  }
  return median(runs);
}

async function runOnce(structure: CompiledStructure, ms: readonly RawMessage[]): Promise<{ usPerFrame: number; sink: CountingSink; results: number; damage: number }> {
  (globalThis as { gc?: () => void }).gc?.();
  const sink = new CountingSink();
  const before = process.cpuUsage();
  const s = await replay({
    structure, messages: iterate(ms), sink, deadLetters: { write: async () => {} }, runTag: 'bench', tickMs: 1000, speed: 0, sleep: async () => {},
  });
  const cpu = process.cpuUsage(before);
  if (s.frames !== ms.length) throw new Error(`expected ${ms.length} frames, got ${s.frames} (${s.rejected} refused)`);
  const damage = s.fatigue?.details.reduce((n, d) => n + d.figures.damage, 0) ?? 0;
  return { usPerFrame: (cpu.user + cpu.system) / ms.length, sink, results: s.results, damage };
}


async function main(): Promise<Record<string, number>> {
  const plain = benchStructure();
  const counted = withFatigue();
  const ms = messages(scanValueBodies(plain, 256));
  console.log(`${FRAMES} scans of ${BENCH_LOGGER} (${ROSETTES} rosettes) at ${1000 / SCAN_MS} Hz logger time, ${ROUNDS} rounds per variant, alternating; fatigue: ${ROSETTES} details`);
  // One round of each to warm up (JIT, caches), not counted.
  await runOnce(plain, ms.slice(0, 5_000));
  await runOnce(counted, ms.slice(0, 5_000));
  const without: number[] = [];
  const withF: number[] = [];
  let last: Awaited<ReturnType<typeof runOnce>> | null = null;
  for (let i = 0; i < ROUNDS; i++) {
    // Alternate which goes first, so neither always follows the other's garbage.
    const order = i % 2 === 0 ? [false, true] : [true, false];
    for (const f of order) {
      const r = await runOnce(f ? counted : plain, ms);
      (f ? withF : without).push(r.usPerFrame);
      if (f) last = r;
    }
    console.log(`round ${i + 1}: without ${round(without[i], 2)} us/frame, with ${round(withF[i], 2)} us/frame`);
  }
  const paired = withF.map((w, i) => w / without[i]);
  const stage = await stageAlone(counted, ms);
  const a = median(without);
  const b = median(withF);
  console.log(`the fatigue stage alone over the recorded outputs of one run (an upper bound: results read back cold, RxJS iteration counted): ${round(stage, 3)} us/frame, ${round((stage / median(without)) * 100, 2)} % of the pipeline without fatigue`);
  console.log(`median CPU per frame: without fatigue ${round(a, 2)} us, with ${round(b, 2)} us (${round((b / a - 1) * 100, 2)} %); ${last!.results / FRAMES} results per frame, ${last!.sink.fatiguePoints} sw_fatigue points in the last round, summed damage ${last!.damage.toExponential(3)}`);
  return {
    frames_per_round: FRAMES, rounds: ROUNDS, details: ROSETTES,
    cpu_us_per_frame_without: round(a, 3), cpu_us_per_frame_with: round(b, 3),
    ratio_with_to_without: round(b / a, 4),
    stage_alone_upper_bound_us_per_frame: round(stage, 3), ratio_stage_alone_upper_bound_to_without: round(stage / a, 4),
    // The same ratio round by round (each round's pair ran back to back): its spread is the noise of the machine.
    paired_ratio_min: round(Math.min(...paired), 4), paired_ratio_max: round(Math.max(...paired), 4),
  };
}

main().then((r) => { console.log(JSON.stringify(r)); }, (e: unknown) => { console.error(e); process.exitCode = 1; });
