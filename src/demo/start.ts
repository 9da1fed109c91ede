/**
 * `npm start`: the whole chain on one machine, in one process tree. An embedded MQTT broker, the
 * live job exactly as `strainward run` runs it (same startLive, configured by a runtime file, by
 * default config/demo.runtime.yaml), a stand-in for the crews' webhook receivers, and the simulator
 * of the invented deck as a child process publishing to the broker. Only the broker's and the
 * page's ports are set from here (options or environment), so tests can run it on free ports.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdir } from 'node:fs/promises';
import { dirname, relative, resolve } from 'node:path';
import { createInterface } from 'node:readline';
import { fileURLToPath } from 'node:url';
import { Command } from 'commander';
import { CAUTION, wrap } from '../cli/help-text.js';
import pino from 'pino';
import { z } from 'zod';
import { startLive, type LiveProcessor } from '../app/live.js';
import { isLoopbackHost } from '../adapters/http/page-access.js';
import { loadRuntimeFile, type LoadedRuntime } from '../config/load-runtime.js';
import { formatLogLine } from '../adapters/log/line-format.js';
import { startEmbeddedBroker } from './embedded-broker.js';
import { startWebhookReceiver } from './webhook-receiver.js';

const REPO = fileURLToPath(new URL('../../', import.meta.url));
const SIMULATOR = fileURLToPath(new URL('../../simulators/brannock-mere.ts', import.meta.url));
/** The simulator's MQTT client id (simulators/outputs.ts). */
const SIMULATOR_CLIENT = 'strainward-simulator';

/** Said before anything else, and again on the page. */
export const DEMO_NOTICE = [
  'strainward demo: SIMULATED data for an invented structure (the Brannock Mere Crossing); nothing real is monitored.',
  'strainward supports and does not replace qualified engineering judgement. Alarm limits are set by the responsible',
  'engineer under the local codes (the demo\'s are placeholders). Missing data is itself an alarm, never an all-clear.',
];

const port = z.coerce.number().int().min(0).max(65535);
const OptionsSchema = z.strictObject({
  runtime: z.string().min(1),
  mqttPort: port.optional(),
  pagePort: port.optional(),
  seed: z.coerce.number().int(),
  durationS: z.coerce.number().positive(),
  dayS: z.coerce.number().positive(),
  heavyAtS: z.string(),
  faultAt: z.string(),
});

const env = (name: string): string | undefined => (process.env[name] === undefined || process.env[name] === '' ? undefined : process.env[name]);

const program = new Command('npm start')
  .description('the strainward demo: embedded broker, simulated deck, live job and live page')
  .option('--runtime <file>', 'runtime file of the live job', env('STRAINWARD_DEMO_RUNTIME') ?? 'config/demo.runtime.yaml')
  .option('--mqtt-port <n>', 'port of the embedded broker (0: any free port; default: the runtime file\'s mqtt.url)', env('STRAINWARD_DEMO_MQTT_PORT'))
  .option('--page-port <n>', 'port of the live page (0: any free port; default: the runtime file\'s live_page.port)', env('STRAINWARD_DEMO_PAGE_PORT'))
  .option('--seed <n>', 'simulator seed', '1')
  .option('--duration-s <s>', 'length of one simulated run; it starts again when done', '1800')
  .option('--day-s <s>', 'wall seconds per scenario day (temperature cycle, gauge drift)', '3600')
  .option('--heavy-at-s <list>', 'when heavy vehicles enter the deck, s from the start of each run', env('STRAINWARD_DEMO_HEAVY_AT_S') ?? '40,900')
  .option('--fault-at <list>', 'when faults happen, kind@start_s[-end_s] list',
    'spikes@20-1700,debond@120,dropout@240-270,open_circuit@360-380,silent@480-540,clock_drift@1200')
  .addHelpText('after', `\nExample:\n  npm start -- --mqtt-port 0 --page-port 0\n\n${wrap(CAUTION)}`);

