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
import { captureSink, messagesFileSink, mqttSink, runSimulation, type ScanSink } from './outputs.js';
import { createSimulation } from './run.js';
import { describeRun, episodeSink, episodesOf } from './announce.js';
import { CAUTION, wrap } from '../src/cli/help-text.js';
import { CliOptionsSchema } from './cli-options.js';
import { FAULT_KINDS } from './scenario.js';

const program = new Command('brannock-mere')
  .description('Simulated loggers of the invented Brannock Mere Crossing: true stresses, readings, faults')
  .option('--config <path>', 'structure configuration', 'config/brannock-mere.yaml')
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
  .option('--broker <url>', 'publish to this MQTT broker (QoS 1), e.g. mqtt://127.0.0.1:1883; loopback only unless --allow-remote-broker')
  .option('--allow-remote-broker', 'allow a --broker beyond this machine (never one that serves a real structure: simulated readings could fake or hide its alarms)', false)
  .option('--capture-dir <dir>', 'write the messages into a capture directory')
  .option('--messages', 'write messages.ndjson into --out as well', false)
  .option('--out <dir>', 'directory for truth.ndjson, fault-log.json, scenario.json', 'var/sim-out')
  .addHelpText('after', `\nExample:\n  npx tsx simulators/brannock-mere.ts --broker mqtt://127.0.0.1:1883 --start now --speed 1 --duration-s 300\n\n${wrap(CAUTION)}`);

async function main(): Promise<number> {
  program.parse();
  const parsed = CliOptionsSchema.safeParse(program.opts());
  if (!parsed.success) {
    for (const i of parsed.error.issues) console.error(`--${String(i.path[0] ?? '').replace(/[A-Z]/g, (c) => `-${c.toLowerCase()}`)}: ${i.message}`);
    return 2;
  }
  const o = parsed.data;
  const structure = await loadStructureFile(o.config);
  const scn = defaultScenario({
    seed: o.seed, start_ms: o.start, duration_s: o.durationS, day_s: o.dayS, rate_factor: o.rateFactor, faults: o.faults, noise: o.noise,
    heavy_at_s: o.heavyAtS, fault_times: o.faultAt,
  });
  const sim = createSimulation(structure, scn);
  console.log(describeRun(scn, sim.faultLog, o.broker ?? o.captureDir ?? join(o.out, 'messages.ndjson'), o.speed, structure.structureId));
  await mkdir(o.out, { recursive: true }); // before the messages file's stream opens in it
  const sinks: ScanSink[] = [];
  if (o.speed > 0) sinks.push(episodeSink(scn, episodesOf(scn, sim.faultLog), (line) => console.log(line)));
  if (o.broker) sinks.push(await mqttSink(o.broker));
  if (o.captureDir) sinks.push(await captureSink(o.captureDir));
  if (o.messages || !(o.broker || o.captureDir)) sinks.push(messagesFileSink(join(o.out, 'messages.ndjson')));
  const summary = await runSimulation(sim, scn, { outDir: o.out, sinks, speed: o.speed, now: () => Date.now(), sleep: (ms) => sleep(ms) });
  console.log(JSON.stringify({ ...summary, faults: sim.faultLog.map((f) => f.id), out: o.out }));
  return 0;
}

main().then((code) => { process.exitCode = code; }, (err: unknown) => {
  console.error(err instanceof ConfigError ? err.message : err);
  process.exitCode = err instanceof ConfigError ? 3 : 1;
});
