import type { CompiledGroup, CompiledStructure, TemperatureChannel } from '../config/compile.js';
import {
  BIT_ELEMENT_MISSING, BIT_ELEMENT_OUT_OF_RANGE, BIT_TEMPERATURE_MISSING, BIT_TEMPERATURE_STALE, BIT_UNDERDETERMINED, evaluateGroup,
} from '../mechanics/evaluate-group.js';
import { createGroupOutput, type GroupModel, type GroupOutput } from '../mechanics/group-model.js';
import { qualityBit } from '../model/quality.js';
import type { LoggerFrame } from '../model/raw-message.js';
import type { GroupResult } from '../model/result.js';
import { toGroupResult } from '../results/group-result.js';
import { groupTemperatureAt, groupWaitsForTemperature, type GroupTemperature } from './group-join.js';
import { TemperatureHistory } from './temperature-history.js';
import { CHANNEL_FLATLINE, CHANNEL_HELD, CHANNEL_SPIKE, ChannelScreen, type FrameScreen } from './channel-screen.js';
import { newResidualDrift, resetResidualDrift, residualDriftStep, type ResidualDrift } from './residual-drift.js';
import { TemperatureScreen } from './temperature-screen.js';
import { insertStep, modelAt, stepAt, type ZeroStep } from './zero-steps.js';

const BIT_READING_SPIKE = qualityBit('reading_spike');
const BIT_READING_SUSPECT = qualityBit('reading_suspect');
const BIT_READING_FLATLINE = qualityBit('reading_flatline');
const BIT_RESIDUAL_DRIFT = qualityBit('residual_drift');
const BIT_RESIDUAL_RISING = qualityBit('residual_rising');
/** Samples that must not feed the residual average: an element missing, or a reading judged (or not yet cleared) a spike. */
const NOT_FOR_DRIFT = BIT_ELEMENT_MISSING | BIT_ELEMENT_OUT_OF_RANGE | BIT_UNDERDETERMINED | BIT_READING_SPIKE | BIT_READING_SUSPECT;

/** A frame waiting: for temperature, or for the readings that judge one of its excursions. */
interface HeldFrame<M> {
  frame: LoggerFrame;
  message: M;
  temperatures: Record<string, number>;
  screen: FrameScreen | null;
}

/** A frame with everything computed from it: the unit that is written, then acknowledged. */
export interface ProcessedFrame<M> {
  frame: LoggerFrame;
  message: M;
  results: GroupResult[];
  /** Temperature readings this frame carried that were accepted: sensor id -> degC. */
  temperatures: Record<string, number>;
}

/** Per-group state, keyed by group id: the evaluator's workspace and counters. */
interface GroupRuntime {
  group: CompiledGroup;
  raw: Float64Array;
  out: GroupOutput;
  temperature: GroupTemperature;
  /** Redundant groups only: the averaged residual (residual-drift.ts). */
  drift: ResidualDrift | null;
  evaluated: number;
  withheld: number;
  /** Rezeros in effect, in time order (zero-steps.ts); empty: the configured zero. */
  zeroSteps: ZeroStep[];
  /** The model the last frame was computed with: a change of zero restarts the averaged residual. */
  lastModel: GroupModel;
  /** The latest computed frame's readings (`raw` holds its elements): what a rezero takes. */
  readingsTimeMs: number;
  readingsArrivalMs: number;
  companionRaw: number;
  readingsFlags: number;
}

/** A group's latest computed readings, copied (`FrameProcessor.latestReadings`). */
export interface GroupReadings {
  timeMs: number;
  arrivalMs: number;
  /** Per element, in the signal's unit; NaN where missing. */
  raw: number[];
  /** NaN where missing or without a companion. */
  companionRaw: number;
  /** The group temperature used, degC; NaN when none. */
  temperatureC: number;
  /** Quality bits of the result computed from them (src/model/quality.ts). */
  flags: number;
}

export interface FrameProcessorCounts {
  frames: number;
  results: number;
  withheldResults: number;
  heldFrames: number;
  temperatureRejected: number;
  /** Temperature readings dropped as spikes (temperature-screen.ts). */
  temperatureSpikes: number;
  forcedReleases: number;
  /** Frames held for the readings after an excursion (spike or real change?). */
  heldForScreen: number;
  /** Frames released with an excursion still unjudged (flagged reading_suspect). */
  screenTimeouts: number;
}