const say = (line: string) => { process.stdout.write(`${line}\n`); };
const shown = (path: string) => relative(process.cwd(), path) || '.';

/** The runtime file as loaded, with the broker's and the page's actual addresses. */
function withPorts(loaded: LoadedRuntime, brokerUrl: string, pagePort: number | undefined): LoadedRuntime {
  const rc = loaded.runtime;
  const livePage = rc.live_page === undefined || pagePort === undefined ? rc.live_page : { ...rc.live_page, port: pagePort };
  return { ...loaded, runtime: { ...rc, mqtt: { ...rc.mqtt, url: brokerUrl }, live_page: livePage } };
}

/** Loopback webhook ports the structure's recipients name (the demo answers them). */
function webhookPorts(loaded: LoadedRuntime): number[] {
  const ports: number[] = [];
  for (const r of loaded.structure.alarms?.recipients ?? []) {
    for (const c of r.channels) {
      if (c.kind !== 'webhook') continue;
      const u = new URL(c.url);
      if (isLoopbackHost(u.hostname)) ports.push(Number(u.port || (u.protocol === 'https:' ? 443 : 80)));
    }
  }
  return ports;
}

function pipeLines(stream: NodeJS.ReadableStream, each: (line: string) => void): void {
  createInterface({ input: stream }).on('line', each);
}

