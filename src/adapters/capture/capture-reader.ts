import { readdir, readFile } from 'node:fs/promises';
import { join } from 'node:path';
import type { RawMessage } from '../../model/raw-message.js';
import { decodeCaptureLine, parseCaptureFileName, sortCaptureFiles } from './capture-format.js';
import { readCaptureIndex, type CaptureIndex } from './capture-index.js';
import { intactGzipMembers } from './gzip-members.js';

/** A time window on arrival time, epoch ms: `fromMs` inclusive, `toMs` exclusive; either may be open. */
export interface CaptureWindow {
  fromMs?: number;
  toMs?: number;
}

/**
 * Files that may hold messages of the window, in time order. Pure. A file spans from its
 * start (in its name) to its last message: the index gives that for closed files; for an open
 * or unindexed file (a crash) the next file's start bounds it. Assumes arrival times increase.
 */
export function selectCaptureFiles(names: readonly string[], index: CaptureIndex, window: CaptureWindow): string[] {
  const sorted = sortCaptureFiles(names);
  const byName = new Map(index.files.map((f) => [f.name, f]));
  const from = window.fromMs ?? -Infinity;
  const to = window.toMs ?? Infinity;
  return sorted.filter((name, i) => {
    const start = parseCaptureFileName(name)!.startMs;
    const entry = byName.get(name);
    const next = i + 1 < sorted.length ? parseCaptureFileName(sorted[i + 1])!.startMs : Infinity;
    const end = entry?.closed ? entry.lastArrivalMs : next; // inclusive bound on the file's arrivals
    return start < to && end >= from;
  });
}

/**
 * Messages of one capture file in written order. Tolerates a crash: only intact gzip members
 * (one per flushed batch, CRC-checked) are read, so a batch torn by a crash is dropped whole;
 * it was never reported durable. Reads the file whole: files are bounded by `rotateBytes`.
 */
export async function* readCaptureFile(path: string): AsyncGenerator<RawMessage> {
  const file = await readFile(path);
  for (const member of intactGzipMembers(file)) {
    for (const line of member.toString('utf8').split('\n')) {
      if (line === '') continue;
      const raw = decodeCaptureLine(line);
      if (raw) yield raw;
    }
  }
}

/** Every captured message in the window, in arrival order, reading only the files that may hold some. */
export async function* readCapture(dir: string, window: CaptureWindow = {}): AsyncGenerator<RawMessage> {
  const names = (await readdir(dir)).filter((n) => parseCaptureFileName(n) !== null);
  const index = await readCaptureIndex(dir);
  const from = window.fromMs ?? -Infinity;
  const to = window.toMs ?? Infinity;
  for (const name of selectCaptureFiles(names, index, window)) {
    for await (const raw of readCaptureFile(join(dir, name))) {
      if (raw.arrivalMs >= from && raw.arrivalMs < to) yield raw;
    }
  }
}
