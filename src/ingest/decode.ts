import type { ChannelDirectory } from '../model/channel-directory.js';
import type { LoggerFrame, RawMessage } from '../model/raw-message.js';
import type { DeadLetter, Rejection } from '../model/rejection.js';
import { toDeadLetter } from './dead-letter-record.js';
import { jsonShapeProblem, keyTokensAndDepth, MAX_JSON_DEPTH, parsedKeyCount } from './json-guard.js';
import { parseLoggerTimestamp, plainScan, schemaFor } from './payload-schema.js';
import { scanFromBytes, type ChannelKeys } from './scan-bytes.js';
import { parseTopic, type TopicPattern } from './topic.js';

/**
 * A refusal also says which configured logger sent it and the time it gave, when those could be
 * read: a refused message is still evidence about its logger (its clock, for one).
 */
export type DecodeResult =
  | { ok: true; frame: LoggerFrame }
  | { ok: false; deadLetter: DeadLetter; loggerId: string | null; timeMs: number | null };

/**
 * How far ahead of the processor's clock (the message's arrival time) a logger's timestamp may be,
 * ms, unless configured (`ingest.max_future_s`). Transport only delays a message, so a reading from
 * the future is a wrong logger clock; accepted, it would be the newest temperature of every later
 * interpolation and hold every later scan of its logger waiting for a temperature after it.
 */
export const DEFAULT_MAX_FUTURE_MS = 5_000;

export interface DecodeLimits {
  /** Largest accepted logger time minus arrival time, ms. */
  maxFutureMs: number;
}

type Issue = { code: string; path: PropertyKey[]; message: string; keys?: string[] };

// ignoreBOM: keep a byte-order mark in the text, so it is refused instead of silently skipped.
const strictUtf8 = new TextDecoder('utf-8', { fatal: true, ignoreBOM: true });
const NON_FINITE_TEXT = /^\s*[+-]?(nan|inf|infinity)\s*$/i;

/** `fastPath: false` decodes every message the general way (tests compare the two paths). */
export interface DecodeOptions {
  fastPath?: boolean;
}

/**
 * Decode one raw message into a logger frame, or a dead letter listing every problem found
 * (topic, JSON, schema, unknown logger or channel, non-finite numbers, timestamp) at once.
 * The common scan is read straight from its bytes (`scan-bytes.ts`); any message that path
 * declines or that fails a check is decoded again the general way, which words every refusal.
 * Pure in its results: its one state, each logger's last channel keys, only saves work.
 */
export function decodeMessage(
  raw: RawMessage, directory: ChannelDirectory, pattern: TopicPattern,
  limits: DecodeLimits = { maxFutureMs: DEFAULT_MAX_FUTURE_MS }, options?: DecodeOptions,
): DecodeResult {
  const rejections: Rejection[] = [];
  const loggerId = knownLogger(raw.topic, directory, pattern, rejections);
  if (loggerId !== null && options?.fastPath !== false) {
    const frame = frameFromBytes(raw, directory, loggerId, limits);
    if (frame !== null) return { ok: true, frame };
  }
  return decodeGeneral(raw, directory, limits, loggerId, rejections);
}

/**
 * Per directory, each logger's channel keys of its last byte-read scan, kept only once the
 * directory knew them all: loggers send the same keys every scan, so comparing bytes replaces
 * building strings and the directory is not asked again (its answers are fixed, see
 * ChannelDirectory). Keyed by directory first, so two structures in one process (cluster units)
 * never displace each other's keys; only known keys are kept, so the memory is the size of the
 * configuration, emptied if more loggers than this appear.
 */
const MAX_REMEMBERED_LOGGERS = 4096;
const remembered = new WeakMap<ChannelDirectory, Map<string, ChannelKeys>>();

/** The frame of a common scan read from its bytes that passes every check, else null. */
function frameFromBytes(raw: RawMessage, directory: ChannelDirectory, loggerId: string, limits: DecodeLimits): LoggerFrame | null {
  if (raw.payload.byteLength > MAX_PAYLOAD_BYTES) return null;
  let known = remembered.get(directory);
  const previous = known?.get(loggerId) ?? null;
  const scan = scanFromBytes(raw.payload, previous);
  if (scan === null) return null;
  const problems: Rejection[] = [];
  if (scan.keys !== previous) {
    checkChannels(scan.values.keys(), true, loggerId, directory, problems);
    if (problems.length > 0) return null;
    if (known === undefined) remembered.set(directory, (known = new Map()));
    if (previous === null && known.size >= MAX_REMEMBERED_LOGGERS) known.clear();
    known.set(loggerId, scan.keys);
  }
  const timeMs = checkedTime(scan.ts, raw.arrivalMs, limits, problems);
  if (problems.length > 0) return null;
  return toFrame(directory, loggerId, timeMs, scan.seq, scan.synthetic, scan.values, raw.arrivalMs);
}

