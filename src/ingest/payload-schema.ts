/**
 * Logger message contract (MQTT payload, UTF-8 JSON, one message per logger scan).
 *
 * Scan message: every channel the logger read at one instant.
 *
 *     {"ts": "2025-03-14T09:26:53.589Z", "seq": 1207, "values": {"ch01": 412.7, "ch02": null}}
 *
 * Single-channel message: slow loggers (temperature) that send one channel at a time.
 *
 *     {"ts": 1741944413589, "seq": 88, "channel": "t01", "value": 11.25}
 *
 * Fields:
 * - `ts` (required): the logger's own time of the scan, either an ISO 8601 string with a time
 *   zone (`Z` or `+hh:mm`) or a number of epoch milliseconds. Must fall in [2000-01-01, 2100-01-01):
 *   a value outside is almost always epoch seconds sent as milliseconds (or the reverse).
 * - `seq` (optional): non-negative integer, increasing per logger; gaps reveal lost scans.
 * - `values` (scan): object of channel id to raw reading in the channel's configured unit, or
 *   `null` when the logger could not read that channel. At least one channel.
 * - `channel` + `value` (single-channel): the same, for one channel.
 * - `synthetic` (optional): `true` on simulated readings (the simulator sends it on every message);
 *   the processor takes them in and warns, once per logger, in its log and presence message.
 * - No other keys: unknown keys are refused (strict), so a typo such as `valeus` is caught.
 * - Numbers must be finite. JSON cannot carry NaN; `1e999` parses to Infinity and is refused,
 *   as are strings such as "NaN" or "Infinity": send `null` for an unreadable channel.
 * - The topic names the structure and the logger (see topic.ts); every logger and channel must
 *   exist in the configuration, else the whole message is refused.
 *
 * Refused messages go to the dead-letter record with every reason at once.
 */
import { z } from 'zod';

/** Short description of a JSON value's type for error messages ("string", "array", "Infinity"...). */
export function describeInput(input: unknown): string {
  if (input === undefined) return 'nothing';
  if (input === null) return 'null';
  if (Array.isArray(input)) return 'array';
  if (typeof input === 'number' && !Number.isFinite(input)) return String(input);
  return typeof input;
}

const expected = (what: string) => ({
  error: (issue: { input?: unknown }) =>
    issue.input === undefined ? `required: ${what}` : `expected ${what}, received ${typeof issue.input === 'number' ? issue.input : describeInput(issue.input)}`,
});

/** Logger timestamp as sent: shape only; ranges and ISO syntax are checked by `parseLoggerTimestamp`. */
export const timestampSchema = z.union([z.string(), z.number()], expected('an ISO 8601 string or epoch milliseconds number'));

export const seqSchema = z
  .number(expected('a non-negative integer'))
  .int(expected('a non-negative integer'))
  .nonnegative(expected('a non-negative integer'));

/** `synthetic: true` marks simulated readings; `false` is the same as leaving it out. */
export const syntheticSchema = z.boolean(expected('true or false')).optional();

/** One channel reading: a finite number in the channel's unit, or null (not read). */
export const channelValueSchema = z.number(expected('a number or null')).nullable();

export const channelIdSchema = z.string(expected('a channel id string')).min(1, 'expected a non-empty channel id');

/** A full logger scan. */
export const scanMessageSchema = z.strictObject(
  {
    ts: timestampSchema,
    seq: seqSchema.optional(),
    values: z
      .record(z.string(), channelValueSchema, expected('an object of channel values'))
      .refine((v) => Object.keys(v).length > 0, 'expected at least one channel'),
    synthetic: syntheticSchema,
  },
  expected('a JSON object'),
);

/** One channel of one logger (slow temperature loggers). */
export const channelMessageSchema = z.strictObject(
  {
    ts: timestampSchema,
    seq: seqSchema.optional(),
    channel: channelIdSchema,
    value: channelValueSchema,
    synthetic: syntheticSchema,
  },
  expected('a JSON object'),
);

