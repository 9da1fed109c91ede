/**
 * Simulator of the Brannock Mere Crossing's edge loggers (composition root: the only place that
 * reads the wall clock). Usage: npx tsx simulators/brannock-mere.ts --help
 */
import { mkdir } from 'node:fs/promises';
import { join } from 'node:path';
import { setTimeout as sleep } from 'node:timers/promises';
import { Command } from 'commander';
import { ConfigError } from '../src/config/compile.js';
import { loadStructureFile } from '../src/config/load.js';
import { defaultScenario } from './default-scenario.js';
import { captureSink, messagesFileSink, NdjsonWriter, runSimulations, type ScanSink, type StructureRun } from './outputs.js';
import { mqttSink, type MqttScanSink } from './mqtt-sink.js';
import { createSimulation } from './run.js';
import { describeRun, episodeSink, episodesOf } from './announce.js';
import { CAUTION, wrap } from '../src/cli/help-text.js';
import { CliOptionsSchema } from './cli-options.js';
import { FAULT_KINDS } from './scenario.js';

const DEFAULT_CONFIG = ['config/brannock-mere.yaml'];
/** Repeated `--config`: the first one given replaces the default. */
function collect(value: string, previous: string[]): string[] {
  return previous === DEFAULT_CONFIG ? [value] : [...previous, value];
}

const program = new Command('brannock-mere')
  .description('Simulated loggers of the invented Brannock Mere Crossing: true stresses, readings, faults')
  .option('--config <path>', 'structure configuration; repeat it to publish several structures at once (each its own id)', collect, DEFAULT_CONFIG)
  .option('--seed <n>', 'seed: the same seed gives the same output', '1')
  .option('--start <iso>', 'start of the run, ISO 8601 with zone, or "now" (publishing live to a processor: its clock check compares)', '2025-06-01T06:00:00Z')
  .option('--duration-s <s>', 'length of the run, logger seconds', '600')
  .option('--day-s <s>', 'logger seconds per scenario day (86400 = real time)', '86400')
  .option('--rate-factor <x>', 'scan rates are the configured ones times this', '1')
  .option('--speed <x>', 'publish at this many scenario seconds per wall second; 0 = as fast as possible', '0')
  .option('--faults <list>', `comma list of ${FAULT_KINDS.join(', ')}; or all, none`, 'all')
  .option('--heavy-at-s <list>', 'seconds from the start at which heavy vehicles enter, comma list, or none (default: one at mid-run)')
  .option('--fault-at <list>', 'when faults happen: comma list of kind@start_s[-end_s], e.g. dropout@240-270,silent@480 (default: fractions of the run)')
  .option('--no-noise', 'exact readings (no noise, no quantisation)')
  .option('--broker <url>', 'publish to this MQTT broker (QoS 1), e.g. mqtt://127.0.0.1:1883, or a comma list of the nodes of one clustered broker; loopback only unless --allow-remote-broker')
  .option('--allow-remote-broker', 'allow a --broker beyond this machine (never one that serves a real structure: simulated readings could fake or hide its alarms)', false)
  .option('--connect-timeout-ms <ms>', 'how long one connection attempt to the broker may take', '10000')
  .option('--client-id <id>', 'the MQTT client id (a persistent session)', 'strainward-simulator')
  .option('--published-log <file>', 'write one NDJSON line {structure, logger, seq, logger_ts_ms} per publish the broker confirmed')
  .option('--capture-dir <dir>', 'write the messages into a capture directory')
  .option('--messages', 'write messages.ndjson into --out as well', false)
  .option('--out <dir>', 'directory for truth.ndjson, fault-log.json, scenario.json', 'var/sim-out')
  .addHelpText('after', `\nExample:\n  npx tsx simulators/brannock-mere.ts --broker mqtt://127.0.0.1:1883 --start now --speed 1 --duration-s 300\n\n${wrap(CAUTION)}`);

/** Set by SIGTERM or SIGINT: the run ends at the next scan, waits for the broker's outstanding confirmations, and reports. */
let stopped = false;
/** The broker sink of the run, told at a stop so that a send waiting for room does not hold it up. */
let brokerSink: MqttScanSink | null = null;

async function main(): Promise<number> {
  program.parse();
  const parsed = CliOptionsSchema.safeParse(program.opts());
  if (!parsed.success) {
    for (const i of parsed.error.issues) console.error(`--${String(i.path[0] ?? '').replace(/[A-Z]/g, (c) => `-${c.toLowerCase()}`)}: ${i.message}`);
    return 2;
  }
  const o = parsed.data;
  const structures = [];
  for (const file of o.config) structures.push(await loadStructureFile(file));
  const ids = structures.map((st) => st.structureId);
  const twice = ids.find((id, i) => ids.indexOf(id) !== i);
  if (twice !== undefined) { console.error(`--config: two files have the structure id ${twice}: each structure is published under its own id`); return 2; }
  // Several structures: each its own seed (the seed, the seed + 1, ...) and its own output folder.
  const runs: StructureRun[] = structures.map((structure, i) => {
    const scn = defaultScenario({
      seed: o.seed + i, start_ms: o.start, duration_s: o.durationS, day_s: o.dayS, rate_factor: o.rateFactor, faults: o.faults, noise: o.noise,
      heavy_at_s: o.heavyAtS, fault_times: o.faultAt,
    });
    return { sim: createSimulation(structure, scn), scn, outDir: structures.length === 1 ? o.out : join(o.out, structure.structureId) };
  });
  const first = runs[0];
  console.log(describeRun(first.scn, first.sim.faultLog, o.broker?.join(', ') ?? o.captureDir ?? join(o.out, 'messages.ndjson'), o.speed, ids.join(', ')));
  await mkdir(o.out, { recursive: true }); // before the messages file's stream opens in it
  const sinks: ScanSink[] = [];
  // The episodes happen at the same times on every structure: announced once.
  if (o.speed > 0) sinks.push(episodeSink(first.scn, episodesOf(first.scn, first.sim.faultLog), (line) => console.log(line)));
  const publishedLog = o.publishedLog === undefined ? null : new NdjsonWriter(o.publishedLog);
  let broker: MqttScanSink | null = null;
  if (o.broker) {
    broker = await mqttSink(o.broker[0], {
      servers: o.broker.length > 1 ? o.broker : undefined, clientId: o.clientId, connectTimeoutMs: o.connectTimeoutMs,
      onConfirmed: publishedLog === null ? undefined : (c) => { void publishedLog.write(c); },
    });
    sinks.push(broker);
    brokerSink = broker;
  }
  if (o.captureDir) sinks.push(await captureSink(o.captureDir));
  if (o.messages || !(o.broker || o.captureDir)) sinks.push(messagesFileSink(join(o.out, 'messages.ndjson')));
  const summary = await runSimulations(runs, { outDir: o.out, sinks, speed: o.speed, now: () => Date.now(), sleep: (ms) => sleep(ms), stopped: () => stopped });
  await publishedLog?.close();
  console.log(JSON.stringify({
    ...summary, faults: first.sim.faultLog.map((f) => f.id), out: o.out, structures: ids,
    // Only what the broker confirmed counts as published; `unconfirmed` were given up at the end.
    ...(broker === null ? {} : broker.counts()), ...(stopped ? { stopped: true } : {}),
  }));
  return 0;
}

for (const signal of ['SIGTERM', 'SIGINT'] as const) process.once(signal, () => { stopped = true; brokerSink?.abort(); });

main().then((code) => { process.exitCode = code; }, (err: unknown) => {
  console.error(err instanceof ConfigError ? err.message : err);
  process.exitCode = err instanceof ConfigError ? 3 : 1;
});