/** JSON.parse, schema and checks: every message the byte path declines, and every refusal. */
function decodeGeneral(
  raw: RawMessage, directory: ChannelDirectory, limits: DecodeLimits, loggerId: string | null, rejections: Rejection[],
): DecodeResult {
  const parsed = parseJson(raw.payload);
  if (!parsed.ok) {
    rejections.push(parsed.rejection);
    return { ok: false, deadLetter: toDeadLetter(raw, rejections), loggerId, timeMs: null };
  }
  const input = parsed.value;
  // The common shape is recognised without zod; anything else goes through the schema.
  const plain = plainScan(input);
  const result = plain !== null ? { success: true as const, data: plain, error: undefined } : schemaFor(input).safeParse(input);
  if (!result.success) rejections.push(...issuesToRejections(result.error!.issues as Issue[], input));

  // Checks below read the raw input, not the schema output, so they run even when the schema
  // failed elsewhere: the operator sees every problem of a message in one dead letter.
  let timeMs = NaN;
  if (isRecord(input)) {
    const ts = input.ts;
    if (typeof ts === 'string' || (typeof ts === 'number' && Number.isFinite(ts))) {
      timeMs = checkedTime(ts, raw.arrivalMs, limits, rejections);
    }
    if (loggerId !== null) checkChannels(channelsNamed(input), isRecord(input.values), loggerId, directory, rejections);
  }

  if (rejections.length > 0 || !result.success || loggerId === null) {
    return { ok: false, deadLetter: toDeadLetter(raw, rejections), loggerId, timeMs: Number.isNaN(timeMs) ? null : timeMs };
  }
  const data = result.data;
  const values = new Map<string, number | null>();
  if ('values' in data) for (const channel in data.values) values.set(channel, data.values[channel]);
  else values.set(data.channel, data.value);
  return { ok: true, frame: toFrame(directory, loggerId, timeMs, data.seq ?? null, data.synthetic === true, values, raw.arrivalMs) };
}

/** The logger time of `ts`, NaN if refused; refusals (range, syntax, ahead of arrival) pushed to `out`. */
function checkedTime(ts: string | number, arrivalMs: number, limits: DecodeLimits, out: Rejection[]): number {
  let timeMs = NaN;
  const t = parseLoggerTimestamp(ts);
  if (t.ok) timeMs = t.timeMs;
  else out.push({ code: 'invalid_timestamp', path: 'ts', reason: `ts: ${t.reason}` });
  // The arrival time is the processor's clock, live and in replay (recorded in the capture).
  const aheadMs = timeMs - arrivalMs;
  if (aheadMs > limits.maxFutureMs) {
    out.push({
      code: 'future_timestamp', path: 'ts',
      reason: `ts: ${new Date(timeMs).toISOString()} is ${(aheadMs / 1000).toFixed(1)} s ahead of the processor's clock `
        + `(arrival ${new Date(arrivalMs).toISOString()}), more than ingest.max_future_s = ${limits.maxFutureMs / 1000} s: check the logger's clock`,
    });
  }
  return timeMs;
}

/**
 * A message naming a channel the configuration does not know is refused whole, not
 * half-processed: such a logger is misconfigured (wrong program, swapped cable map), and
 * its other values are then suspect too. Refusing it makes the fault visible at once.
 */
function checkChannels(
  channelIds: Iterable<string>, inValues: boolean, loggerId: string, directory: ChannelDirectory, out: Rejection[],
): void {
  for (const channelId of channelIds) {
    if (!directory.hasChannel(loggerId, channelId)) {
      const path = inValues ? `values.${channelId}` : 'channel';
      out.push({
        code: 'unknown_channel',
        path,
        reason: `${path}: channel "${channelId}" is not configured on logger "${loggerId}"`,
      });
    }
  }
}

function toFrame(
  directory: ChannelDirectory, loggerId: string, timeMs: number, seq: number | null, synthetic: boolean,
  values: Map<string, number | null>, arrivalMs: number,
): LoggerFrame {
  const frame: LoggerFrame = { structureId: directory.structureId, loggerId, timeMs, seq, values, arrivalMs };
  if (synthetic) frame.synthetic = true;
  return frame;
}

