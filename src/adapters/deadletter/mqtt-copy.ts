import { createHash } from 'node:crypto';
import type { DeadLetter, Rejection } from '../../model/rejection.js';

/**
 * The dead-letter copy published on MQTT: a notice that fits under the broker's packet limit,
 * not the record. The dead-letter file keeps the whole original; the copy carries its size and
 * SHA-256 (to find it there), as many reasons as fit and the start of the payload.
 */
export interface DeadLetterCopy {
  topic: string;
  /** True when `topic` was cut to TOPIC_CHARS characters. */
  topicTruncated: boolean;
  arrivalMs: number;
  arrivalIso: string;
  /** Size of the original payload, bytes, and its SHA-256 (hex). */
  payloadBytes: number;
  payloadSha256: string;
  /** Reasons kept (each `reason` cut to REASON_CHARS characters) and how many there were. */
  rejections: Rejection[];
  rejectionCount: number;
  /** The start of the payload: as text when it is printable, else base64 of its first bytes. */
  excerptText: string | null;
  excerptBase64: string | null;
  /** Payload bytes the excerpt covers; less than `payloadBytes` when it was cut. */
  excerptBytes: number;
}

const TOPIC_CHARS = 256;
const REASON_CHARS = 200;
/** Below this a copy cannot hold even its fixed fields with a long topic (its JSON escaped). */
export const MIN_COPY_BYTES = 2048;

const bytesOf = (value: unknown): number => Buffer.byteLength(JSON.stringify(value), 'utf8');
const cut = (text: string, chars: number): string => (text.length <= chars ? text : text.slice(0, chars));

/**
 * The copy of `deadLetter` whose JSON is at most `maxBytes` bytes (UTF-8). Pure; `maxBytes` at
 * least MIN_COPY_BYTES. Reasons are kept in order while they fit, then the longest excerpt that fits.
 */
export function deadLetterCopy(deadLetter: DeadLetter, maxBytes: number): DeadLetterCopy {
  if (maxBytes < MIN_COPY_BYTES) throw new RangeError(`dead-letter copy limit ${maxBytes} bytes is below ${MIN_COPY_BYTES}`);
  const payload = Buffer.from(deadLetter.payloadBase64, 'base64');
  const copy: DeadLetterCopy = {
    topic: cut(deadLetter.topic, TOPIC_CHARS),
    topicTruncated: deadLetter.topic.length > TOPIC_CHARS,
    arrivalMs: deadLetter.arrivalMs,
    arrivalIso: deadLetter.arrivalIso,
    payloadBytes: payload.length,
    payloadSha256: createHash('sha256').update(payload).digest('hex'),
    rejections: [],
    rejectionCount: deadLetter.rejections.length,
    excerptText: deadLetter.payloadText === null ? null : '',
    excerptBase64: deadLetter.payloadText === null ? '' : null,
    excerptBytes: 0,
  };
  // Room for an excerpt of at least a quarter of the copy (or the whole payload if smaller) is kept before reasons.
  const excerptReserve = Math.min(Math.floor(maxBytes / 4), 2 * payload.length + 16);
  let size = bytesOf(copy);
  for (const r of deadLetter.rejections) {
    const kept: Rejection = { code: r.code, path: cut(r.path, REASON_CHARS), reason: cut(r.reason, REASON_CHARS) };
    const grown = size + bytesOf(kept) + 1; // the comma
    if (grown + excerptReserve > maxBytes) break;
    copy.rejections.push(kept);
    size = grown;
  }
  return withLongestExcerpt(copy, deadLetter.payloadText, payload, maxBytes);
}

/** Binary search on the excerpt's length: the longest prefix whose copy fits. */
function withLongestExcerpt(copy: DeadLetterCopy, text: string | null, payload: Buffer, maxBytes: number): DeadLetterCopy {
  const withPrefix = (n: number): DeadLetterCopy => {
    if (text === null) {
      const part = payload.subarray(0, n);
      return { ...copy, excerptBase64: part.toString('base64'), excerptBytes: part.length };
    }
    let end = n;
    if (end < text.length && end > 0 && /[\ud800-\udbff]/.test(text[end - 1])) end--; // never split a surrogate pair
    const part = text.slice(0, end);
    return { ...copy, excerptText: part, excerptBytes: Buffer.byteLength(part, 'utf8') };
  };
  let lo = 0;
  let hi = text === null ? payload.length : text.length;
  if (bytesOf(withPrefix(hi)) <= maxBytes) return withPrefix(hi);
  while (lo < hi) {
    const mid = Math.ceil((lo + hi) / 2);
    if (bytesOf(withPrefix(mid)) <= maxBytes) lo = mid;
    else hi = mid - 1;
  }
  return withPrefix(lo);
}
