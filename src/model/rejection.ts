import type { RawMessage } from './raw-message.js';

/** Why a message was refused. Errors are data: a code, a path into the payload and a readable reason. */
export interface Rejection {
  code:
    | 'not_json'
    | 'invalid_payload'
    | 'unknown_topic'
    | 'unknown_logger'
    | 'unknown_channel'
    | 'non_finite_value'
    | 'invalid_timestamp'
    | 'future_timestamp';
  /** Path into the payload, e.g. `values.ch07`; empty for the whole message. */
  path: string;
  /** Human-readable reason naming the field. */
  reason: string;
}

/** A dead-letter record: the original bytes (base64 and, when printable, text) and every reason. */
export interface DeadLetter {
  topic: string;
  arrivalMs: number;
  arrivalIso: string;
  payloadBase64: string;
  payloadText: string | null;
  rejections: Rejection[];
}