/** Most frames one logger may have waiting for temperature; beyond, the oldest is computed at once. */
export const MAX_HELD_PER_LOGGER = 20_000;

/**
 * The pipeline's stateful core, free of RxJS and I/O: temperature histories per sensor, held frames
 * per logger, evaluator workspaces per group, and the instrument-health screen of the readings
 * (channel-screen.ts): a frame with an excursion waits, boundedly, for the readings that tell a
 * spike from a real change, and its results carry the verdict in their flags. All state is keyed (sensor, logger, group), so a
 * structure's groups can later be split across processes by key. Time comes only from the inputs:
 * `clockMs` is the pipeline clock (latest arrival or tick), never the wall clock.
 */
export class FrameProcessor<M> {
  readonly counts: FrameProcessorCounts = { frames: 0, results: 0, withheldResults: 0, heldFrames: 0, temperatureRejected: 0, temperatureSpikes: 0, forcedReleases: 0, heldForScreen: 0, screenTimeouts: 0 };
  private readonly histories = new Map<string, TemperatureHistory>();
  private readonly groups = new Map<string, GroupRuntime>();
  /** Scratch of releaseReady: per logger, the wait end of the frame it released last in this call. */
  private readonly releasedAt = new Map<string, number>();
  /** Per logger, the longest bounded wait for temperature of its groups, ms (0: none). Configuration only. */
  private readonly temperatureWaitMs = new Map<string, number>();
  private readonly held = new Map<string, Array<HeldFrame<M>>>();
  private readonly screen: ChannelScreen;
  private readonly temperatureScreen: TemperatureScreen;
  /** Logger id -> channel id -> sensor (nested, so no key string is built per reading). */
  private readonly sensorsByChannel = new Map<string, Map<string, TemperatureChannel>>();

  constructor(private readonly structure: CompiledStructure) {
    this.screen = new ChannelScreen(structure);
    this.temperatureScreen = new TemperatureScreen(structure.alarms?.health);
    for (const [logger, groups] of structure.groupsByLogger) {
      let wait = 0;
      for (const g of groups) {
        const join = g.config.temperature;
        if (join.mode === 'interpolate' && join.max_wait_s > 0 && g.temperatures.length > 0) wait = Math.max(wait, join.max_wait_s * 1000);
      }
      this.temperatureWaitMs.set(logger, wait);
    }
    for (const t of structure.temperatureSensors.values()) {
      let byChannel = this.sensorsByChannel.get(t.loggerId);
      if (byChannel === undefined) this.sensorsByChannel.set(t.loggerId, (byChannel = new Map()));
      byChannel.set(t.channelId, t);
      this.histories.set(t.sensorId, new TemperatureHistory());
    }
    for (const g of structure.groups) {
      this.groups.set(g.config.id, {
        group: g, raw: new Float64Array(g.model.m), out: createGroupOutput(g.model.m),
        temperature: { valueC: Number.NaN, ageS: Number.NaN, stale: false },
        drift: g.model.m > g.model.n ? newResidualDrift(g.model.m, g.model.m - g.model.n) : null, evaluated: 0, withheld: 0,
        zeroSteps: [], lastModel: g.model, readingsTimeMs: Number.NaN, readingsArrivalMs: Number.NaN, companionRaw: Number.NaN, readingsFlags: 0,
      });
    }
  }

  /** A decoded frame arrives. Returns the frames completed by it, in order per logger. */
  onFrame(frame: LoggerFrame, message: M, clockMs: number): ProcessedFrame<M>[] {
    this.counts.frames++;
    const done: ProcessedFrame<M>[] = [];
    // Waits that ran out by this moment first, with what was known before this frame: a live tick
    // between the deadline and this arrival would have released them so, and replay has no such
    // tick, so this is what keeps live and replay identical.
    this.releaseReady(clockMs, done);
    const temperatures = this.takeTemperatures(frame);
    // Instrument health of the readings next: this frame may judge an earlier one's excursion.
    const screen = this.screen.screen(frame);
    // Then whatever this frame frees (new temperature, an excursion judged).
    this.releaseReady(clockMs, done);
    const queue = this.held.get(frame.loggerId);
    const entry: HeldFrame<M> = { frame, message, temperatures, screen };
    if ((queue && queue.length > 0) || this.mustWait(entry, clockMs)) {
      const q = queue ?? [];
      q.push(entry);
      this.held.set(frame.loggerId, q);
      this.counts.heldFrames++;
      if (screen !== null && screen.held > 0) this.counts.heldForScreen++;
      if (q.length > MAX_HELD_PER_LOGGER) {
        this.counts.forcedReleases++;
        done.push(this.compute(q.shift()!));
      }
      this.releaseReady(clockMs, done);
    } else {
      done.push(this.compute(entry));
    }
    return done;
  }

