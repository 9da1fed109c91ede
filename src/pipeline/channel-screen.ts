import type { CompiledStructure } from '../config/compile.js';
import type { HealthConfig } from '../alarms/schema-health.js';
import { hampelStep, SPIKE_MAX_SAMPLES, type HampelState } from '../alarms/engine/hampel.js';
import { flatlineStep, newFlatline, resetFlatline, type FlatlineState } from '../alarms/engine/flatline.js';
import type { LoggerFrame } from '../model/raw-message.js';

/** Per-channel outcome bits inside a FrameScreen. */
export const CHANNEL_SPIKE = 1;
export const CHANNEL_HELD = 2;
export const CHANNEL_FLATLINE = 4;

/**
 * How long a frame with an excursion waits for the readings that judge it, in expected scan
 * intervals of its logger: SPIKE_MAX_SAMPLES readings are needed, the rest absorbs jitter and
 * latency. Pipeline clock (arrival times), never the wall clock.
 */
export const SCREEN_WAIT_INTERVALS = SPIKE_MAX_SAMPLES + 3;

/**
 * What the screen found in one frame's readings: per channel, CHANNEL_* bits. Made only for a frame
 * with something to say (most frames have nothing: `null`, no allocation). A held reading is
 * resolved in place when a later reading of its channel ends the excursion.
 */
export class FrameScreen {
  readonly bits = new Map<string, number>();
  /** Readings of this frame still waiting for a verdict. */
  held = 0;

  mark(channelId: string, bit: number): void {
    this.bits.set(channelId, (this.bits.get(channelId) ?? 0) | bit);
    if (bit === CHANNEL_HELD) this.held++;
  }

  resolve(channelId: string, spike: boolean): void {
    const b = this.bits.get(channelId) ?? 0;
    if ((b & CHANNEL_HELD) === 0) return;
    this.bits.set(channelId, (b & ~CHANNEL_HELD) | (spike ? CHANNEL_SPIKE : 0));
    this.held--;
  }
}

interface ChannelState {
  unit: string;
  validMin: number;
  validMax: number;
  hampel: HampelState;
  flatline: FlatlineState;
  /** Frames holding an unjudged reading of this channel, oldest first. */
  heldFrames: FrameScreen[];
}

/**
 * Instrument health of the readings that feed results, decided before (or with) the result: the
 * alarm engine's own detectors (Hampel spike test, flat line), run on the same readings in the same
 * order with the same settings, so a result is flagged for exactly the readings the channel's alarm
 * is about. State keyed per logger and channel (element and companion channels of the groups).
 * Out-of-range readings are the evaluator's (element_out_of_range, companion_missing), and stay out
 * of these windows, as in the alarm engine. Time comes from the frames only. Mutable; no I/O.
 */
export class ChannelScreen {
  private readonly channels = new Map<string, Map<string, ChannelState>>();
  private readonly waitMs = new Map<string, number>();

  constructor(structure: CompiledStructure, private readonly health: HealthConfig | undefined = structure.alarms?.health) {
    const c = structure.config;
    const gaugeByChannel = new Map(c.gauges.map((g) => [`${g.channel.logger}/${g.channel.channel}`, g]));
    for (const l of c.loggers) this.waitMs.set(l.id, SCREEN_WAIT_INTERVALS * l.expected_interval_s * 1000);
    const add = (loggerId: string, channelId: string) => {
      const gauge = gaugeByChannel.get(`${loggerId}/${channelId}`);
      if (gauge === undefined) return;
      let byChannel = this.channels.get(loggerId);
      if (byChannel === undefined) this.channels.set(loggerId, (byChannel = new Map()));
      byChannel.set(channelId, {
        unit: gauge.signal.unit, validMin: gauge.valid_range?.[0] ?? Number.NEGATIVE_INFINITY,
        validMax: gauge.valid_range?.[1] ?? Number.POSITIVE_INFINITY,
        hampel: { window: [] }, flatline: newFlatline(), heldFrames: [],
      });
    };
    if (health === undefined || (!health.spike.enabled && !health.flatline.enabled)) return;
    for (const g of structure.groups) {
      for (const ch of g.elementChannels) add(g.loggerId, ch);
      if (g.companion !== null) add(g.companion.loggerId, g.companion.channelId);
    }
  }

  /** How long a frame of this logger may wait for its excursions to be judged, ms. */
  maxWaitMs(loggerId: string): number {
    return this.waitMs.get(loggerId) ?? 0;
  }

  /**
   * Screens one frame on arrival (in arrival order per logger): judges earlier held readings its
   * readings end, and returns what it found in its own readings (null: nothing). Mutates the state.
   */
  screen(frame: LoggerFrame): FrameScreen | null {
    const byChannel = this.channels.get(frame.loggerId);
    const h = this.health;
    if (byChannel === undefined || h === undefined) return null;
    let found: FrameScreen | null = null;
    for (const [channelId, st] of byChannel) {
      const x = frame.values.get(channelId);
      if (typeof x !== 'number') {
        resetFlatline(st.flatline); // as the alarm engine: a gap starts the run again
        continue;
      }
      if (x < st.validMin || x > st.validMax) continue;
      if (h.spike.enabled) {
        const minDeviation = h.spike.min_deviation_by_unit[st.unit] ?? h.spike.min_deviation;
        const v = hampelStep(st.hampel, x, h.spike.window_samples, h.spike.k_mads, minDeviation);
        for (let k = 0; k < v.ended && st.heldFrames.length > 0; k++) st.heldFrames.shift()!.resolve(channelId, v.spike);
        if (v.held) {
          found ??= new FrameScreen();
          found.mark(channelId, CHANNEL_HELD);
          st.heldFrames.push(found);
        }
      }
      if (h.flatline.enabled) {
        const spread = flatlineStep(st.flatline, frame.timeMs, x, h.flatline.window_s * 1000);
        if (spread !== null && spread <= h.flatline.tolerance) {
          found ??= new FrameScreen();
          found.mark(channelId, CHANNEL_FLATLINE);
        }
      }
    }
    return found;
  }
}
