/**
 * Point -> one line of InfluxDB line protocol, timestamp precision milliseconds.
 *
 * Escaping follows the line protocol reference ("Special characters"): measurement escapes comma
 * and space; tag keys, tag values and field keys escape comma, equals sign and space. Backslash is
 * doubled everywhere, because the reference reads `\\` as one literal backslash, so any input
 * (even one ending in a backslash) reads back unchanged. Newline and carriage return cannot be
 * represented in line protocol at all; they are replaced by a space (then escaped).
 * Pure: no I/O.
 */
import type { Point } from '../../model/point.js';

const MEASUREMENT_SPECIAL = /[\\, ]/g;
const KEY_SPECIAL = /[\\,= ]/g;
const LINE_BREAK = /[\r\n]/g;
// Almost every name has nothing to escape: test first, so the common case allocates nothing.
const MEASUREMENT_NEEDS_ESCAPE = /[\\, \r\n]/;
const KEY_NEEDS_ESCAPE = /[\\,= \r\n]/;

/** Escapes a measurement name (comma, space, backslash). */
export function escapeMeasurement(name: string): string {
  if (!MEASUREMENT_NEEDS_ESCAPE.test(name)) return name;
  return name.replace(LINE_BREAK, ' ').replace(MEASUREMENT_SPECIAL, (c) => '\\' + c);
}

/** Escapes a tag key, tag value or field key (comma, equals sign, space, backslash). */
export function escapeKey(text: string): string {
  if (!KEY_NEEDS_ESCAPE.test(text)) return text;
  return text.replace(LINE_BREAK, ' ').replace(KEY_SPECIAL, (c) => '\\' + c);
}

/**
 * Shortest decimal that reads back to the same float64 (ECMAScript Number#toString). Exponent
 * form (`1e-7`, `1e+21`) is valid float syntax in line protocol. No `i` suffix: always a float.
 */
export function formatFloat(value: number): string {
  return Object.is(value, -0) ? '0' : String(value);
}

/**
 * Encodes one point. Tags are sorted by key (the reference's performance tip); empty tag keys or
 * values are omitted (the reference forbids empty tag values). Non-finite fields and fields with an
 * empty key are dropped. Returns null when nothing can be written: empty measurement, no finite
 * field, a non-finite time, or a measurement starting with `#`. `timeMs` is rounded to whole milliseconds.
 */
export function encodeLine(point: Point): string | null {
  // A line starting with `#` is a comment in line protocol, and `#` cannot be escaped there.
  if (point.measurement === '' || point.measurement.startsWith('#') || !Number.isFinite(point.timeMs)) return null;
  let fieldSet = '';
  const fields = point.fields;
  for (const key in fields) {
    const value = fields[key];
    if (key === '' || typeof value !== 'number' || !Number.isFinite(value)) continue;
    fieldSet += (fieldSet === '' ? '' : ',') + fieldKey(key) + formatFloat(value);
  }
  if (fieldSet === '') return null;
  return seriesKey(point.measurement, point.tags) + ' ' + fieldSet + ' ' + Math.round(point.timeMs);
}

// Producers reuse one tags object per series, so its encoded series key is kept with it (a weak
// map: it goes when the tags object goes). Field keys repeat on every line: escaped once each.
const seriesKeys = new WeakMap<object, { measurement: string; key: string }>();
const fieldKeys = new Map<string, string>();

function seriesKey(measurement: string, tags: Readonly<Record<string, string>>): string {
  const cached = seriesKeys.get(tags);
  if (cached !== undefined && cached.measurement === measurement) return cached.key;
  let key = escapeMeasurement(measurement);
  for (const tagKey of Object.keys(tags).sort()) {
    const tagValue = tags[tagKey];
    if (tagKey === '' || tagValue === undefined || tagValue === '') continue;
    key += ',' + escapeKey(tagKey) + '=' + escapeKey(tagValue);
  }
  // Only frozen tags are cached: a mutable object could change under the cache.
  if (Object.isFrozen(tags)) seriesKeys.set(tags, { measurement, key });
  return key;
}

function fieldKey(key: string): string {
  let k = fieldKeys.get(key);
  if (k === undefined) {
    k = escapeKey(key) + '=';
    if (fieldKeys.size < 100_000) fieldKeys.set(key, k);
  }
  return k;
}

/** Encodes many points, skipping those `encodeLine` refuses. Returns a new array. */
export function encodeLines(points: readonly Point[]): string[] {
  const lines: string[] = [];
  for (const point of points) {
    const line = encodeLine(point);
    if (line !== null) lines.push(line);
  }
  return lines;
}
