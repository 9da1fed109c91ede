import { createWriteStream, type WriteStream } from 'node:fs';
import { mkdir, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { CaptureWriter } from '../src/adapters/capture/capture-writer.js';
import type { RawMessage } from '../src/model/raw-message.js';
import type { Simulation, SimScan } from './run.js';
import type { Scenario } from './scenario.js';

/**
 * Where simulated scans go: the edge of the simulator (I/O lives here, the run itself is pure).
 * Every sink takes scans in true-time order and resolves `send` once the scan is handed over.
 */
export interface ScanSink {
  send(scan: SimScan): Promise<void>;
  close(): Promise<void>;
}

const encoder = new TextEncoder();

/** The scan as the processor would receive it. */
export function rawMessageOf(scan: SimScan): RawMessage {
  return { topic: scan.topic, payload: encoder.encode(scan.payload), arrivalMs: scan.arrivalMs };
}

/** Writes scans straight into a capture directory (src/adapters/capture format), flushing every `batch` scans. */
export async function captureSink(dir: string, batch = 500): Promise<ScanSink> {
  // The capture's wall clock only ages files for retention, which is off here: a constant keeps output repeatable.
  const writer = await CaptureWriter.open({ dir, rotateBytes: 64 * 1024 * 1024, rotateEvery_ms: 3_600_000, now: () => 0 });
  let n = 0;
  return {
    async send(scan) {
      writer.append(rawMessageOf(scan));
      if (++n % batch === 0) await writer.flush();
    },
    close: () => writer.close(),
  };
}

export { mqttSink } from './mqtt-sink.js';

/** One JSON object per line, on a write stream; resolves on drain when the stream is full. */
export class NdjsonWriter {
  private readonly stream: WriteStream;
  constructor(path: string) {
    this.stream = createWriteStream(path);
  }
  async write(obj: unknown): Promise<void> {
    if (!this.stream.write(JSON.stringify(obj) + '\n')) await new Promise<void>((r) => this.stream.once('drain', () => r()));
  }
  close(): Promise<void> {
    return new Promise((resolve, reject) => this.stream.end((err?: Error | null) => (err ? reject(err) : resolve())));
  }
}

/** Plain NDJSON of messages `{arrival_ms, topic, payload_base64}`: for runs without a capture directory. */
export function messagesFileSink(path: string): ScanSink {
  const w = new NdjsonWriter(path);
  return {
    send: (scan) => w.write({ arrival_ms: scan.arrivalMs, topic: scan.topic, payload_base64: Buffer.from(scan.payload).toString('base64') }),
    close: () => w.close(),
  };
}

export interface RunOptions {
  /** Directory for truth.ndjson, fault-log.json and scenario.json. */
  outDir: string;
  sinks: ScanSink[];
  /** 0 = as fast as possible; otherwise scenario seconds per wall second. */
  speed: number;
  /** Wall clock (epoch ms) and sleep: injected so the pacing can be tested. */
  now: () => number;
  sleep: (ms: number) => Promise<void>;
  /** Checked before each scan: once true, the run ends there (sinks closed, truth written so far). */
  stopped?: () => boolean;
}

export interface RunSummary { scans: number; truthLines: number; wallMs: number }

/** One structure's simulation in a run of several: its scenario (one start for all) and its own output folder. */
export interface StructureRun { sim: Simulation; scn: Scenario; outDir: string }

/**
 * Runs a simulation into its sinks, writing the truth and the fault log beside. When paced, each
 * scan waits until its arrival time (scaled by speed) has come on the wall clock.
 */
export function runSimulation(sim: Simulation, scn: Scenario, o: RunOptions): Promise<RunSummary> {
  return runSimulations([{ sim, scn, outDir: o.outDir }], o);
}

/**
 * Several structures' simulations as one run: their scans merged in arrival order (ties: the
 * order of `runs`), paced from the first run's start, into the same sinks; each structure's truth,
 * scenario and fault log in its own `outDir`.
 */
export async function runSimulations(runs: readonly StructureRun[], o: RunOptions): Promise<RunSummary> {
  const truths: NdjsonWriter[] = [];
  for (const r of runs) {
    await mkdir(r.outDir, { recursive: true });
    await writeFile(join(r.outDir, 'scenario.json'), JSON.stringify(r.scn, null, 1) + '\n');
    await writeFile(join(r.outDir, 'fault-log.json'), JSON.stringify(r.sim.faultLog, null, 1) + '\n');
    truths.push(new NdjsonWriter(join(r.outDir, 'truth.ndjson')));
  }
  const startMs = runs[0].scn.start_ms;
  const wallStart = o.now();
  let scans = 0;
  let truthLines = 0;
  try {
    for (const [i, scan] of mergeByArrival(runs.map((r) => r.sim.scans()))) {
      if (o.stopped?.()) break;
      if (o.speed > 0) {
        const due = wallStart + (scan.arrivalMs - startMs) / o.speed;
        const wait = due - o.now();
        if (wait > 1) await o.sleep(wait);
      }
      for (const s of o.sinks) await s.send(scan);
      for (const line of scan.truth) await truths[i].write(line);
      scans++;
      truthLines += scan.truth.length;
    }
  } finally {
    for (const t of truths) await t.close();
    for (const s of o.sinks) await s.close();
  }
  return { scans, truthLines, wallMs: o.now() - wallStart };
}

/** The scans of several runs in arrival order, each with its run's index (ties: the lower index first). Lazy. */
function* mergeByArrival(runs: Array<Generator<SimScan>>): Generator<[number, SimScan]> {
  const heads = runs.map((g) => g.next());
  for (;;) {
    let best = -1;
    for (let i = 0; i < heads.length; i++) {
      const h = heads[i];
      if (!h.done && (best < 0 || h.value.arrivalMs < (heads[best].value as SimScan).arrivalMs)) best = i;
    }
    if (best < 0) return;
    yield [best, heads[best].value as SimScan];
    heads[best] = runs[best].next();
  }
}
