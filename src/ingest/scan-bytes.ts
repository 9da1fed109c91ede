/**
 * The common logger scan read straight from its payload bytes, with no text, no JSON.parse and
 * no string per channel key: `{"ts":<ms>,"seq":<n>,"values":{"ch01":1.5,...,"t2":null}}`
 * (`synthetic: true|false` too, keys in any order, JSON whitespace anywhere between tokens).
 *
 * It accepts only a part of what the general path (UTF-8 check, JSON.parse, duplicate-key guard,
 * scan schema) accepts, with the same data; anything else returns null and the general path decides
 * and words the refusal. Declined: any byte outside printable ASCII inside a key, backslashes
 * (escapes), other top-level keys, a key given twice, nesting, strings as values (ISO timestamps),
 * an empty `values`, channel keys made of digits only (an object lists those first, not in text
 * order) or `__proto__`, and numbers outside the exact range below. Pure (`numberRead` is
 * scratch); allocates the Map of values, two small records, and strings only for changed keys.
 */

import { BACKSLASH, CLOSE_OBJECT, COLON, COMMA, DOT, MINUS, NINE, OPEN_OBJECT, QUOTE, ZERO } from './char-codes.js';

/** One logger's channel keys as its previous scan sent them: key k is bytes[starts[k]..starts[k+1]). */
export interface ChannelKeys {
  readonly ids: readonly string[];
  readonly bytes: Uint8Array;
  readonly starts: Uint32Array;
}

export interface ByteScan {
  /** Epoch ms as sent (ranges are the caller's check). */
  ts: number;
  seq: number | null;
  /** `synthetic: true` was sent. */
  synthetic: boolean;
  /** Channel id to value, in the order sent. */
  values: Map<string, number | null>;
  /** The channel keys of this scan: `previous` itself when they were the same. */
  keys: ChannelKeys;
}


/**
 * Exact powers of ten as doubles (10^22 is the largest). A decimal of at most 15 significant
 * digits is then m / 10^d with both operands exact, and IEEE division rounds correctly: the same
 * double JSON.parse gives (Clinger's fast path, common practice).
 */
const POW10 = Array.from({ length: 23 }, (_, d) => Number(`1e${d}`));
const MAX_SIGNIFICANT_DIGITS = 15;

const SEEN_TS = 1;
const SEEN_SEQ = 2;
const SEEN_VALUES = 4;
const SEEN_SYNTHETIC = 8;

// Most bytes are above 0x20: one comparison each.
const isWhitespace = (c: number) => c <= 0x20 && (c === 0x20 || c === 0x0a || c === 0x0d || c === 0x09);

/** Index of the first byte at or after `i` that is not JSON whitespace (`b.length` if none). */
function skipWhitespace(b: Uint8Array, i: number): number {
  while (i < b.length && isWhitespace(b[i])) i++;
  return i;
}

/** Whether the ASCII `word` is at `i`. */
function isAt(b: Uint8Array, i: number, word: string): boolean {
  if (i + word.length > b.length) return false;
  for (let k = 0; k < word.length; k++) if (b[i + k] !== word.charCodeAt(k)) return false;
  return true;
}

/** The value of the last `readNumber` (one scan runs at a time: the reader is synchronous). */
let numberRead = 0;

/**
 * Reads a JSON number at `i` in the exact range (no exponent, <= 15 significant digits, <= 22
 * decimals) into `numberRead`; returns the index after it, or -1 to decline. The caller declines
 * unless a separator follows, so a digit after a leading 0, an exponent or a second dot is refused.
 */
