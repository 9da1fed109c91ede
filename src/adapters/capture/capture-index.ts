import { readFile, rename, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { z } from 'zod';

export const CAPTURE_INDEX_NAME = 'capture-index.json';

const entrySchema = z.strictObject({
  name: z.string(),
  firstArrivalMs: z.number(),
  lastArrivalMs: z.number(),
  count: z.number().int().nonnegative(),
  bytes: z.number().int().nonnegative(),
  /** True once the writer moved on: the figures are final. An open file may hold more than listed. */
  closed: z.boolean(),
});

export const captureIndexSchema = z.strictObject({ version: z.literal(1), files: z.array(entrySchema) });
export type CaptureIndexEntry = z.infer<typeof entrySchema>;
export type CaptureIndex = z.infer<typeof captureIndexSchema>;

/** Read the index; a missing or unreadable index is an empty one (the files are the truth). */
export async function readCaptureIndex(dir: string): Promise<CaptureIndex> {
  try {
    const r = captureIndexSchema.safeParse(JSON.parse(await readFile(join(dir, CAPTURE_INDEX_NAME), 'utf8')));
    if (r.success) return r.data;
  } catch {
    // fall through
  }
  return { version: 1, files: [] };
}

/** Replace the index atomically (write a temporary file, then rename over). */
export async function writeCaptureIndex(dir: string, index: CaptureIndex): Promise<void> {
  const tmp = join(dir, `${CAPTURE_INDEX_NAME}.tmp`);
  await writeFile(tmp, JSON.stringify(index, null, 1), { mode: 0o600 });
  await rename(tmp, join(dir, CAPTURE_INDEX_NAME));
}