  /** The pipeline clock advanced (a tick): frames whose wait ran out are computed. */
  onTick(clockMs: number): ProcessedFrame<M>[] {
    const done: ProcessedFrame<M>[] = [];
    this.releaseReady(clockMs, done);
    return done;
  }

  /** End of input: every held frame is computed with what is known. */
  flush(): ProcessedFrame<M>[] {
    return this.onTick(Number.POSITIVE_INFINITY);
  }

  /** The readings of the group's latest computed frame, or null before any (or for an unknown group). */
  latestReadings(groupId: string): GroupReadings | null {
    const rt = this.groups.get(groupId);
    if (rt === undefined || !(rt.readingsTimeMs === rt.readingsTimeMs)) return null;
    return {
      timeMs: rt.readingsTimeMs, arrivalMs: rt.readingsArrivalMs, raw: Array.from(rt.raw), companionRaw: rt.companionRaw,
      temperatureC: rt.temperature.valueC, flags: rt.readingsFlags,
    };
  }

  /** The rezero in effect for the group's readings dated `timeMs`; null: the configured zero. */
  zeroStepAt(groupId: string, timeMs: number): ZeroStep | null {
    const rt = this.groups.get(groupId);
    return rt === undefined ? null : stepAt(rt.zeroSteps, timeMs);
  }

  /** A new zero for the group's readings dated after `step.fromTimeMs`. */
  applyZeroStep(groupId: string, step: ZeroStep): void {
    const rt = this.groups.get(groupId);
    if (rt === undefined) throw new Error(`no group "${groupId}"`);
    insertStep(rt.zeroSteps, step);
  }

  /**
   * Computes every held frame whose wait is over, across loggers in the order the waits ended
   * (ties by logger id; per logger in arrival order). Any split of time into ticks and arrivals then
   * releases the same frames in the same order: live ticks fall wherever the timer fires, replay
   * ticks on a grid of recorded arrival times, and both must give the same output.
   */
  private releaseReady(clockMs: number, done: ProcessedFrame<M>[]): void {
    const after = this.releasedAt;
    after.clear();
    for (;;) {
      let best: HeldFrame<M>[] | null = null;
      let bestKey = Number.POSITIVE_INFINITY;
      let bestLogger = '';
      for (const [logger, q] of this.held) {
        if (q.length === 0 || this.mustWait(q[0], clockMs)) continue;
        // A frame behind one released now was free no earlier than it.
        const key = Math.max(Math.min(clockMs, this.waitEndMs(q[0])), after.get(logger) ?? Number.NEGATIVE_INFINITY);
        if (best === null || key < bestKey || (key === bestKey && logger < bestLogger)) { best = q; bestKey = key; bestLogger = logger; }
      }
      if (best === null) return;
      after.set(bestLogger, bestKey);
      done.push(this.compute(best.shift()!));
    }
  }

  /** When a held frame's wait runs out at the latest (pipeline clock): its bounded waits' end. */
  private waitEndMs(h: HeldFrame<M>): number {
    const frame = h.frame;
    const screenWait = h.screen !== null && h.screen.held > 0 ? this.screen.maxWaitMs(frame.loggerId) : 0;
    return frame.arrivalMs + Math.max(screenWait, this.temperatureWaitMs.get(frame.loggerId) ?? 0);
  }

  private mustWait(h: HeldFrame<M>, clockMs: number): boolean {
    const frame = h.frame;
    const groups = this.structure.groupsByLogger.get(frame.loggerId);
    if (!groups) return false;
    // A bounded wait for the readings that tell a spike from a real change (pipeline clock).
    if (h.screen !== null && h.screen.held > 0 && clockMs < frame.arrivalMs + this.screen.maxWaitMs(frame.loggerId)) return true;
    return groups.some((g) => groupWaitsForTemperature(g, this.histories, frame.timeMs, frame.arrivalMs, clockMs));
  }

