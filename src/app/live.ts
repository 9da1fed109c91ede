import { resolve } from 'node:path';
import { asyncScheduler, connectable, filter, interval, map, merge, ReplaySubject, Subject, takeUntil, type SchedulerLike } from 'rxjs';
import { CaptureWriter } from '../adapters/capture/capture-writer.js';
import { DeadLetterFanOut } from '../adapters/deadletter/fan-out.js';
import type { DeadLetterSink } from '../adapters/deadletter/sink.js';
import { MqttDeadLetterSink } from '../adapters/deadletter/mqtt-sink.js';
import { NdjsonFileDeadLetterSink } from '../adapters/deadletter/ndjson-file-sink.js';
import { connectMqtt, type InboundMessage, type MqttConnection } from '../adapters/mqtt/connection.js';
import { ackSubscription, ackTopic, ackUserMatcher, ackVerdictTopic, parseAckPayload } from '../alarms/index.js';
import type { ComponentFault } from '../alarms/types.js';
import type { LoadedRuntime } from '../config/load-runtime.js';
import { newDecodeCounts } from '../ingest/decode-operator.js';
import { compileTopicPattern, parseTopic } from '../ingest/topic.js';
import { commandAlarmId, intakeFilters, ownsAlarm, ownsGroup, requestGroupId, unitComponent } from '../cluster/unit-topics.js';
import { FrameProcessor } from '../pipeline/frame-processor.js';
import { pipeline, type PipelineInput, type PipelineMessage } from '../pipeline/pipeline.js';
import type { FrameOutput } from '../pipeline/process-frames.js';
import { RETRY_FOREVER, writeAndAck } from '../pipeline/write-and-ack.js';
import { newStorageCounts, storageInputs, storageStage } from '../pipeline/storage-stage.js';
import { storageKeepsState, storageOf } from '../config/compile-storage.js';
import { openStorageState, saveStorageState, STORAGE_STATE_SPACING_MS } from './storage-state-file.js';
import { attachAlarms, openAlarmFiles, type AckEvent, type AlarmWiring } from './alarms-wiring.js';
import { alarmLookups } from './lookups.js';
import { brokerAccess } from './broker-access.js';
import { presenceMessage, presenceTopic, startPresence } from './presence.js';
import { openLivePage, processorSample, type LivePage } from './live-page/live-page.js';
import type { RawMessage } from '../model/raw-message.js';
import { ensureParent, openPointSink } from './sinks.js';
import { failureSummary } from './failure-summary.js';
import { loadWebhookAuth } from './webhook-auth.js';
import { watchComponents } from './component-watch.js';
import { deadLetterLog } from './dead-letter-log.js';
import { transitionLogLines } from './alarm-transition-log.js';
import { ALARMS_DISABLED, requireAlarmsDecision } from './alarms-decision.js';
import { SyntheticLoggers } from './synthetic-loggers.js';
import { attachRezero, loadRezeroStart } from './rezero-wiring.js';
import { metricsAccess, openMetricsEndpoint } from './metrics-endpoint.js';
import { WriteTally } from './write-tally.js';
import { startOperatorState } from './operator-state.js';
import { prepareFatigue } from './fatigue-wiring.js';

export interface LiveDeps {
  /** Wall clock, epoch ms: arrival times and ticks. Injected so tests can drive it. */
  now: () => number;
  scheduler?: SchedulerLike;
  log: (event: string, detail?: Record<string, unknown>) => void;
  /** Events an operator must act on (a broker ignoring the intake window); `log` when absent. */
  warn?: (event: string, detail?: Record<string, unknown>) => void;
}

export interface LiveProcessor {
  /** The intake connection (scans and commands in). */
  connection: MqttConnection;
  /** The connection the processor publishes on (presence and its last will, alarms, dead letters). */
  outbound: MqttConnection;
  /** The live page's address; null without a `live_page` section. */
  pageUrl: string | null;
  /** The Prometheus endpoint's address; null without a `metrics` section. */
  metricsUrl: string | null;
  status(): Record<string, unknown>;
  /** Stops taking messages, writes out what is in flight, closes everything. */
  stop(): Promise<void>;
}

/**
 * Composition root of the live job: broker in, pipeline, database (or files) out. Everything is
 * handed to the pipeline from here; the pipeline itself does no I/O of its own.
 */
