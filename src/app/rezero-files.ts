import { mkdir, open, readFile, rename } from 'node:fs/promises';
import { dirname } from 'node:path';
import { z } from 'zod';
import { saveSnapshot } from '../alarms/persistence/snapshot-file.js';
import type { RezeroRefusal } from '../rezero/decide.js';
import { RezeroRecordSchema, type RezeroRecord } from '../rezero/schema.js';

/**
 * The rezero files. The overrides file holds the rezero in effect per group (the latest accepted),
 * rewritten atomically after each one and installed at start. The audit file is append-only NDJSON,
 * one line per request: `{"type":"rezero","record":{...}}` when accepted, `{"type":"refusal",...}`
 * when refused; a replay installs its rezero lines. Both are created 0600, like every file the
 * processor keeps.
 */

const OverridesFileSchema = z.strictObject({
  version: z.literal(1),
  structure: z.string(),
  written_at: z.string(),
  overrides: z.array(RezeroRecordSchema),
});

const AuditLineSchema = z.discriminatedUnion('type', [
  z.strictObject({ type: z.literal('rezero'), record: RezeroRecordSchema }),
  z.strictObject({ type: z.literal('refusal'), at: z.string(), user: z.string(), group_id: z.string(), code: z.string(), reason: z.string(), request_id: z.string().nullable() }),
]);

/** The overrides file's records; [] when there is none yet. Throws (with the reason) when it cannot be read as one. */
export async function readZeroOverrides(path: string): Promise<RezeroRecord[]> {
  let text: string;
  try {
    text = await readFile(path, 'utf8');
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code === 'ENOENT') return [];
    throw e;
  }
  const parsed = OverridesFileSchema.safeParse(JSON.parse(text));
  if (!parsed.success) throw new Error(`${parsed.error.issues[0].path.join('.') || '(root)'}: ${parsed.error.issues[0].message}`);
  return parsed.data.overrides;
}

/** Rewrites the overrides file atomically (a crash leaves the old or the new one). */
export async function writeZeroOverrides(path: string, structureId: string, records: readonly RezeroRecord[], nowMs: number): Promise<void> {
  await saveSnapshot(path, `${JSON.stringify({ version: 1, structure: structureId, written_at: new Date(nowMs).toISOString(), overrides: records }, null, 1)}\n`);
}

/** Keeps an unreadable overrides file aside (`<file>.unreadable-<time>`); the path it went to. */
export async function keepAside(path: string, nowMs: number): Promise<string> {
  const aside = `${path}.unreadable-${new Date(nowMs).toISOString().replace(/[-:]/g, '').replace(/\.\d+Z$/, 'Z')}`;
  await rename(path, aside);
  return aside;
}

/** Appends one audit line and syncs it: the verdict is given only once it is on disk. */
export async function appendAudit(path: string, line: { type: 'rezero'; record: RezeroRecord } | { type: 'refusal'; refusal: RezeroRefusal }): Promise<void> {
  await mkdir(dirname(path), { recursive: true });
  const fh = await open(path, 'a', 0o600);
  try {
    const r = line.type === 'refusal' ? line.refusal : null;
    const json = r === null ? line
      : { type: 'refusal', at: new Date(r.atMs).toISOString(), user: r.user, group_id: r.groupId, code: r.code, reason: r.reason, request_id: r.requestId };
    await fh.appendFile(`${JSON.stringify(json)}\n`, 'utf8');
    await fh.sync();
  } finally {
    await fh.close();
  }
}

/**
 * The accepted rezeros of an audit file, in order; lines that cannot be read are counted, not
 * fatal (a torn last line after a crash). No file: none.
 */
export async function readAuditRecords(path: string): Promise<{ records: RezeroRecord[]; unreadable: number }> {
  let text: string;
  try {
    text = await readFile(path, 'utf8');
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code === 'ENOENT') return { records: [], unreadable: 0 };
    throw e;
  }
  const records: RezeroRecord[] = [];
  let unreadable = 0;
  for (const line of text.split('\n')) {
    if (line.trim() === '') continue;
    let json: unknown;
    try {
      json = JSON.parse(line);
    } catch {
      unreadable++;
      continue;
    }
    const parsed = AuditLineSchema.safeParse(json);
    if (!parsed.success) unreadable++;
    else if (parsed.data.type === 'rezero') records.push(parsed.data.record);
  }
  return { records, unreadable };
}

/** The latest record per group, in the order they were made (what the overrides file holds). */
export function latestPerGroup(records: readonly RezeroRecord[]): RezeroRecord[] {
  const byGroup = new Map<string, RezeroRecord>();
  for (const r of records) {
    byGroup.delete(r.group_id);
    byGroup.set(r.group_id, r);
  }
  return [...byGroup.values()];
}
