import { readdir, readFile } from 'node:fs/promises';
import { basename, join } from 'node:path';
import type { RawMessage } from '../../model/raw-message.js';
import { decodeCaptureLine, parseCaptureFileName, sortCaptureFiles } from './capture-format.js';
import { captureFileGaps, missingFileGap, type CaptureGap, type DamagedStretch } from './capture-gaps.js';
import { readCaptureIndex, type CaptureIndex, type CaptureIndexEntry } from './capture-index.js';
import { readGzipMembers } from './gzip-members.js';

export type { CaptureGap } from './capture-gaps.js';

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
 * Messages of one capture file in written order. Only intact gzip members (one per flushed batch,
 * CRC-checked) are read: a damaged member is skipped whole and reading goes on at the next one,
 * so one bad byte costs one batch, not the rest of the file. Each gap (checked against the index
 * entry when given) goes to `onGap` once the file is read; a batch torn by a crash is no gap (it
 * was never reported durable). Reads the file whole: files are bounded by `rotateBytes`.
 */
export async function* readCaptureFile(path: string, entry?: CaptureIndexEntry, onGap?: (gap: CaptureGap) => void): AsyncGenerator<RawMessage> {
  const file = await readFile(path);
  const name = basename(path);
  const stretches: DamagedStretch[] = [];
  let read = 0;
  let lastMs: number | null = null;
  for (const member of readGzipMembers(file)) {
    if (member.kind === 'damaged') {
      stretches.push({ fromByte: member.fromByte, toByte: member.toByte, figures: member.figures, torn: member.torn, beforeMs: lastMs, afterMs: null });
      continue;
    }
    for (const line of member.data.toString('utf8').split('\n')) {
      if (line === '') continue;
      const raw = decodeCaptureLine(line);
      if (raw === null) continue;
      const open = stretches.at(-1);
      if (open !== undefined && open.afterMs === null) open.afterMs = raw.arrivalMs;
      read++;
      lastMs = raw.arrivalMs;
      yield raw;
    }
  }
  if (onGap === undefined) return;
  for (const gap of captureFileGaps(name, parseCaptureFileName(name)?.startMs ?? 0, stretches, read, lastMs, entry)) onGap(gap);
}

/**
 * Every captured message in the window, in arrival order, reading only the files that may hold
 * some. Every gap in the window (damaged members, files the index lists that are missing, files
 * holding fewer messages than the index lists) goes to `onGap`.
 */
export async function* readCapture(dir: string, window: CaptureWindow = {}, onGap?: (gap: CaptureGap) => void): AsyncGenerator<RawMessage> {
  const names = (await readdir(dir)).filter((n) => parseCaptureFileName(n) !== null);
  const index = await readCaptureIndex(dir);
  const from = window.fromMs ?? -Infinity;
  const to = window.toMs ?? Infinity;
  const inWindow = (g: CaptureGap) => g.fromMs < to && g.toMs >= from;
  const report = onGap === undefined ? undefined : (g: CaptureGap) => { if (inWindow(g)) onGap(g); };
  const byName = new Map(index.files.map((f) => [f.name, f]));
  const present = new Set(names);
  const missing = index.files.filter((f) => f.closed && f.count > 0 && !present.has(f.name)).map(missingFileGap);
  for (const name of selectCaptureFiles(names, index, window)) {
    const start = parseCaptureFileName(name)!.startMs;
    while (report !== undefined && missing.length > 0 && missing[0].fromMs < start) report(missing.shift()!);
    for await (const raw of readCaptureFile(join(dir, name), byName.get(name), report)) {
      if (raw.arrivalMs >= from && raw.arrivalMs < to) yield raw;
    }
  }
  if (report !== undefined) for (const g of missing) report(g);
}
