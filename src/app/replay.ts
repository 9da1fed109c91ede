import { filter, lastValueFrom, map, share, tap, type Observable } from 'rxjs';
import { ackUserMatcher, parseAckPayload } from '../alarms/index.js';
import type { AlarmTransition } from '../alarms/index.js';
import { alarmLookups } from './lookups.js';
import { attachAlarms, type AckEvent } from './alarms-wiring.js';
import type { DeadLetterSink } from '../adapters/deadletter/sink.js';
import type { CompiledStructure } from '../config/compile.js';
import { newDecodeCounts } from '../ingest/decode-operator.js';
import { compileTopicPattern } from '../ingest/topic.js';
import type { PointSink } from '../model/point.js';
import type { RawMessage } from '../model/raw-message.js';
import type { GroupResult } from '../model/result.js';
import { FrameProcessor } from '../pipeline/frame-processor.js';
import { pipeline, type PipelineInput, type PipelineMessage } from '../pipeline/pipeline.js';
import type { FrameOutput } from '../pipeline/process-frames.js';
import { writeAndAck } from '../pipeline/write-and-ack.js';
import { newStorageCounts, storageInputs, storageStage, type StorageCounts } from '../pipeline/storage-stage.js';
import { storageKeepsState, storageOf } from '../config/compile-storage.js';
import { replaySource } from './replay-source.js';
import { applyRezeroRecord } from '../rezero/apply.js';
import type { RezeroRecord } from '../rezero/schema.js';
import { rezeroUserMatcher } from '../rezero/topics.js';
import { prepareFatigue } from './fatigue-wiring.js';
import type { FatigueSnapshot } from '../pipeline/fatigue-stage.js';

/** Frames written behind the reading of the capture at most (each holds its encoded lines until written). */
const MAX_WRITES_BEHIND = 256;

export interface ReplayOptions {
  structure: CompiledStructure;
  messages: AsyncIterable<RawMessage>;
  sink: PointSink;
  deadLetters: DeadLetterSink;
  topicPattern?: string;
  /** Tag `run=<runTag>` on every point, so a replay never overwrites live data. */
  runTag: string;
  tickMs: number;
  /** 0 = full speed; 10 = ten times real time. */
  speed: number;
  sleep: (ms: number) => Promise<void>;
  /** Write element strains with every result (the runtime configuration's `results.element_strains`). */
  elementStrains?: boolean;
  /** Keep every result in memory (for the diagnosis report). */
  collectResults?: boolean;
  onMessage?: (count: number, raw: RawMessage) => void;
  /** Largest logger time ahead of arrival accepted, ms (the runtime file's `ingest.max_future_s`); default as live. */
  maxFutureMs?: number;
  /** Run the structure's alarms too (its `alarms` section): transitions to the sink and the summary; deliveries recorded, not sent. */
  alarms?: boolean;
  /** Rezeros recorded live (the audit file): each applies from its readings' logger time, as it did live. */
  zeroRecords?: readonly RezeroRecord[];
  /** Each alarm batch's transitions as they happen (when alarms run). */
  onTransitions?: (transitions: readonly AlarmTransition[]) => void;
  /** Keep every transition in the summary (default true; a long replay with a report passes false and takes them in onTransitions). */
  keepTransitions?: boolean;
  /** Further consumers of the processed stream, subscribed before it starts. */
  attach?: (processed$: Observable<FrameOutput<PipelineMessage>>) => void;
  /**
   * Fatigue state file to continue from and to leave the end state in (absent: the replay counts
   * from nothing and keeps no state; the live processor's own file is never the default).
   */
  fatigueStatePath?: string;
  /** Warnings of the fatigue state file (reset, kept aside); default: none. */
  warn?: (event: string, detail: Record<string, unknown>) => void;
}

export interface ReplaySummary {
  messages: number;
  frames: number;
  results: number;
  rejected: number;
  writeErrors: number;
  collected: GroupResult[];
  /** Alarm transitions, in order (when alarms ran and keepTransitions is not false). */
  transitions: AlarmTransition[];
  /** Recorded rezeros installed, and those that do not fit this structure (and why). */
  rezero: { applied: number; skipped: Array<{ id: string; reason: string }> };
  /** The fatigue figures at the end (null without a `fatigue` section, or when no result came). */
  fatigue: FatigueSnapshot | null;
  /** What the storage stage wrote (summaries, windows, late results). */
  storage: StorageCounts;
  /** How many transitions there were (kept or not). */
  transitionCount: number;
}

/**
 * Feeds a capture through exactly the pipeline that runs live (same stages, same processor), with
 * the configuration given (corrected zero readings, new limits, revised materials), into the sink
 * given. Resolves when every result is written.
 */