  private takeTemperatures(frame: LoggerFrame): Record<string, number> {
    const accepted: Record<string, number> = {};
    const sensors = this.sensorsByChannel.get(frame.loggerId);
    if (sensors === undefined) return accepted;
    // The logger's few sensors, looked up in the frame, rather than every reading of the frame.
    for (const [channel, sensor] of sensors) {
      const value = frame.values.get(channel);
      if (value === null || value === undefined) continue;
      const c = value + sensor.offsetC;
      if (c < sensor.validMin || c > sensor.validMax) {
        this.counts.temperatureRejected++;
        continue;
      }
      this.temperatureScreen.add(sensor.sensorId, this.histories.get(sensor.sensorId)!, frame.timeMs, c);
      this.counts.temperatureSpikes = this.temperatureScreen.dropped;
      accepted[sensor.sensorId] = c;
    }
    return accepted;
  }

  private compute(h: HeldFrame<M>): ProcessedFrame<M> {
    const { frame, message, temperatures, screen } = h;
    if (screen !== null && screen.held > 0) this.counts.screenTimeouts++;
    const results: GroupResult[] = [];
    for (const g of this.structure.groupsByLogger.get(frame.loggerId) ?? []) {
      const rt = this.groups.get(g.config.id)!;
      const chans = g.elementChannels;
      for (let i = 0; i < chans.length; i++) {
        const v = frame.values.get(chans[i]);
        rt.raw[i] = v === null || v === undefined ? Number.NaN : v;
      }
      const comp = g.companion ? frame.values.get(g.companion.channelId) : undefined;
      rt.companionRaw = comp === null || comp === undefined ? Number.NaN : comp;
      rt.readingsTimeMs = frame.timeMs;
      rt.readingsArrivalMs = frame.arrivalMs;
      const t = groupTemperatureAt(g, this.histories, frame.timeMs, rt.temperature);
      let extra = (t.stale ? BIT_TEMPERATURE_STALE : 0) | (screen === null ? 0 : screenBits(g, screen));
      if (Number.isNaN(t.valueC) && g.config.temperature.withhold_when_missing) {
        // Configured to withhold: no stress without temperature, but the frame is counted and flagged.
        rt.withheld++;
        this.counts.withheldResults++;
        extra |= BIT_TEMPERATURE_MISSING;
        rt.readingsFlags = extra;
        results.push({
          structureId: this.structure.structureId, groupId: g.config.id, zone: g.config.zone, loggerId: frame.loggerId,
          timeMs: frame.timeMs, seq: frame.seq, values: {}, elementStrainMicro: {}, flags: ['temperature_missing'],
        });
        continue;
      }
      const model = rt.zeroSteps.length === 0 ? g.model : modelAt(g.model, rt.zeroSteps, frame.timeMs);
      // The averaged residual was taken against the other zero: it starts again at the first frame
      // computed with this one (a frame, not the request, so live and replay restart it alike).
      if (model !== rt.lastModel) {
        rt.lastModel = model;
        if (rt.drift !== null) resetResidualDrift(rt.drift);
      }
      evaluateGroup(model, rt.raw, t.valueC, rt.companionRaw, rt.out);
      if (rt.drift !== null) {
        if (((rt.out.flags | extra) & NOT_FOR_DRIFT) === 0) residualDriftStep(rt.drift, rt.out.elementResidualMicro, g.model.m);
        if (rt.drift.drifting) extra |= BIT_RESIDUAL_DRIFT;
        else if (rt.drift.rising) extra |= BIT_RESIDUAL_RISING;
      }
      rt.readingsFlags = rt.out.flags | extra;
      rt.evaluated++;
      this.counts.results++;
      results.push(toGroupResult(this.structure.structureId, g, rt.out, frame.timeMs, frame.seq, extra, t.ageS));
    }
    return { frame, message, results, temperatures };
  }
}

/** Quality bits of a group from what the screen found in its element and companion readings. */
function screenBits(g: CompiledGroup, screen: FrameScreen): number {
  let b = 0;
  for (const ch of g.elementChannels) b |= screen.bits.get(ch) ?? 0;
  if (g.companion !== null && g.companion.loggerId === g.loggerId) b |= screen.bits.get(g.companion.channelId) ?? 0;
  return ((b & CHANNEL_SPIKE) !== 0 ? BIT_READING_SPIKE : 0) | ((b & CHANNEL_HELD) !== 0 ? BIT_READING_SUSPECT : 0)
    | ((b & CHANNEL_FLATLINE) !== 0 ? BIT_READING_FLATLINE : 0);
}