function readNumber(b: Uint8Array, i: number): number {
  const negative = b[i] === MINUS;
  if (negative) i++;
  let mantissa = 0;
  let significant = 0;
  let decimals = 0;
  let c = i < b.length ? b[i] : -1;
  if (c === ZERO) {
    c = ++i < b.length ? b[i] : -1;
  } else if (c > ZERO && c <= NINE) {
    do {
      mantissa = mantissa * 10 + (c - ZERO);
      significant++;
      c = ++i < b.length ? b[i] : -1;
    } while (c >= ZERO && c <= NINE);
  } else {
    return -1;
  }
  if (c === DOT) {
    const from = ++i;
    c = i < b.length ? b[i] : -1;
    while (c >= ZERO && c <= NINE) {
      if (mantissa !== 0 || c !== ZERO) significant++;
      mantissa = mantissa * 10 + (c - ZERO);
      c = ++i < b.length ? b[i] : -1;
    }
    decimals = i - from;
    if (decimals === 0) return -1;
  }
  if (significant > MAX_SIGNIFICANT_DIGITS || decimals >= POW10.length) return -1;
  const magnitude = decimals === 0 ? mantissa : mantissa / POW10[decimals];
  numberRead = negative ? -magnitude : magnitude;
  return i;
}

/** The top-level key whose text starts at `i` (after its quote), with its closing quote; 0 if none. */
function topKeyAt(b: Uint8Array, i: number): number {
  if (isAt(b, i, 'ts"')) return SEEN_TS;
  if (isAt(b, i, 'seq"')) return SEEN_SEQ;
  if (isAt(b, i, 'values"')) return SEEN_VALUES;
  if (isAt(b, i, 'synthetic"')) return SEEN_SYNTHETIC;
  return 0;
}
/** Bytes of each top-level key with its closing quote. */
const TOP_KEY_BYTES: Record<number, number> = { [SEEN_TS]: 3, [SEEN_SEQ]: 4, [SEEN_VALUES]: 7, [SEEN_SYNTHETIC]: 10 };

/**
 * Length of the channel key at `i` (after its quote) when it equals `previous` key k, else -1.
 * Remembered keys were checked when first read, so equal bytes need no second check.
 */
function sameKeyAt(b: Uint8Array, i: number, previous: ChannelKeys | null, k: number): number {
  if (previous === null || k >= previous.ids.length) return -1;
  const from = previous.starts[k];
  const length = previous.starts[k + 1] - from;
  if (i + length >= b.length || b[i + length] !== QUOTE) return -1;
  const pb = previous.bytes;
  for (let j = 0; j < length; j++) if (b[i + j] !== pb[from + j]) return -1;
  return length;
}

/** Longest channel key read here, bytes (a longer one is left to the general path). */
const MAX_KEY_BYTES = 256;

/** End (closing quote) of a channel key at `from` that may be taken as it is, else -1. */
function newKeyEnd(b: Uint8Array, from: number): number {
  let digitsOnly = true;
  let i = from;
  const last = Math.min(b.length, from + MAX_KEY_BYTES + 1);
  for (; i < last && b[i] !== QUOTE; i++) {
    const c = b[i];
    if (c < 0x20 || c > 0x7e || c === BACKSLASH) return -1;
    if (c < ZERO || c > NINE) digitsOnly = false;
  }
  return i >= last || i === from || digitsOnly ? -1 : i;
}

/**
 * The scan in `payload`, or null to leave it to the general decoder. `previous`: the channel keys
 * of this logger's previous scan (null if none), compared byte by byte and reused when equal.
 */
