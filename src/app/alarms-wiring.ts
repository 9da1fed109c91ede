import { concat, concatMap, connectable, from, filter, map, merge, Subject, takeUntil, tap, type Observable, type Subscription } from 'rxjs';
import {
  alarmBatches, saveSnapshot, openAlarmLog, createDispatcher, createMqttDelivery, createWebhookDelivery, transitionToPoint,
  type AlarmBatch, type AlarmEngine, type AlarmLog, type AlarmsConfig, type DeliveryRecord, type Publish, type WebhookDeps,
} from '../alarms/index.js';
import type { AckVerdict } from '../alarms/ack.js';
import type { Ack, AckRefusal, Alarm, AlarmInput, AlarmLookups, ComponentFault, AlarmTransition, FatigueInput, TransitionKind } from '../alarms/types.js';
import { redactUrl } from '../adapters/secret.js';
import { syncFlatMap } from '../alarms/sync-flat-map.js';
import type { Point, PointWriter } from '../model/point.js';
import type { FrameOutput } from '../pipeline/process-frames.js';
import { openAlarmState, type AlarmStateDeps } from './alarm-state-file.js';

/** An acknowledgement command as decoded at the MQTT boundary (`parseAckPayload`'s result). */
export type AckEvent = { ok: true; ack: Ack } | { ok: false; refusal: AckRefusal };

/** A message the MQTT or webhook recorder kept instead of sending (replay, dry runs). */
export interface RecordedSend {
  channel: 'mqtt' | 'webhook';
  /** Topic or URL. */
  target: string;
  /** JSON message body, as it would have been sent. */
  body: string;
}

export interface AlarmWiringDeps {
  cfg: AlarmsConfig;
  lookups: AlarmLookups;
  /** Clock for delivery records only (latencies, start times), epoch ms. The engine never reads it. */
  now: () => number;
  /** Engine state from a previous run (`loadSnapshot`), restored at subscription. */
  snapshotJson?: string;
  /** Inputs taken before any other (the operations alarm of a reset state, from `openAlarmFiles`). */
  startInputs?: readonly AlarmInput[];
  /** Snapshot file, rewritten after every batch (absent: not persisted). */
  snapshotPath?: string;
  /** Where `sw_alarm` points go (not closed by the wiring: it is usually shared). */
  sink?: PointWriter;
  /** Extra tags on every `sw_alarm` point, e.g. `{ run: 'replay-3' }`. */
  pointTags?: Readonly<Record<string, string>>;
  /** MQTT publish; absent: MQTT deliveries are recorded, not sent. */
  publish?: Publish;
  /** `record`: webhook deliveries are recorded, not sent. Default `send`. */
  webhook?: 'send' | 'record';
  /** Webhook transport for tests (fetch, sleep). */
  webhookDeps?: Omit<WebhookDeps, 'now'>;
  /** Alarm log; the wiring takes it over and closes it in `close()`. */
  log?: AlarmLog;
  /** A failure that did not stop the alarms (snapshot, points, log), for the application log. */
  onError?: (event: string, err: unknown) => void;
  /** Each batch once persisted (snapshot, points), before its deliveries are done: for state that must not wait on a slow receiver. */
  onPersisted?: (batch: AlarmBatch) => void;
  /** Each handled batch and its delivery records, in order. */
  onBatch?: (batch: AlarmBatch, records: readonly DeliveryRecord[]) => void;
  /** Faults of the processor's own parts (live only: a replay has none), as health-alarm inputs. */
  componentFaults$?: Observable<ComponentFault>;
  /** Fatigue snapshots as alarm inputs (`FatigueWiring.alarmInputs$`), for the fatigue rules. */
  fatigue$?: Observable<FatigueInput>;
  /** The answer to each acknowledgement command (accepted or refused), once it is persisted. */
  onAckVerdict?: (verdict: AckVerdict) => void;
}

