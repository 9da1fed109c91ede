/**
 * Raw capture on disk: NDJSON lines, one per received message, in gzip files named after the
 * arrival time of their first message. Pure helpers: line and file-name encoding.
 *
 *     capture-20250314T092654.000Z.ndjson.gz      (a second file started in the same ms: ...Z-1.ndjson.gz)
 *     {"arrivalMs":1741944414000,"topic":"strainward/brannock-mere/span1-north/scan","payloadBase64":"eyJ0cyI6..."}
 *
 * A file is a series of gzip members, one per flushed batch (RFC 1952 section 2.2 allows several
 * members in one file; any gunzip reads them as one stream). A crash can only tear the last member;
 * the reader keeps the intact, CRC-checked members.
 */
import { z } from 'zod';
import type { RawMessage } from '../../model/raw-message.js';

export const captureLineSchema = z.strictObject({
  arrivalMs: z.number().finite(),
  topic: z.string(),
  payloadBase64: z.string().regex(/^[A-Za-z0-9+/]*={0,2}$/),
});

/** One NDJSON line (with its newline) for a message. Pure. */
export function encodeCaptureLine(raw: RawMessage): string {
  const payloadBase64 = Buffer.from(raw.payload.buffer, raw.payload.byteOffset, raw.payload.byteLength).toString('base64');
  return JSON.stringify({ arrivalMs: raw.arrivalMs, topic: raw.topic, payloadBase64 }) + '\n';
}

/** The message of one line, or null when the line is not a capture record (e.g. cut by a crash). Pure. */
export function decodeCaptureLine(line: string): RawMessage | null {
  let json: unknown;
  try {
    json = JSON.parse(line);
  } catch {
    return null;
  }
  const r = captureLineSchema.safeParse(json);
  if (!r.success) return null;
  return { arrivalMs: r.data.arrivalMs, topic: r.data.topic, payload: new Uint8Array(Buffer.from(r.data.payloadBase64, 'base64')) };
}

const NAME = /^capture-(\d{8}T\d{6}\.\d{3}Z)(?:-(\d+))?\.ndjson\.gz$/;

/** File name for a file whose first message arrived at `startMs`; `n` > 0 disambiguates. Pure. */
export function captureFileName(startMs: number, n = 0): string {
  const iso = new Date(startMs).toISOString().replace(/[-:]/g, ''); // ISO 8601 basic format
  return `capture-${iso}${n > 0 ? `-${n}` : ''}.ndjson.gz`;
}

/** Start time and disambiguator of a capture file name, or null if it is not one. Pure. */
export function parseCaptureFileName(name: string): { startMs: number; n: number } | null {
  const m = NAME.exec(name);
  if (!m) return null;
  const s = m[1];
  const startMs = Date.parse(`${s.slice(0, 4)}-${s.slice(4, 6)}-${s.slice(6, 8)}T${s.slice(9, 11)}:${s.slice(11, 13)}:${s.slice(13)}`);
  return Number.isFinite(startMs) ? { startMs, n: m[2] ? Number(m[2]) : 0 } : null;
}

/** Capture file names in time order (start time, then disambiguator). Returns a new array. */
export function sortCaptureFiles(names: readonly string[]): string[] {
  return names
    .map((name) => ({ name, key: parseCaptureFileName(name) }))
    .filter((f): f is { name: string; key: { startMs: number; n: number } } => f.key !== null)
    .sort((a, b) => a.key.startMs - b.key.startMs || a.key.n - b.key.n)
    .map((f) => f.name);
}
