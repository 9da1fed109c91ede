import { z } from 'zod';
import type { SummarySeriesJson } from './summary-accumulator.js';

/**
 * The storage stage's state as plain JSON (the storage state file): each summarised series' open
 * interval and what it folded last, and each group's event window. Checked field by field on
 * reading. A change of shape is a new version with a migration.
 */
export const STORAGE_STATE_VERSION = 1;

const nullableNumber = z.number().nullable();
const SeriesSchema = z.strictObject({
  intervalMs: z.number().positive(),
  startMs: nullableNumber,
  trusted: z.number().int().min(0),
  flagged: z.number().int().min(0),
  flagBits: z.number().int().min(0),
  values: z.record(z.string().regex(/^\d+$/), z.tuple([z.number().min(1), z.number(), z.number(), z.number(), z.number(), z.number(), z.number()])),
  lastFoldedMs: nullableNumber,
  lastFoldedSeq: nullableNumber,
  closedThroughMs: nullableNumber,
}) satisfies z.ZodType<SummarySeriesJson>;

export const StorageStateSchema = z.strictObject({
  version: z.literal(STORAGE_STATE_VERSION),
  /** Structure id the state belongs to: another structure's file is refused. */
  structure: z.string().min(1),
  groups: z.record(z.string(), z.strictObject({
    series: SeriesSchema.nullable(),
    /** Event window [start, end], epoch ms of logger time; null: none. */
    window: z.tuple([z.number(), z.number()]).nullable(),
  })),
  loggers: z.record(z.string(), SeriesSchema),
  /** Summary line blocks of closed intervals not yet known durable: written again at the next start. */
  unwritten: z.array(z.string().min(1)).default([]),
});

export type StorageState = z.infer<typeof StorageStateSchema>;

/** Parses a state file's text; throws naming the field and the reason. */
export function parseStorageState(json: string, structureId: string): StorageState {
  let data: unknown;
  try {
    data = JSON.parse(json);
  } catch (err) {
    throw new Error(`storage state file: not JSON (${err instanceof Error ? err.message : String(err)})`);
  }
  const r = StorageStateSchema.safeParse(data);
  if (!r.success) {
    const i = r.error.issues[0];
    throw new Error(`storage state file: ${i.path.join('.') || '(root)'}: ${i.message}`);
  }
  if (r.data.structure !== structureId) throw new Error(`storage state file: written for structure "${r.data.structure}", not "${structureId}"`);
  return r.data;
}