export async function startLive(loaded: LoadedRuntime, deps: LiveDeps): Promise<LiveProcessor> {
  const { runtime: rc, structure, baseDir } = loaded;
  requireAlarmsDecision(loaded); // before anything is opened: no alarms section, no start
  if (structure.alarmsDisabled) (deps.warn ?? deps.log)('alarms_disabled', { reason: ALARMS_DISABLED });
  const topicPattern = compileTopicPattern(rc.mqtt.topic_pattern);
  // The processor's own parts failing (spool, capture): logged, and instrument-health alarms.
  const componentFaults$ = new Subject<ComponentFault>();
  // Lines a person must read (alarms, losses and returns, refusals, a filling spool): warnings.
  const warn = deps.warn ?? deps.log;
  const componentFault = (part: string, failure: string | null): void => {
    const component = unitComponent(part, loaded.unit);
    warn(failure === null ? `${component}_writable` : `${component}_unwritable`, failure === null ? {} : { reason: failure });
    componentFaults$.next({ type: 'component', component, failure, atMs: deps.now() });
  };
  const { sink, influx, lineFiles } = await openPointSink(rc, baseDir, deps.now, {
    highWater: (s) => warn('spool_high_water', { fillRatio: s.fillRatio, limitBytes: s.limitBytes, diskFreeBytes: s.diskFreeBytes }),
    writable: (failure) => componentFault('spool', failure),
  });
  const capture = rc.capture
    ? await CaptureWriter.open({
      dir: resolve(baseDir, rc.capture.dir), rotateBytes: rc.capture.rotate_bytes, rotateEvery_ms: rc.capture.rotate_every_s * 1000, now: deps.now,
      retention: { maxAge_h: rc.capture.retention_hours, maxBytes: rc.capture.retention_bytes },
      syncDelay_ms: rc.capture.flush_every_ms, onWritable: (failure) => componentFault('capture', failure),
    })
    : null;
  const alarmsCfg = structure.alarms;
  const commandTopic = alarmsCfg === null ? null : ackSubscription(alarmsCfg, structure.structureId);
  const commandUser = alarmsCfg === null ? () => null : ackUserMatcher(alarmsCfg, structure.structureId);
  const lookups = alarmLookups(structure);
  const alarmFiles = alarmsCfg === null ? null
    : await openAlarmFiles(alarmsCfg, lookups, resolve(baseDir, rc.alarms.state_file), resolve(baseDir, rc.alarms.log_file), { now: deps.now, log: deps.log });
  const fatigue = await prepareFatigue(structure, {
    statePath: resolve(baseDir, rc.fatigue.state_file), sink, now: deps.now, warn: deps.warn ?? deps.log,
    onError: (event, err) => deps.log(event, { message: err instanceof Error ? err.message : String(err) }),
  });
  // Open summary intervals and event windows of the previous run (storage-stage.ts, storage-gate.ts).
  const storage = storageOf(structure);
  const storageStatePath = resolve(baseDir, rc.storage_state_file);
  const restoredStorage = storageKeepsState(storage) ? await openStorageState(storageStatePath, structure.structureId, { now: deps.now, log: deps.warn ?? deps.log }) : undefined;
  const storageCounts = newStorageCounts();
  // Secrets of authenticated webhooks now, before connecting: a missing one stops the start.
  const webhookAuth = await loadWebhookAuth(alarmsCfg, baseDir);
  const metricsAt = rc.metrics === undefined ? null : await metricsAccess(rc.metrics, baseDir); // its token, too, before connecting
  // Database, broker and webhooks: each loss and return is one warning line and one component alarm.
  const rezeroStart = await loadRezeroStart(loaded, deps.now, warn); // the zero overrides in effect, before any message
  const watch = watchComponents({
    report: (c) => {
      warn(c.event, { component: c.component, reason: c.failure ?? undefined, spoolFillRatio: influx?.status().spoolFillRatio ?? undefined, spoolBytes: influx?.status().spoolBytes ?? undefined });
      componentFaults$.next({ type: 'component', component: unitComponent(c.component, loaded.unit), failure: c.failure, atMs: deps.now() });
    },
    brokerUrl: rc.mqtt.url, database: influx === null ? undefined : () => influx.status(), every_ms: 5_000, scheduler: deps.scheduler,
  });
  const statusTopic = presenceTopic(rc.presence.topic, structure.structureId, rc.mqtt.client_id);
  const who = { processor: rc.mqtt.client_id, structure: structure.structureId, every_s: rc.presence.every_s, alarms_disabled: structure.alarmsDisabled };
  const connection = await connectMqtt({
    ...brokerAccess(rc, baseDir), clientId: rc.mqtt.client_id, protocolVersion: rc.mqtt.protocol_version, fallbackToV311: rc.mqtt.fallback_to_v311,
    keepalive_s: rc.mqtt.keepalive_s, sessionExpiry_s: rc.mqtt.session_expiry_s,
    reconnectInitial_ms: rc.mqtt.reconnect_initial_ms, reconnectMax_ms: rc.mqtt.reconnect_max_ms, maxHeldAcks: rc.mqtt.max_held_acks,
    subscriptions: [...intakeFilters(topicPattern, structure.structureId, loaded.unit?.loggers), ...(commandTopic === null ? [] : [commandTopic]), ...(rezeroStart === null ? [] : [rezeroStart.subscription])],
  }, { now: deps.now, log: (event, detail) => { watch.brokerEvent(event); deps.log(event, detail); }, warn: deps.warn });
  // The processor's own publishes (presence and its last will, alarms, dead-letter copies) on a
  // connection of their own: their PUBACKs never queue behind scans the intake has stopped reading
  // (src/adapters/mqtt/intake-window.ts), so intake can stay paused and memory bounded.
  const outbound = await connectMqtt({
    ...brokerAccess(rc, baseDir), clientId: `${rc.mqtt.client_id}-out`, protocolVersion: connection.protocolVersion, fallbackToV311: false,
    keepalive_s: rc.mqtt.keepalive_s, sessionExpiry_s: rc.mqtt.session_expiry_s,
    reconnectInitial_ms: rc.mqtt.reconnect_initial_ms, reconnectMax_ms: rc.mqtt.reconnect_max_ms,
    ...(statusTopic === null ? {} : { will: { topic: statusTopic, payload: presenceMessage('offline', who, deps.now()), retain: true } }),
  }, { now: deps.now, log: (event, detail) => deps.log(event, { ...detail, connection: 'outbound' }), warn: deps.warn });

  // Component faults, open alarms and the retained state topics for operators (status, any MQTT client).
  const operator = startOperatorState({
    stateTopics: rc.state_topics, structureId: structure.structureId, processor: rc.mqtt.client_id, levels: alarmsCfg?.levels ?? null,
    publish: outbound.publish, componentFaults$, now: deps.now, scheduler: deps.scheduler, onError: deps.log,
  });
  const deadLetterSinks: DeadLetterSink[] = [new NdjsonFileDeadLetterSink(await ensureParent(resolve(baseDir, rc.dead_letters.file)))];
  if (rc.dead_letters.mqtt_topic) deadLetterSinks.push(new MqttDeadLetterSink(outbound.publish, structure.structureId, rc.dead_letters.mqtt_topic, rc.dead_letters.mqtt_max_packet_bytes));
  const deadLetters = new DeadLetterFanOut(deadLetterSinks);
  const loggerOfTopic = (topic: string): string => { const m = parseTopic(topicPattern, topic); return m.ok ? m.loggerId : topic; };
  const deadLetterWarnings = deadLetterLog(deadLetters, warn, 10_000, deps.scheduler ?? asyncScheduler, loggerOfTopic);
  const decodeCounts = newDecodeCounts();
  const processor = new FrameProcessor<PipelineMessage>(structure);
  const rezero = rezeroStart === null ? null : attachRezero(loaded, rezeroStart, {
    processor: processor as FrameProcessor<unknown>, sink, publish: outbound.publish, record: capture ? (raw) => capture.append(raw) : undefined, now: deps.now, log: deps.log, warn,
  });
  const isRezero = (m: InboundMessage): boolean => rezero !== null && rezero.userOf(m.raw.topic) !== null;
  let writeErrors = 0;
  const written = new WriteTally();

  // Commands from the live page take the ack topic's own path (capture, decoding, authorisation).
  const pageCommands$ = new Subject<RawMessage>();
  const page: LivePage | null = rc.live_page === undefined ? null : await openLivePage(rc.live_page, baseDir, {
    structure, lookups, now: deps.now, log: deps.log, submitCommand: (raw) => pageCommands$.next(raw),
    commandTopic: alarmsCfg === null ? null : (user) => ackTopic(alarmsCfg, structure.structureId, user),
    sample: () => processorSample(decodeCounts, processor.counts, connection.stats().heldAcks, writeErrors, influx?.status() ?? null),
    fatigue: structure.fatigue ? { cfg: structure.fatigue, current: () => fatigueWiring?.current() ?? null } : undefined,
  });

  const stop$ = new Subject<void>();
  const stopped$ = new ReplaySubject<void>(1); // write retries give up at stop: unacknowledged, redelivered next start
  // Split by topic before the pipeline: acknowledgement commands never reach the decoder. Both
  // branches hang off one subject, connected last, so neither misses a message kept for the first subscriber.
  // The capture is the archive a replay recomputes from: every message (results, refusals,
  // commands) is acknowledged only once its capture record is synced too (group commit).
  const afterCapture = (m: InboundMessage): InboundMessage => (capture === null ? m
    : { ...m, ack: () => { capture.durable().then(() => m.ack(), () => {}); } });
  const inbound$ = connectable(connection.messages$.pipe(map(afterCapture)), { connector: () => new Subject<InboundMessage>(), resetOnDisconnect: false });
  const isCommand = (m: InboundMessage): boolean => commandUser(m.raw.topic) !== null;
  // A unit answers only for its own alarms: every unit of the structure hears every command.
  const forThisUnit = (m: InboundMessage): boolean => {
    if (loaded.unit === undefined) return true;
    if (ownsAlarm(commandAlarmId(m.raw.payload), structure.structureId, loaded.unit)) return true;
    m.ack();
    return false;
  };
  const inputs$ = merge(
    inbound$.pipe(filter((m) => !isCommand(m) && !isRezero(m)), map((message): PipelineInput<PipelineMessage> => ({ kind: 'message', message }))),
    interval(rc.tick_ms, deps.scheduler ?? asyncScheduler).pipe(map((): PipelineInput<PipelineMessage> => ({ kind: 'tick', nowMs: deps.now() }))),
  ).pipe(takeUntil(stop$));
  // Connected once every consumer (alarms, write-and-acknowledge) has subscribed.
  const processed$ = connectable(inputs$.pipe(pipeline<PipelineMessage>({
    structure, topicPattern, deadLetters: deadLetterWarnings, decodeCounts, processor: processor as FrameProcessor<unknown>, maxFutureMs: rc.ingest.max_future_s * 1000,
    record: capture ? (raw) => capture.append(raw) : undefined,
    onDeadLetterError: (err) => deps.log('dead_letter_failed', { message: String(err) }),
  })), { connector: () => new Subject<FrameOutput<PipelineMessage>>(), resetOnDisconnect: false });
  const takeCommand = (raw: RawMessage): AckEvent => {
    capture?.append(raw); // in the capture too, so a replay reproduces the acknowledgements
    return parseAckPayload(raw.payload, raw.arrivalMs, commandUser(raw.topic) ?? '');
  };
  const fatigueWiring = fatigue?.attach(processed$) ?? null;
  const alarmWiring: AlarmWiring | null = alarmsCfg === null || alarmFiles === null ? null : attachAlarms(processed$, merge(inbound$.pipe(
    filter(isCommand),
    filter(forThisUnit),
    // The command is taken at once: a command lost in a crash is sent again by its user, who
    // waits for the `acknowledged` message; holding it would hold every later PUBACK behind it.
    map((m): AckEvent => {
      const event = takeCommand(m.raw);
      m.ack();
      return event;
    }),
  ), pageCommands$.pipe(map(takeCommand))), {
    cfg: alarmsCfg, lookups, now: deps.now, sink, publish: outbound.publish, ...alarmFiles,
    startInputs: [...alarmFiles.startInputs, ...(fatigue?.startInputs ?? [])], fatigue$: fatigueWiring?.alarmInputs$,
    webhookDeps: { authHeader: (channel) => webhookAuth.get(channel) },
    // Every command gets an answer on its user's verdict topic, refusals included (also in the log).
    onAckVerdict: (v) => {
      if (v.verdict === 'refused') warn('ack_refused', { alarmId: v.alarm_id, user: v.user, code: v.code, reason: v.reason });
      outbound.publish(ackVerdictTopic(alarmsCfg, structure.structureId, v.user), JSON.stringify(v), { qos: 1, retain: false })
        .catch((err: unknown) => deps.log('ack_verdict_failed', { user: v.user, message: err instanceof Error ? err.message : String(err) }));
    },
    onError: (event, err) => deps.log(event, { message: err instanceof Error ? err.message : String(err) }),
    componentFaults$,
    onPersisted: (batch) => operator.onTransitions(batch.transitions),
    onBatch: (batch, records) => {
      page?.onAlarmBatch(batch);
      watch.deliveries(records);
      for (const [event, detail] of transitionLogLines(batch.transitions)) warn(event, detail);
    },
  });
  page?.seedAlarms(alarmWiring?.visibleAlarms() ?? []);
  page?.attach(processed$);
  const synthetic = new SyntheticLoggers(warn);
  processed$.pipe(filter((o) => o.kind === 'received')).subscribe((o) => synthetic.note(o.frame));
  operator.seedAlarms(alarmWiring?.visibleAlarms() ?? []);
  operator.attach(processed$);
  // One line per 10 s while writes fail (a full spool fails every frame), with the count.
  const writeFailures = failureSummary(warn, 'write_failed', 10_000, deps.scheduler ?? asyncScheduler);
  // Stopping completes the input: held frames are computed, in-flight writes finish and are acknowledged.
  const drained = new Promise<void>((resolveDrained) => {
    storageInputs(processed$, alarmWiring?.transitions$).pipe(storageStage({
      storage, structureId: structure.structureId, lines: { elementStrains: rc.results.element_strains }, restored: restoredStorage,
      persist: storageKeepsState(storage) ? (json) => saveStorageState(storageStatePath, json) : undefined, flushOnComplete: false,
      until: stopped$, counts: storageCounts, checkpointSpacing: { ms: STORAGE_STATE_SPACING_MS, scheduler: deps.scheduler ?? asyncScheduler }, onError: (err) => deps.log('storage_state_failed', { message: err instanceof Error ? err.message : String(err) }),
    }), writeAndAck(sink, {}, 2048, (err) => {
      writeErrors++;
      writeFailures.note(err instanceof Error ? err.message : String(err));
    }, { ...RETRY_FOREVER, scheduler: deps.scheduler, until: stopped$ })).subscribe({ next: (o) => written.note(o), complete: resolveDrained, error: (e) => { deps.log('pipeline_failed', { message: String(e) }); resolveDrained(); } });
  });
  // A rezero request is decided in arrival order with the scans (the pipeline is synchronous up to the frame processor).
  // Every unit of a split structure hears every request: only the group's unit answers (one verdict).
  const rezeroForThisUnit = (m: InboundMessage): boolean => {
    if (loaded.unit === undefined || ownsGroup(requestGroupId(m.raw.payload), loaded.unit)) return true;
    m.ack();
    return false;
  };
  if (rezero !== null) inbound$.pipe(filter(isRezero), filter(rezeroForThisUnit)).subscribe((m) => rezero.take(m));
  processed$.connect();
  inbound$.connect();
  const status = () => ({
    decode: { ...decodeCounts },
    deadLetters: { ...deadLetters.counts },
    frames: { ...processor.counts },
    writeErrors,
    database: influx?.status() ?? null,
    lineFiles: lineFiles?.status() ?? null,
    mqtt: connection.stats(),
    alarms: alarmWiring?.counts() ?? null,
    alarmsDisabled: structure.alarmsDisabled,
    syntheticLoggers: synthetic.list(),
    rezero: rezero?.counts() ?? null,
    fatigue: fatigueWiring?.status() ?? null,
    storage: { ...storageCounts },
  });
  const presence = statusTopic === null ? null : startPresence(outbound.publish, statusTopic, who, () => {
    const db = influx?.status();
    return {
      frames: processor.counts.frames, results: processor.counts.results, rejected_messages: decodeCounts.rejected,
      held_acks: connection.stats().heldAcks, database_reachable: db ? db.dbReachable : null, spool_fill_ratio: db ? db.spoolFillRatio : null,
      spool_limit_bytes: db ? db.spoolLimitBytes : null, spool_disk_free_bytes: db ? db.spoolDiskFreeBytes : null,
      synthetic_loggers: synthetic.list(),
      spool_bytes: db ? db.spoolBytes : null, rejected_by_code: { ...deadLetters.counts.byCode }, ...operator.counters(),
    };
  }, deps.now, (err) => deps.log('presence_failed', { message: err instanceof Error ? err.message : String(err) }));

  const metrics = metricsAt === null ? null : await openMetricsEndpoint(metricsAt, {
    structureId: structure.structureId, levels: alarmsCfg?.levels ?? [], decode: decodeCounts, deadLetters: deadLetters.counts, written,
    writeErrors: () => writeErrors, database: () => influx?.status() ?? null, heldAcks: () => connection.stats().heldAcks,
    openAlarms: () => alarmWiring?.visibleAlarms() ?? [], now: deps.now,
  }, deps.log);

  return {
    connection,
    outbound,
    pageUrl: page?.url ?? null,
    metricsUrl: metrics?.url ?? null,
    status,
    async stop() {
      await page?.close(); // no new acknowledgements while stopping; a waiting one is told so
      await metrics?.close();
      stop$.next();
      stopped$.next();
      await drained;
      await rezero?.close(); // answers given and files written before the sink and broker close
      writeFailures.stop();
      deadLetterWarnings.stop();
      watch.stop();
      await fatigueWiring?.close(); // the last snapshot written and the state saved
      await alarmWiring?.close(); // the last transitions are written and delivered before the sink and broker close
      await operator.stop();
      await sink.close();
      await capture?.close();
      await presence?.stop(); // `stopped`, retained, before the DISCONNECT that keeps the will unsent
      await connection.close();
      await outbound.close();
    },
  };
}