/** The verdicts a handled batch (or a refusal before the engine) gives to acknowledgement commands. Pure. */
export function ackVerdicts(transitions: readonly AlarmTransition[], refusals: readonly AckRefusal[]): AckVerdict[] {
  const at = (ms: number) => new Date(ms).toISOString();
  const out: AckVerdict[] = [];
  for (const t of transitions) {
    if (t.kind !== 'acknowledged' || t.alarm.acknowledgement === null) continue;
    out.push({
      alarm_id: t.alarm.id, user: t.alarm.acknowledgement.user, verdict: 'acknowledged', code: null, at: at(t.atMs),
      reason: t.alarm.state === 'closed' ? 'acknowledged; the alarm had cleared and is now closed' : 'acknowledged; the alarm is still active',
    });
  }
  for (const r of refusals) out.push({ alarm_id: r.alarmId, user: r.user, verdict: 'refused', code: r.code, reason: r.reason, at: at(r.atMs) });
  return out;
}

/** Counters of the alarm wiring; `counts()` returns a copy. */
export interface AlarmCounts {
  inputs: number;
  batches: number;
  transitions: Record<TransitionKind, number>;
  /** Refused acknowledgements (bad commands, unknown alarms, users not allowed). */
  refusals: number;
  deliveries: { delivered: number; failed: number };
  /** Alarms active now, and active or cleared-but-unacknowledged. */
  active: number;
  visible: number;
  errors: { snapshot: number; points: number; log: number; stream: number };
  /** Per logger: scans whose `seq` went back or repeated, and counter restarts among them. */
  sequences: Record<string, { backwards: number; repeated: number; restarts: number }>;
}

export interface AlarmWiring {
  subscription: Subscription;
  counts(): AlarmCounts;
  /** Copies of every visible alarm. */
  visibleAlarms(): Alarm[];
  /** What the recorders kept (MQTT without `publish`, webhooks with `record`), in order. Grows. */
  recorded(): readonly RecordedSend[];
  /**
   * Each batch's transitions as the engine makes them: synchronously, before the pipeline output
   * that caused them reaches subscribers made after the wiring (the storage stage's event windows).
   */
  transitions$: Observable<readonly AlarmTransition[]>;
  /** Stops taking input, waits for queued batches to be handled, closes the log. Idempotent. */
  close(): Promise<void>;
}

/** One pipeline output as alarm inputs, in order: a frame first, then each of its results; a tick as a tick. Pure. */
export function toAlarmInputs(output: FrameOutput<unknown>): AlarmInput[] {
  if (output.kind === 'tick') return [{ type: 'tick', nowMs: output.nowMs }];
  // Health sees the frame on arrival; its results follow once computed (they may wait for temperature).
  if (output.kind === 'received') return [{ type: 'frame', frame: output.frame }];
  if (output.kind === 'refused') return [{ type: 'refused', loggerId: output.loggerId, timeMs: output.timeMs, arrivalMs: output.arrivalMs, codes: output.codes }];
  return output.results.map((result): AlarmInput => ({ type: 'result', result }));
}

/**
 * Opens what the alarms keep on disk: the engine snapshot (`openAlarmState`: a snapshot that cannot
 * be read is kept aside and the state reset, with an operations alarm) and the alarm log (opened
 * for appending).
 */
export async function openAlarmFiles(
  cfg: AlarmsConfig, lookups: AlarmLookups, snapshotPath: string, logPath: string, deps: AlarmStateDeps,
): Promise<{ snapshotPath: string; snapshotJson?: string; startInputs: AlarmInput[]; log: AlarmLog }> {
  const state = await openAlarmState(cfg, lookups, snapshotPath, logPath, deps);
  return { snapshotPath, ...state, log: await openAlarmLog(logPath) };
}

type Item = { kind: 'input'; input: AlarmInput } | { kind: 'refusal'; refusal: AckRefusal };
type Work = { kind: 'batch'; batch: AlarmBatch } | { kind: 'refusal'; refusal: AckRefusal };

const TRANSITION_KINDS: readonly TransitionKind[] = ['raised', 'level_changed', 'acknowledged', 'cleared', 'escalated', 'suppressed_flapping'];