/** The logger id when the topic names this structure and a configured logger; else null (rejection pushed). */
function knownLogger(topic: string, directory: ChannelDirectory, pattern: TopicPattern, out: Rejection[]): string | null {
  const match = parseTopic(pattern, topic);
  if (!match.ok) {
    out.push(match.rejection);
    return null;
  }
  if (match.structureId !== directory.structureId) {
    out.push({
      code: 'unknown_topic',
      path: '',
      reason: `topic "${topic}" names structure "${match.structureId}", this processor serves "${directory.structureId}"`,
    });
    return null;
  }
  if (!directory.hasLogger(match.loggerId)) {
    out.push({ code: 'unknown_logger', path: '', reason: `logger "${match.loggerId}" is not configured (topic "${topic}")` });
    return null;
  }
  return match.loggerId;
}

/**
 * Largest payload decoded, bytes. A 32-channel scan is about 1 KB and a 1,000-channel one about
 * 30 KB; far larger is a fault (or an attack) and is refused before it is parsed.
 */
export const MAX_PAYLOAD_BYTES = 256 * 1024;

function parseJson(payload: Uint8Array): { ok: true; value: unknown } | { ok: false; rejection: Rejection } {
  const fail = (reason: string, code: Rejection['code'] = 'not_json') => ({ ok: false as const, rejection: { code, path: '', reason } });
  if (payload.byteLength === 0) return fail('payload is empty');
  if (payload.byteLength > MAX_PAYLOAD_BYTES) {
    return fail(`payload is ${payload.byteLength} bytes, over the ${MAX_PAYLOAD_BYTES}-byte limit of a logger message`, 'invalid_payload');
  }
  // The decoder would drop a byte-order mark silently; a logger that sends one is misconfigured.
  if (payload[0] === 0xef && payload[1] === 0xbb && payload[2] === 0xbf) return fail('payload starts with a UTF-8 byte-order mark (EF BB BF): send the JSON without it');
  let text: string;
  try {
    text = strictUtf8.decode(payload);
  } catch {
    return fail('payload is not valid UTF-8 text');
  }
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (e) {
    return fail(`payload is not valid JSON: ${(e as Error).message}`);
  }
  // Only objects can hide a duplicate key or nest; a scan is an object, so this runs on every good message.
  if (typeof value === 'object' && value !== null) {
    // Counted first without allocating (this runs on every scan); a refusal is then named.
    const { keys, depth } = keyTokensAndDepth(text);
    if (depth <= MAX_JSON_DEPTH && keys === parsedKeyCount(value)) return { ok: true, value };
    const problem = jsonShapeProblem(text);
    if (problem?.kind === 'duplicate_key') {
      const where = problem.path === '' ? problem.key : `${problem.path}.${problem.key}`;
      return { ok: false, rejection: { code: 'invalid_payload', path: where, reason: `${where}: key given twice (JSON would keep only the last)` } };
    }
    if (problem?.kind === 'too_deep') return fail(`payload nests deeper than ${MAX_JSON_DEPTH} levels`, 'invalid_payload');
  }
  return { ok: true, value };
}

function isRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

/** Channel ids a payload names, whatever else is wrong with it (paths are built only for a refusal). */
function channelsNamed(input: Record<string, unknown>): string[] {
  if (isRecord(input.values)) return Object.keys(input.values);
  if (typeof input.channel === 'string' && input.channel !== '') return [input.channel];
  return [];
}

function valueAt(input: unknown, path: PropertyKey[]): unknown {
  let v = input;
  for (const key of path) v = isRecord(v) ? v[key as string] : undefined;
  return v;
}

const isChannelValuePath = (path: PropertyKey[]) =>
  (path.length === 2 && path[0] === 'values') || (path.length === 1 && path[0] === 'value');

function issuesToRejections(issues: Issue[], input: unknown): Rejection[] {
  const out: Rejection[] = [];
  for (const issue of issues) {
    if (issue.code === 'unrecognized_keys' && issue.keys) {
      for (const key of issue.keys) {
        const path = [...issue.path, key].join('.');
        out.push({ code: 'invalid_payload', path, reason: `${path}: unknown key (the contract is strict)` });
      }
      continue;
    }
    const path = issue.path.join('.');
    const value = valueAt(input, issue.path);
    if (typeof value === 'number' && !Number.isFinite(value)) {
      out.push({ code: 'non_finite_value', path, reason: `${path}: ${value} is not a finite number` });
    } else if (isChannelValuePath(issue.path) && typeof value === 'string' && NON_FINITE_TEXT.test(value)) {
      out.push({
        code: 'non_finite_value',
        path,
        reason: `${path}: "${value}" is not a finite number (send null for an unreadable channel)`,
      });
    } else {
      out.push({ code: 'invalid_payload', path, reason: `${path || 'payload'}: ${issue.message}` });
    }
  }
  return out;
}