export type ScanMessage = z.infer<typeof scanMessageSchema>;
export type ChannelMessage = z.infer<typeof channelMessageSchema>;
/** Either message form; for typing and documentation. Decoding picks the form with `schemaFor`. */
export const loggerMessageSchema = z.union([scanMessageSchema, channelMessageSchema]);
export type LoggerMessage = z.infer<typeof loggerMessageSchema>;

/**
 * A payload the scan schema accepts, recognised without running it: the shape of almost every
 * message (zod took 14 % of the processor's time per scan). Returns the payload itself (what the
 * schema's output equals), or null to let the schema decide and word any refusal. It accepts only
 * a part of what `scanMessageSchema` accepts (tested against it): exactly the keys ts, seq,
 * values; ts a string or a finite number; seq a safe non-negative integer; at least one value, each
 * a finite number or null; no `__proto__` channel (the schema drops it).
 */
export function plainScan(input: unknown): ScanMessage | null {
  if (typeof input !== 'object' || input === null || Array.isArray(input)) return null;
  const o = input as Record<string, unknown>;
  for (const k in o) if (k !== 'ts' && k !== 'seq' && k !== 'values') return null;
  const ts = o.ts;
  if (typeof ts !== 'string' && !(typeof ts === 'number' && Number.isFinite(ts))) return null;
  if ('seq' in o) {
    const seq = o.seq;
    if (typeof seq !== 'number' || !Number.isSafeInteger(seq) || seq < 0) return null;
  }
  const values = o.values;
  if (typeof values !== 'object' || values === null || Array.isArray(values)) return null;
  let count = 0;
  for (const k in values) {
    if (k === '__proto__') return null;
    const v = (values as Record<string, unknown>)[k];
    if (v !== null && !(typeof v === 'number' && Number.isFinite(v))) return null;
    count++;
  }
  return count === 0 ? null : (o as ScanMessage);
}

/**
 * Which form a parsed payload means to be: single-channel when it has `channel` or `value` and no
 * `values`, scan otherwise. Choosing first gives one clear set of errors instead of a union's.
 */
export function schemaFor(input: unknown): typeof scanMessageSchema | typeof channelMessageSchema {
  if (typeof input === 'object' && input !== null && !Array.isArray(input)) {
    const keys = Object.keys(input);
    if (!keys.includes('values') && (keys.includes('channel') || keys.includes('value'))) return channelMessageSchema;
  }
  return scanMessageSchema;
}

/** Lowest and highest accepted logger time, epoch ms: see the contract above. */
export const MIN_LOGGER_TIME_MS = Date.UTC(2000, 0, 1);
export const MAX_LOGGER_TIME_MS = Date.UTC(2100, 0, 1);

const isoWithZone = z.iso.datetime({ offset: true });

/**
 * Logger timestamp to epoch ms, or the reason it is refused. Pure.
 * Only called with a string or number (shape is the schema's job).
 */
export function parseLoggerTimestamp(ts: string | number): { ok: true; timeMs: number } | { ok: false; reason: string } {
  let timeMs: number;
  if (typeof ts === 'string') {
    if (!isoWithZone.safeParse(ts).success) {
      return { ok: false, reason: `expected an ISO 8601 date-time with time zone, received "${ts.slice(0, 40)}"` };
    }
    timeMs = Date.parse(ts);
    if (!Number.isFinite(timeMs)) return { ok: false, reason: `"${ts}" is not a calendar date-time` };
  } else {
    if (!Number.isFinite(ts)) return { ok: false, reason: `expected finite epoch milliseconds, received ${ts}` };
    timeMs = ts;
  }
  if (timeMs < MIN_LOGGER_TIME_MS || timeMs >= MAX_LOGGER_TIME_MS) {
    return {
      ok: false,
      reason: `${ts} is outside 2000-01-01..2100-01-01 (epoch seconds sent instead of milliseconds?)`,
    };
  }
  return { ok: true, timeMs };
}
