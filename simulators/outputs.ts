import { createWriteStream, type WriteStream } from 'node:fs';
import { mkdir, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import mqtt from 'mqtt';
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

/** Publishes each scan on its topic with QoS 1 (resolves on PUBACK): the simulator plays the loggers. */
export async function mqttSink(url: string, clientId = 'strainward-simulator'): Promise<ScanSink> {
  const client = await mqtt.connectAsync(url, { clientId, clean: true, reconnectPeriod: 1000 });
  return {
    async send(scan) {
      await client.publishAsync(scan.topic, scan.payload, { qos: 1 });
    },
    close: () => client.endAsync(),
  };
}

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
}

export interface RunSummary { scans: number; truthLines: number; wallMs: number }

/**
 * Runs a simulation into its sinks, writing the truth and the fault log beside. When paced, each
 * scan waits until its arrival time (scaled by speed) has come on the wall clock.
 */
export async function runSimulation(sim: Simulation, scn: Scenario, o: RunOptions): Promise<RunSummary> {
  await mkdir(o.outDir, { recursive: true });
  await writeFile(join(o.outDir, 'scenario.json'), JSON.stringify(scn, null, 1) + '\n');
  await writeFile(join(o.outDir, 'fault-log.json'), JSON.stringify(sim.faultLog, null, 1) + '\n');
  const truth = new NdjsonWriter(join(o.outDir, 'truth.ndjson'));
  const wallStart = o.now();
  let scans = 0;
  let truthLines = 0;
  try {
    for (const scan of sim.scans()) {
      if (o.speed > 0) {
        const due = wallStart + (scan.arrivalMs - scn.start_ms) / o.speed;
        const wait = due - o.now();
        if (wait > 1) await o.sleep(wait);
      }
      for (const s of o.sinks) await s.send(scan);
      for (const line of scan.truth) await truth.write(line);
      scans++;
      truthLines += scan.truth.length;
    }
  } finally {
    await truth.close();
    for (const s of o.sinks) await s.close();
  }
  return { scans, truthLines, wallMs: o.now() - wallStart };
}
