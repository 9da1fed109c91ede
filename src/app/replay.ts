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
import { replaySource } from './replay-source.js';

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
  /** Each alarm batch's transitions as they happen (when alarms run). */
  onTransitions?: (transitions: readonly AlarmTransition[]) => void;
  /** Keep every transition in the summary (default true; a long replay with a report passes false and takes them in onTransitions). */
  keepTransitions?: boolean;
  /** Further consumers of the processed stream, subscribed before it starts. */
  attach?: (processed$: Observable<FrameOutput<PipelineMessage>>) => void;
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
  const collected: GroupResult[] = [];
  let messages = 0;
  let writeErrors = 0;
  const alarmsCfg = o.structure.alarms;
  const commandUser = alarmsCfg ? ackUserMatcher(alarmsCfg, o.structure.structureId) : () => null;
  const isCommand = (i: PipelineInput<PipelineMessage>) => i.kind === 'message' && commandUser(i.message.raw.topic) !== null;
  // Frames handed to the write stage and dead letters not yet written: the capture is read on only
  // while they are fewer than MAX_WRITES_BEHIND (from three quarters of it again), so memory does not
  // grow with its length. (Frames a wait holds are not counted: their release needs the capture read on.)
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
      writesBehind++;
      const w = o.deadLetters.write(d);
      w.then(written, written);
      return w;
    },
  };
  const processed$ = source$.pipe(filter((i) => !isCommand(i)), pipeline<PipelineMessage>({
    structure: o.structure, topicPattern: compileTopicPattern(o.topicPattern), deadLetters,
    decodeCounts, processor: processor as FrameProcessor<unknown>, maxFutureMs: o.maxFutureMs,
  }));
  o.attach?.(processed$);
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
    })
    : null;
  await lastValueFrom(processed$.pipe(
    tap((p) => {
      if (p.kind !== 'frame') return;
      writesBehind++;
      if (o.collectResults) collected.push(...p.results);
    }),
    writeAndAck(o.sink, { extraTags: { run: o.runTag }, elementStrains: o.elementStrains }, 2048, () => { writeErrors++; }),
    tap(written),
  ), { defaultValue: null });
  await wiring?.close();
  await o.sink.close();
  return { messages, frames: processor.counts.frames, results: processor.counts.results, rejected: decodeCounts.rejected, writeErrors, collected, transitions, transitionCount };
}