async function main(): Promise<number> {
  program.parse();
  const parsed = OptionsSchema.safeParse(program.opts());
  if (!parsed.success) {
    for (const i of parsed.error.issues) process.stderr.write(`--${String(i.path[0]).replace(/[A-Z]/g, (c) => `-${c.toLowerCase()}`)}: ${i.message}\n`);
    return 2;
  }
  const o = parsed.data;
  for (const line of DEMO_NOTICE) say(line);
  say('');

  const loaded = await loadRuntimeFile(o.runtime);
  const configured = new URL(loaded.runtime.mqtt.url);
  if (!isLoopbackHost(configured.hostname)) throw new Error(`${o.runtime}: mqtt.url ${loaded.runtime.mqtt.url}: the demo's broker listens on loopback only`);
  const broker = await startEmbeddedBroker('127.0.0.1', o.mqttPort ?? Number(configured.port || 1883));
  const files = dirname(resolve(loaded.baseDir, loaded.runtime.alarms.log_file));
  await mkdir(files, { recursive: true });
  const receiver = await startWebhookReceiver('127.0.0.1', webhookPorts(loaded), resolve(files, 'webhooks.ndjson'));
  let stopping = false;
  let child: ChildProcess | null = null;
  let run = 0;
  const startSimulator = () => {
    const args = ['--import', import.meta.resolve('tsx'), SIMULATOR, '--config', resolve(loaded.baseDir, loaded.runtime.structure), '--broker', broker.url,
      '--start', 'now', '--speed', '1', '--seed', String(o.seed + run), '--duration-s', String(o.durationS), '--day-s', String(o.dayS),
      '--heavy-at-s', o.heavyAtS, '--fault-at', o.faultAt, '--out', resolve(files, 'sim-out')];
    run++;
    const c = spawn(process.execPath, args, { cwd: REPO, stdio: ['ignore', 'pipe', 'pipe'] });
    child = c;
    pipeLines(c.stdout!, (line) => {
      if (line.startsWith('{')) {
        try { say(`simulator: run finished, ${JSON.parse(line).scans} scans published`); } catch { say(line); }
      } else say(line);
    });
    pipeLines(c.stderr!, (line) => say(`simulator (error): ${line}`));
    c.on('exit', (code, signal) => {
      if (stopping) return;
      if (code === 0) { say('simulator: starting the next run (a new seed)'); startSimulator(); return; }
      say(`simulator: stopped (${signal ?? `exit ${code}`}); the loggers are silent now, which the processor reports as missing data`);
    });
  };
  startSimulator();
  // The processor starts once the loggers are publishing, as on a structure: started first, it
  // would rightly report every logger as silent for the second the simulator takes to start.
  if (!await broker.firstPublishFrom(SIMULATOR_CLIENT, 30_000)) say('simulator: nothing published within 30 s; starting the processor anyway');
  const logFile = resolve(files, 'processor.log');
  const log = pino({ name: 'strainward' }, pino.destination({ dest: logFile, mkdir: true, sync: false }));
  let live: LiveProcessor;
  try {
    live = await startLive(withPorts(loaded, broker.url, o.pagePort), {
      now: Date.now,
      log: (event, detail) => { log.info({ event, ...detail }); },
      // The lines `run` writes as warnings (alarm transitions, losses and returns, refusals) are
      // also said here, as `run` says them on a terminal: the person trying the demo sees them.
      warn: (event, detail) => {
        log.warn({ event, ...detail });
        say(`processor: ${formatLogLine({ level: 40, time: Date.now(), event, ...detail })}`);
      },
    });
  } catch (err) {
    stopping = true;
    (child as ChildProcess | null)?.kill('SIGTERM');
    await receiver.stop();
    await broker.stop();
    throw err;
  }
  const rc = loaded.runtime;
  const at = (p: string | undefined) => (p === undefined ? '(none)' : shown(resolve(loaded.baseDir, p)));
  say(`live page      ${live.pageUrl ?? '(none: the runtime file has no live_page section)'}   <- open this in a browser`);
  say(`broker         ${broker.url} (embedded, MQTT 3.1.1; the processor connects with protocol ${live.connection.protocolVersion})`);
  say(`results        ${rc.database ? `database ${rc.database.url}` : `${at(rc.line_protocol.dir)}/ (line protocol)`}`);
  say(`alarm log      ${at(rc.alarms.log_file)}   (alarm state ${at(rc.alarms.state_file)})`);
  say(`dead letters   ${at(rc.dead_letters.file)}`);
  say(`raw capture    ${at(rc.capture?.dir)}`);
  say(`processor log  ${shown(logFile)}`);
  say(`webhooks       ${receiver.ports.length ? `answered on 127.0.0.1:${receiver.ports.join(', ')} and kept in ${shown(resolve(files, 'webhooks.ndjson'))}` : 'none answered'}`
    + (receiver.taken.length ? ` (port ${receiver.taken.join(', ')} taken by another program: deliveries go there)` : ''));
  say('Ctrl-C stops everything; results in flight are written and acknowledged first.');


  const signal = await new Promise<string>((done) => {
    process.once('SIGINT', () => done('SIGINT'));
    process.once('SIGTERM', () => done('SIGTERM'));
  });
  stopping = true;
  // Ctrl-C reaches this process twice (from the terminal and forwarded by npm): only a later one forces the exit.
  const firstAt = Date.now();
  process.on('SIGINT', () => {
    if (Date.now() - firstAt < 2000) return;
    say('second interrupt: leaving at once (messages not yet acknowledged are lost with the embedded broker)');
    process.exit(130);
  });
  say(`${signal}: stopping the simulator, then the processor (writing and acknowledging what is in flight)...`);
  const sim = child as ChildProcess | null;
  if (sim !== null && sim.exitCode === null && sim.signalCode === null) {
    await new Promise<void>((done) => { sim.once('exit', () => done()); sim.kill('SIGTERM'); });
  }
  await live.stop();
  const s = live.status() as { frames: { frames: number; results: number }; mqtt: { heldAcks: number } };
  await receiver.stop();
  await broker.stop();
  await new Promise<void>((done) => log.flush(() => done()));
  say(`stopped: ${s.frames.frames} scans and ${s.frames.results} results processed; ${s.mqtt.heldAcks} messages left unacknowledged.`);
  return 0;
}

main().then((code) => { process.exitCode = code; }, (err: unknown) => {
  process.stderr.write(`npm start: ${err instanceof Error ? err.message : String(err)}\n`);
  // A start that failed half-way may leave a broker client retrying: nothing is in flight yet.
  process.exit(1);
});