/**
 * Alarms on the processed stream, the same live and in replay: pipeline outputs and
 * acknowledgements merged in arrival order, through the alarm engine; each batch persisted
 * (snapshot, then `sw_alarm` points) and delivered, strictly in order. A failing snapshot, point
 * write or log line is counted and reported, and the crews are still told; the stream goes on.
 * Subscribes at once (to both streams); uses no clock of its own.
 */
export function attachAlarms(processed$: Observable<FrameOutput<unknown>>, acks$: Observable<AckEvent>, deps: AlarmWiringDeps): AlarmWiring {
  const report = (event: string, err: unknown): void => { try { deps.onError?.(event, err); } catch { /* reporting must not stop alarms */ } };
  const c: AlarmCounts = {
    inputs: 0, batches: 0, transitions: Object.fromEntries(TRANSITION_KINDS.map((k) => [k, 0])) as Record<TransitionKind, number>,
    refusals: 0, deliveries: { delivered: 0, failed: 0 }, active: 0, visible: 0, errors: { snapshot: 0, points: 0, log: 0, stream: 0 }, sequences: {},
  };
  const recorded: RecordedSend[] = [];
  const log = deps.log === undefined ? undefined : guardedLog(deps.log, (err) => { c.errors.log++; report('alarm_log_failed', err); });
  const sink = deps.sink === undefined ? undefined : guardedSink(deps.sink, deps.pointTags, (err) => { c.errors.points++; report('alarm_points_failed', err); });
  const publish: Publish = deps.publish ?? (async (topic, body) => { recorded.push({ channel: 'mqtt', target: topic, body }); });
  const recordingFetch = (async (url: string | URL | Request, init?: RequestInit) => {
    recorded.push({ channel: 'webhook', target: redactUrl(String(url)), body: String(init?.body ?? '') });
    return new Response(null, { status: 204 });
  }) as typeof globalThis.fetch;
  const dispatcher = createDispatcher(deps.cfg, {
    mqtt: createMqttDelivery(publish, deps.now),
    webhook: createWebhookDelivery({ ...deps.webhookDeps, ...(deps.webhook === 'record' ? { fetch: recordingFetch } : {}), now: deps.now }),
    log, now: deps.now,
  });

  /** Persists the batch (snapshot, points) in order; its deliveries run on behind, per target. */
  // (An object around the promise: an async function would otherwise wait for the deliveries.)
  const persistAndDeliver = async (batch: AlarmBatch): Promise<{ deliveries: Promise<DeliveryRecord[]> }> => {
    try {
      // The snapshot first, so a raised alarm survives a restart before anyone is told of it.
      if (deps.snapshotPath !== undefined) await saveSnapshot(deps.snapshotPath, batch.snapshot());
    } catch (err) {
      // Telling the crews comes first: a failed snapshot is counted and reported, never blocking.
      c.errors.snapshot++;
      report('alarm_snapshot_failed', err);
    }
    if (sink !== undefined && batch.transitions.length > 0) await sink.write(batch.transitions.map(transitionToPoint));
    return { deliveries: dispatcher.dispatch(batch) };
  };
  const verdicts = (transitions: readonly AlarmTransition[], refusals: readonly AckRefusal[]): void => {
    if (deps.onAckVerdict === undefined) return;
    for (const v of ackVerdicts(transitions, refusals)) {
      try { deps.onAckVerdict(v); } catch (err) { report('ack_verdict_failed', err); }
    }
  };
  // Observers see batches in order, each once its deliveries are done.
  let reported: Promise<void> = Promise.resolve();
  const handle = async (w: Work): Promise<void> => {
    if (w.kind === 'refusal') {
      c.refusals++;
      await dispatcher.dispatch({ transitions: [], refusals: [w.refusal] });
      verdicts([], [w.refusal]);
      return;
    }
    const { deliveries } = await persistAndDeliver(w.batch);
    try { deps.onPersisted?.(w.batch); } catch (err) { report('alarm_observer_failed', err); }
    verdicts(w.batch.transitions, w.batch.refusals);
    c.batches++;
    c.refusals += w.batch.refusals.length;
    for (const t of w.batch.transitions) c.transitions[t.kind]++;
    reported = reported.then(() => deliveries).then((records) => {
      for (const r of records) c.deliveries[r.status]++;
      try { deps.onBatch?.(w.batch, records); } catch (err) { report('alarm_observer_failed', err); }
    });
  };

  let engine: AlarmEngine | undefined;
  const closing$ = new Subject<void>();
  const items$ = connectable(concat(from(deps.startInputs ?? []).pipe(map((input): Item => ({ kind: 'input', input }))), merge(
    processed$.pipe(syncFlatMap((o) => toAlarmInputs(o).map((input): Item => ({ kind: 'input', input })))),
    acks$.pipe(map((e): Item => (e.ok ? { kind: 'input', input: e.ack } : { kind: 'refusal', refusal: e.refusal }))),
    ...(deps.componentFaults$ === undefined ? [] : [deps.componentFaults$.pipe(map((input): Item => ({ kind: 'input', input })))]),
    ...(deps.fatigue$ === undefined ? [] : [deps.fatigue$.pipe(map((input): Item => ({ kind: 'input', input })))]),
  )).pipe(takeUntil(closing$)), { connector: () => new Subject<Item>(), resetOnDisconnect: false });
  const transitions$ = new Subject<readonly AlarmTransition[]>();
  const batches$ = items$.pipe(
    filter((i): i is Extract<Item, { kind: 'input' }> => i.kind === 'input'),
    tap(() => { c.inputs++; }),
    map((i) => i.input),
    alarmBatches(deps.cfg, deps.lookups, { snapshotJson: deps.snapshotJson, onEngine: (e) => { engine = e; } }),
    tap((b) => { if (b.transitions.length > 0) transitions$.next(b.transitions); }),
    map((batch): Work => ({ kind: 'batch', batch })),
  );
  const refusals$ = items$.pipe(filter((i): i is Extract<Item, { kind: 'refusal' }> => i.kind === 'refusal'));

  let resolveDone: () => void = () => {};
  const done = new Promise<void>((r) => { resolveDone = r; });
  // Both branches hang off one connected subject, so they see every item in one order.
  const subscription = merge(batches$, refusals$).pipe(concatMap(handle)).subscribe({
    complete: resolveDone,
    error: (err: unknown) => { c.errors.stream++; report('alarm_stream_failed', err); resolveDone(); },
  });
  subscription.add(items$.connect());

  let closed: Promise<void> | null = null;
  return {
    subscription,
    counts: () => {
      const visible = engine?.visibleAlarms() ?? [];
      return {
        ...c, transitions: { ...c.transitions }, deliveries: { ...c.deliveries }, errors: { ...c.errors },
        visible: visible.length, active: visible.filter((a) => a.state.startsWith('active')).length,
        sequences: engine?.sequenceCounts() ?? {},
      };
    },
    visibleAlarms: () => engine?.visibleAlarms() ?? [],
    recorded: () => recorded,
    transitions$: transitions$.asObservable(),
    close: () => {
      closed ??= (async () => {
        closing$.next();
        await done;
        await reported; // every delivery done, every observer told
        await deps.log?.close().catch((err: unknown) => { c.errors.log++; report('alarm_log_failed', err); });
      })();
      return closed;
    },
  };
}

/** A log whose failures are counted and reported instead of stopping delivery. */
function guardedLog(log: AlarmLog, failed: (err: unknown) => void): AlarmLog {
  const guard = <A>(f: (a: A) => Promise<void>) => (a: A) => f(a).catch(failed);
  return { transition: guard((t) => log.transition(t)), refusal: guard((r) => log.refusal(r)), delivery: guard((d) => log.delivery(d)), close: () => log.close() };
}

/** A sink adding tags, whose failures are counted and reported. */
function guardedSink(sink: PointWriter, tags: Readonly<Record<string, string>> | undefined, failed: (err: unknown) => void): PointWriter {
  const tagged = (p: Point): Point => (tags === undefined ? p : { ...p, tags: { ...p.tags, ...tags } });
  return { write: (points) => sink.write(points.map(tagged)).catch(failed) };
}
