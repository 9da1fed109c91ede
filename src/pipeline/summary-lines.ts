import { escapeKey } from '../adapters/lineproto/encode.js';
import { RESULT_QUANTITIES } from '../model/result.js';
import { RESULT_DECIMALS, type FrameLineWriter } from './frame-lines.js';
import { stdOf, type IntervalStats } from './summary-accumulator.js';

/**
 * The database layout of summaries (documented in the README), one line per series and interval,
 * stamped with the interval's start (logger time):
 *
 * - sw_summary      tags structure, group, zone, logger, interval, [run]; fields results_trusted,
 *   results_flagged, flags_seen (the quality bits of the flagged results OR-ed), and per result
 *   quantity of the trusted results: <q>_min, <q>_max, <q>_mean, <q>_std (population), with
 *   RESULT_DECIMALS decimals, <q>_min_time_ms and <q>_max_time_ms (epoch ms of logger time when
 *   the extreme was first reached), <q>_count only where it differs from results_trusted
 * - sw_raw_summary  tags structure, logger, interval, [run]; fields scans, and per channel
 *   <ch>_min, <ch>_max (as received), <ch>_mean, <ch>_std (9 decimals), <ch>_count, and the same
 *   for arrival_lag_ms (arrival minus logger time)
 */
export const RAW_MEAN_DECIMALS = 9;

const ascii = (text: string) => Buffer.from(text, 'utf8');
const STATS = ['min', 'max', 'mean', 'std', 'min_time_ms', 'max_time_ms', 'count'] as const;
type Keys = Record<(typeof STATS)[number], Buffer>;
const fieldKeys = (name: string): Keys => Object.fromEntries(STATS.map((k) => [k, ascii(`,${escapeKey(`${name}_${k}`)}=`)])) as Keys;
const RESULT_KEYS: readonly Keys[] = RESULT_QUANTITIES.map(fieldKeys);
const TRUSTED_KEY = ascii(' results_trusted=');
const FLAGGED_KEY = ascii(',results_flagged=');
const FLAGS_KEY = ascii(',flags_seen=');
const SCANS_KEY = ascii(' scans=');
const SPACE = 0x20;

/** `10s`, `0.5s`: the interval as a tag value. */
export function intervalTag(intervalMs: number): string {
  return `${intervalMs / 1000}s`;
}

/** Encodes one group's closed interval (the stats' quantities are RESULT_QUANTITIES) as a sw_summary line. */
export function writeResultSummary(w: FrameLineWriter, seriesKey: Buffer, s: IntervalStats): void {
  const out = w.out;
  out.bytes(seriesKey);
  out.bytes(TRUSTED_KEY);
  out.exact(s.trusted);
  out.bytes(FLAGGED_KEY);
  out.exact(s.flagged);
  out.bytes(FLAGS_KEY);
  out.exact(s.flagBits);
  for (let q = 0; q < RESULT_KEYS.length; q++) {
    const n = s.count[q];
    if (n === 0) continue;
    const k = RESULT_KEYS[q];
    out.bytes(k.min); out.fixed(s.min[q], RESULT_DECIMALS);
    out.bytes(k.max); out.fixed(s.max[q], RESULT_DECIMALS);
    out.bytes(k.mean); out.fixed(s.mean[q], RESULT_DECIMALS);
    out.bytes(k.std); out.fixed(stdOf(s, q), RESULT_DECIMALS);
    out.bytes(k.min_time_ms); out.exact(Math.round(s.minAtMs[q]));
    out.bytes(k.max_time_ms); out.exact(Math.round(s.maxAtMs[q]));
    if (n !== s.trusted) { out.bytes(k.count); out.exact(n); }
  }
  out.byte(SPACE);
  out.exact(Math.round(s.startMs));
  out.endLine();
}

/** Field keys of a logger's raw summary: one set per channel, then arrival_lag_ms (the last quantity). */
export function rawSummaryKeys(channels: readonly string[]): Keys[] {
  return [...channels, 'arrival_lag_ms'].map(fieldKeys);
}

/** Encodes one logger's closed interval as a sw_raw_summary line (`trusted` counts the scans). */
export function writeRawSummary(w: FrameLineWriter, seriesKey: Buffer, keys: readonly Keys[], s: IntervalStats): void {
  const out = w.out;
  out.bytes(seriesKey);
  out.bytes(SCANS_KEY);
  out.exact(s.trusted);
  for (let q = 0; q < keys.length; q++) {
    const n = s.count[q];
    if (n === 0) continue;
    const k = keys[q];
    out.bytes(k.min); out.exact(s.min[q]);
    out.bytes(k.max); out.exact(s.max[q]);
    out.bytes(k.mean); out.fixed(s.mean[q], RAW_MEAN_DECIMALS);
    out.bytes(k.std); out.fixed(stdOf(s, q), RAW_MEAN_DECIMALS);
    out.bytes(k.count); out.exact(n);
  }
  out.byte(SPACE);
  out.exact(Math.round(s.startMs));
  out.endLine();
}
