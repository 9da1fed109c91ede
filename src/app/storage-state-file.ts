import { rename } from 'node:fs/promises';
import { loadSnapshot, saveSnapshot } from '../alarms/persistence/snapshot-file.js';
import { parseStorageState, type StorageState } from '../pipeline/storage-state.js';

/** `20261202T073012Z`: a file-name-safe UTC time. */
const stamp = (ms: number): string => new Date(ms).toISOString().replace(/[-:]/g, '').replace(/\.\d+Z$/, 'Z');

/**
 * Reads the storage state file (open summary intervals, event windows). None: a first start. One
 * that cannot be read never stops the start: it is kept aside as `<file>.unreadable-<time>` and
 * the log says what that costs (the intervals open at the stop are written from what arrives
 * after this start only; a replay of the capture recomputes them).
 */
export async function openStorageState(
  path: string, structureId: string, deps: { now: () => number; log: (event: string, detail: Record<string, unknown>) => void },
): Promise<StorageState | undefined> {
  const text = await loadSnapshot(path);
  if (text === null) return undefined;
  try {
    return parseStorageState(text, structureId);
  } catch (err) {
    const reason = err instanceof Error ? err.message : String(err);
    const keptAs = `${path}.unreadable-${stamp(deps.now())}`;
    try {
      await rename(path, keptAs);
    } catch (e) {
      throw new Error(`storage state file ${path} cannot be restored (${reason}) nor moved aside to ${keptAs}: ${(e as Error).message}`);
    }
    deps.log('storage_state_reset', {
      file: path, keptAs, reason,
      message: `The storage state file could not be read and is kept as ${keptAs}; summaries start afresh. The intervals open at the last stop hold only what arrives from now on: replay the capture over them for the full figures.`,
    });
    return undefined;
  }
}

/** Atomic write (temporary file, fsync, rename), like the alarm state. */
export function saveStorageState(path: string, json: string): Promise<void> {
  return saveSnapshot(path, json);
}

/**
 * Shortest time between two states taken, ms: at most 1000/20 a second are serialised (about
 * 0.4 ms each for ten groups on the project machine), and a message waits at most this much longer
 * for its acknowledgement.
 */
export const STORAGE_STATE_SPACING_MS = 20;
