import type { RawMessage } from '../model/raw-message.js';
import type { DeadLetter, Rejection } from '../model/rejection.js';

const strictUtf8 = new TextDecoder('utf-8', { fatal: true });

/** Payload as text when it is valid UTF-8 without control characters (tab, CR, LF allowed); else null. Pure. */
export function printableText(payload: Uint8Array): string | null {
  let text: string;
  try {
    text = strictUtf8.decode(payload);
  } catch {
    return null;
  }
  // eslint-disable-next-line no-control-regex
  return /[\u0000-\u0008\u000b\u000c\u000e-\u001f\u007f]/.test(text) ? null : text;
}

/** Build the dead-letter record of a refused message. Pure: copies the payload into base64. */
export function toDeadLetter(raw: RawMessage, rejections: Rejection[]): DeadLetter {
  return {
    topic: raw.topic,
    arrivalMs: raw.arrivalMs,
    arrivalIso: new Date(raw.arrivalMs).toISOString(),
    payloadBase64: Buffer.from(raw.payload.buffer, raw.payload.byteOffset, raw.payload.byteLength).toString('base64'),
    payloadText: printableText(raw.payload),
    rejections,
  };
}