export async function replay(o: ReplayOptions): Promise<ReplaySummary> {
  const decodeCounts = newDecodeCounts();
  const processor = new FrameProcessor<PipelineMessage>(o.structure);
  // The recorded outcome, not the request again: the same zero from the same logger time, whatever the window.
  const rezero: ReplaySummary['rezero'] = { applied: 0, skipped: [] };
  for (const r of o.zeroRecords ?? []) {
    const a = applyRezeroRecord(processor as FrameProcessor<unknown>, o.structure, r);
    if (a.ok) rezero.applied++;
    else rezero.skipped.push({ id: r.id, reason: a.reason });
  }
  const rezeroUser = o.structure.config.rezero ? rezeroUserMatcher(o.structure.config.rezero, o.structure.structureId) : () => null;
  const isRezeroRequest = (i: PipelineInput<PipelineMessage>) => i.kind === 'message' && rezeroUser(i.message.raw.topic) !== null;
  let writeErrors = 0;
  // Before the source starts: the state file is read first.
  const fatigue = await prepareFatigue(o.structure, {
    statePath: o.fatigueStatePath, sink: o.sink, pointTags: { run: o.runTag }, now: Date.now, warn: o.warn ?? (() => {}),
    onError: () => { writeErrors++; },
  });
  const collected: GroupResult[] = [];
  let messages = 0;
  const alarmsCfg = o.structure.alarms;
  const commandUser = alarmsCfg ? ackUserMatcher(alarmsCfg, o.structure.structureId) : () => null;
  const isCommand = (i: PipelineInput<PipelineMessage>) => i.kind === 'message' && commandUser(i.message.raw.topic) !== null;
  // Frames handed to the write stage and dead letters not yet written: the capture is read on only
  // while they are fewer than MAX_WRITES_BEHIND (from three quarters of it again), so memory does not
  // grow with its length. (Frames a wait holds are not counted: their release needs the capture read on.)
  // Bounded only while every series is stored in full: then each frame comes out of the write stage
  // as one outcome. Summarised frames leave as blocks of many; such a replay reads on unbounded.
  const storage = storageOf(o.structure);
  const storageCounts = newStorageCounts();
  const bounded = !storageKeepsState(storage);
  let writesBehind = 0;
  let resume: (() => void) | null = null;
  const hold = () => (writesBehind < MAX_WRITES_BEHIND ? null : new Promise<void>((r) => { resume = r; }));
  const written = () => {
    writesBehind--;
    if (resume !== null && writesBehind <= (MAX_WRITES_BEHIND * 3) / 4) { const r = resume; resume = null; r(); }
  };
  // One pass over the capture, split like live: acknowledgement commands to the alarms, the rest to the pipeline.
  const source$ = replaySource(o.messages, {
    tickMs: o.tickMs, speed: o.speed, sleep: o.sleep, hold,
    onMessage: (n, raw) => { messages = n; clockMs = raw.arrivalMs; o.onMessage?.(n, raw); },
  }).pipe(share());
  const acks$ = source$.pipe(
    filter(isCommand),
    map((i): AckEvent => { const raw = (i as { message: PipelineMessage }).message.raw; return parseAckPayload(raw.payload, raw.arrivalMs, commandUser(raw.topic) ?? ''); }),
  );
  const deadLetters: DeadLetterSink = {
    write: (d) => {
      if (!bounded) return o.deadLetters.write(d);
      writesBehind++;
      const w = o.deadLetters.write(d);
      w.then(written, written);
      return w;
    },
  };
  const processed$ = source$.pipe(filter((i) => !isCommand(i) && !isRezeroRequest(i)), pipeline<PipelineMessage>({
    structure: o.structure, topicPattern: compileTopicPattern(o.topicPattern), deadLetters,
    decodeCounts, processor: processor as FrameProcessor<unknown>, maxFutureMs: o.maxFutureMs,
  }));
  o.attach?.(processed$);
  const fatigueWiring = fatigue?.attach(processed$) ?? null;
  const transitions: AlarmTransition[] = [];
  let transitionCount = 0;
  const keep = o.keepTransitions ?? true;
  let clockMs = 0;
  const wiring = o.alarms && o.structure.alarms
    ? attachAlarms(processed$, acks$, {
      cfg: o.structure.alarms, lookups: alarmLookups(o.structure), now: () => clockMs, sink: o.sink,
      pointTags: { run: o.runTag }, webhook: 'record', onBatch: (b) => {
        transitionCount += b.transitions.length;
        if (keep) transitions.push(...b.transitions);
        if (b.transitions.length > 0) o.onTransitions?.(b.transitions);
      },
      startInputs: fatigue?.startInputs, fatigue$: fatigueWiring?.alarmInputs$,
    })
    : null;
  // The same storage stage as live; open intervals are written at the end (no state file: a replay starts and ends whole).
  await lastValueFrom(storageInputs(processed$.pipe(
    tap((p) => {
      if (p.kind !== 'frame') return;
      if (bounded) writesBehind++;
      if (o.collectResults) collected.push(...p.results);
    }),
  ), wiring?.transitions$).pipe(
    storageStage({
      storage, structureId: o.structure.structureId, lines: { extraTags: { run: o.runTag }, elementStrains: o.elementStrains },
      flushOnComplete: true, counts: storageCounts,
    }),
    writeAndAck(o.sink, {}, 2048, () => { writeErrors++; }),
    // One outcome per frame while every series is stored in full (summarised frames come out as blocks).
    tap((w) => { if (bounded && w.loggerId !== null) written(); }),
  ), { defaultValue: null });
  await fatigueWiring?.close();
  await wiring?.close();
  await o.sink.close();
  return {
    messages, frames: processor.counts.frames, results: processor.counts.results, rejected: decodeCounts.rejected, writeErrors, collected, transitions, transitionCount,
    fatigue: fatigueWiring?.latest() ?? null, rezero, storage: storageCounts,
  };
}
