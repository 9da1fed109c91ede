import { EngineStateSchema } from './state-schema.js';
import { SNAPSHOT_FORMAT, SNAPSHOT_VERSION, type EngineState } from './state.js';

/** A snapshot that cannot be read: the message says why, naming the first bad field. */
export class SnapshotError extends Error {
  override readonly name = 'SnapshotError';
}

const isRecord = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);

/**
 * Version 1: the form written until the format was versioned — `version: 1` and no `format`
 * field, the same fields otherwise, but without `idFloor` and `sequences` (its spike detector
 * also wrote `pending`, which its own reader refused). Returns a version 2 object, unchecked.
 */
function fromVersion1(v1: Record<string, unknown>): Record<string, unknown> {
  const { version: _old, ...rest } = v1;
  return { format: SNAPSHOT_FORMAT, version: 2, idFloor: 0, ...rest, sequences: {} };
}

/** Brings any readable snapshot object up to the current version (unchecked). */
export function migrateSnapshot(input: unknown): unknown {
  if (!isRecord(input)) throw new SnapshotError('alarm snapshot invalid at (root): expected a JSON object');
  let s = input;
  if (s.format === undefined && (s.version === 1 || s.version === undefined)) s = fromVersion1(s);
  if (s.format !== SNAPSHOT_FORMAT) {
    throw new SnapshotError(`alarm snapshot invalid at format: expected "${SNAPSHOT_FORMAT}", received ${JSON.stringify(s.format)?.slice(0, 60)}`);
  }
  if (typeof s.version === 'number' && s.version > SNAPSHOT_VERSION) {
    throw new SnapshotError(`alarm snapshot is version ${s.version}, written by a newer strainward; this one reads up to ${SNAPSHOT_VERSION}`);
  }
  return s;
}

/** Serialise (a deep copy as JSON text), always in the current version. */
export function serialiseState(state: EngineState): string {
  return JSON.stringify(state);
}

/** Parse, migrate and check a snapshot; throws a SnapshotError naming the first bad field. */
export function parseState(json: string): EngineState {
  let raw: unknown;
  try {
    raw = JSON.parse(json);
  } catch (e) {
    throw new SnapshotError(`alarm snapshot is not JSON: ${(e as Error).message}`);
  }
  const parsed = EngineStateSchema.safeParse(migrateSnapshot(raw));
  if (!parsed.success) {
    const first = parsed.error.issues[0];
    throw new SnapshotError(`alarm snapshot invalid at ${first.path.join('.') || '(root)'}: ${first.message}`);
  }
  return parsed.data as EngineState;
}