export function scanFromBytes(payload: Uint8Array, previous: ChannelKeys | null): ByteScan | null {
  const b = payload;
  let i = skipWhitespace(b, 0);
  if (b[i] !== OPEN_OBJECT) return null;
  i++;
  let seen = 0;
  let ts = NaN;
  let seq: number | null = null;
  let synthetic = false;
  let read: ValuesRead | null = null;
  for (;;) {
    i = skipWhitespace(b, i);
    if (b[i] !== QUOTE) return null;
    const key = topKeyAt(b, ++i);
    if (key === 0 || (seen & key) !== 0) return null;
    seen |= key;
    i = skipWhitespace(b, i + TOP_KEY_BYTES[key]);
    if (b[i] !== COLON) return null;
    i = skipWhitespace(b, i + 1);
    if (key === SEEN_VALUES) {
      if (b[i] !== OPEN_OBJECT) return null;
      read = readValues(b, i + 1, previous);
      if (read === null) return null;
      i = read.end;
    } else if (key === SEEN_SYNTHETIC) {
      if (isAt(b, i, 'true')) { synthetic = true; i += 4; }
      else if (isAt(b, i, 'false')) i += 5;
      else return null;
    } else {
      i = readNumber(b, i);
      if (i < 0) return null;
      if (key === SEEN_TS) ts = numberRead;
      // As the scan schema: a safe non-negative integer (-0 passes, as there).
      else if (!Number.isSafeInteger(numberRead) || numberRead < 0) return null;
      else seq = numberRead;
    }
    i = skipWhitespace(b, i);
    const after = b[i++];
    if (after === CLOSE_OBJECT) break;
    if (after !== COMMA) return null;
  }
  // Only whitespace may follow the object.
  if (skipWhitespace(b, i) !== b.length || (seen & SEEN_TS) === 0 || read === null) return null;
  return { ts, seq, synthetic, values: read.values, keys: read.keys };
}

interface ValuesRead {
  values: Map<string, number | null>;
  keys: ChannelKeys;
  /** Index after the closing brace. */
  end: number;
}

/** The `values` object's members from `i`, just after its `{`; null to decline. */
function readValues(b: Uint8Array, i: number, previous: ChannelKeys | null): ValuesRead | null {
  const values = new Map<string, number | null>();
  // Set at the first key that differs from the previous scan's (then every key is read anew).
  let ids: string[] | null = null;
  let count = 0;
  for (;; count++) {
    i = skipWhitespace(b, i);
    if (b[i] !== QUOTE) return null;
    i++;
    let id: string;
    const same = ids === null ? sameKeyAt(b, i, previous, count) : -1;
    if (same >= 0) {
      id = previous!.ids[count];
      i += same + 1;
    } else {
      const end = newKeyEnd(b, i);
      if (end < 0) return null;
      // Printable ASCII: each byte is its own UTF-16 code unit.
      id = String.fromCharCode.apply(null, b.subarray(i, end) as unknown as number[]);
      if (id === '__proto__') return null;
      if (ids === null) ids = previous === null ? [] : previous.ids.slice(0, count);
      ids.push(id);
      i = end + 1;
    }
    i = skipWhitespace(b, i);
    if (b[i] !== COLON) return null;
    i = skipWhitespace(b, i + 1);
    if (b[i] === 0x6e) {
      if (!isAt(b, i, 'null')) return null;
      values.set(id, null);
      i += 4;
    } else {
      i = readNumber(b, i);
      if (i < 0) return null;
      values.set(id, numberRead);
    }
    i = skipWhitespace(b, i);
    const after = b[i++];
    if (after === CLOSE_OBJECT) break;
    if (after !== COMMA) return null;
  }
  count++;
  // A key given twice leaves fewer entries than keys read: JSON.parse would keep the last silently.
  if (values.size !== count) return null;
  if (ids === null) {
    // Every key was the previous scan's; fewer of them is a new set of keys all the same.
    if (previous!.ids.length === count) return { values, keys: previous!, end: i };
    ids = previous!.ids.slice(0, count);
  }
  return { values, keys: channelKeys(ids), end: i };
}

/** The byte form of checked channel ids (printable ASCII). */
function channelKeys(ids: string[]): ChannelKeys {
  const starts = new Uint32Array(ids.length + 1);
  for (let k = 0; k < ids.length; k++) starts[k + 1] = starts[k] + ids[k].length;
  const bytes = new Uint8Array(starts[ids.length]);
  for (let k = 0; k < ids.length; k++) for (let j = 0; j < ids[k].length; j++) bytes[starts[k] + j] = ids[k].charCodeAt(j);
  return { ids, bytes, starts };
}
