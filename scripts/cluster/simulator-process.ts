import { spawn, type ChildProcess } from 'node:child_process';
import { createWriteStream } from 'node:fs';
import { readFile, stat } from 'node:fs/promises';
import { join } from 'node:path';
import type { ConfirmedPublish } from '../../simulators/mqtt-sink.js';

/** What one simulator run published, as the broker confirmed it: structure -> logger -> seq -> logger ts (ms). */
export type PublishedScans = Map<string, Map<string, Map<number, number>>>;

/** The simulator's last line (simulators/brannock-mere.ts). */
export interface SimulatorSummary { scans: number; confirmed: number; unconfirmed: number; wallMs: number; stopped?: boolean }

export interface SimulatorOptions {
  structureFiles: readonly string[];
  brokers: readonly string[];
  /** Working folder: the published log, the simulator's output and its own log go here. */
  dir: string;
  rateFactor?: number;
  durationS?: number;
  /** Seconds from the start at which heavy vehicles enter (each raises the steel groups' von Mises alarm). */
  heavyAtS?: readonly number[];
}

/**
 * The simulator (simulators/brannock-mere.ts) as a process of its own, publishing every structure
 * live (`--start now --speed 1`, no faults of its own: the faults are the cluster's) and keeping the
 * exact record of what the broker confirmed (`--published-log`).
 */
export class SimulatorProcess {
  readonly logFile: string;
  private readonly publishedLog: string;
  private readonly exited: Promise<number | null>;
  /** Its output, also in `logFile`. */
  private output = '';

  private constructor(private readonly child: ChildProcess, dir: string) {
    this.logFile = join(dir, 'simulator.log');
    this.publishedLog = join(dir, 'published.ndjson');
    // `close`: after its output is read to the end.
    this.exited = new Promise((r) => child.once('close', (code) => r(code)));
  }

  static start(o: SimulatorOptions): SimulatorProcess {
    const args = ['--import', 'tsx', 'simulators/brannock-mere.ts', ...o.structureFiles.flatMap((f) => ['--config', f]),
      '--broker', o.brokers.join(','), '--connect-timeout-ms', '10000', '--client-id', 'cluster-loggers',
      '--start', 'now', '--speed', '1', '--duration-s', String(o.durationS ?? 3600), '--rate-factor', String(o.rateFactor ?? 1),
      '--faults', 'none', '--heavy-at-s', (o.heavyAtS ?? []).length === 0 ? 'none' : o.heavyAtS!.join(','),
      '--published-log', join(o.dir, 'published.ndjson'), '--out', join(o.dir, 'sim-out')];
    const child = spawn(process.execPath, args, { stdio: ['ignore', 'pipe', 'pipe'] });
    const p = new SimulatorProcess(child, o.dir);
    const log = createWriteStream(p.logFile);
    const keep = (chunk: Buffer) => { log.write(chunk); p.output += chunk.toString('utf8'); };
    child.stdout!.on('data', keep);
    child.stderr!.on('data', keep);
    child.once('close', () => log.end());
    return p;
  }

  /** Waits for the broker's first confirmation (at most `timeoutMs`). */
  async publishing(timeoutMs = 30_000): Promise<void> {
    const deadline = Date.now() + timeoutMs;
    while (((await stat(this.publishedLog).catch(() => null))?.size ?? 0) === 0) {
      if (this.child.exitCode !== null) throw new Error(`simulator exited with ${this.child.exitCode}: ${this.output.slice(-2000)}`);
      if (Date.now() > deadline) throw new Error(`simulator published nothing in ${timeoutMs} ms`);
      await new Promise((r) => setTimeout(r, 50));
    }
  }

  /** Ends the run (SIGTERM: outstanding confirmations awaited), or waits for its own end; then what it published. */
  async stop(): Promise<{ summary: SimulatorSummary; published: PublishedScans }> {
    if (this.child.exitCode === null && this.child.signalCode === null) this.child.kill('SIGTERM');
    return this.finished();
  }

  async finished(): Promise<{ summary: SimulatorSummary; published: PublishedScans }> {
    const code = await this.exited;
    const out = this.output;
    if (code !== 0) throw new Error(`simulator exited with ${code}: ${out.slice(-2000)}`);
    const summary = JSON.parse(out.trim().split('\n').filter((l) => l.startsWith('{')).at(-1)!) as SimulatorSummary;
    const published: PublishedScans = new Map();
    for (const line of (await readFile(this.publishedLog, 'utf8')).split('\n')) {
      if (line === '') continue;
      const c = JSON.parse(line) as ConfirmedPublish;
      const byLogger = published.get(c.structure) ?? new Map<string, Map<number, number>>();
      published.set(c.structure, byLogger);
      const bySeq = byLogger.get(c.logger) ?? new Map<number, number>();
      byLogger.set(c.logger, bySeq);
      bySeq.set(c.seq, c.logger_ts_ms);
    }
    return { summary, published };
  }

  /** SIGKILL if still running (the harness's cleanup). */
  async close(): Promise<void> {
    if (this.child.exitCode === null && this.child.signalCode === null) this.child.kill('SIGKILL');
    await this.exited;
  }
}
