import { z } from 'zod';

/**
 * The operator's details in a processor's presence message (src/app/presence.ts), as `status`
 * reads them back: a boundary, so each is checked, and one that is missing or malformed (an older
 * processor, a damaged message) is reported as unknown rather than failing the whole status.
 */
const nullableNumber = z.number().nullable();
const counts = z.record(z.string(), z.number().int().nonnegative());

export const StatusDetailsSchema = z.object({
  database_reachable: z.boolean().nullable().catch(null),
  spool_fill_ratio: nullableNumber.catch(null),
  spool_bytes: nullableNumber.catch(null),
  spool_limit_bytes: nullableNumber.catch(null),
  spool_disk_free_bytes: nullableNumber.catch(null),
  rejected_messages: nullableNumber.catch(null),
  rejected_by_code: counts.nullable().catch(null),
  open_alarms: z.object({ total: z.number().int().nonnegative(), by_level: counts, unacknowledged: z.number().int().nonnegative() }).nullable().catch(null),
  component_faults: z.array(z.object({ component: z.string(), failure: z.string(), since: z.string() })).nullable().catch(null),
});

export type StatusDetails = z.infer<typeof StatusDetailsSchema>;

/** The details of a presence message (null: none, e.g. an `offline` will). Pure. */
export function statusDetails(message: Record<string, unknown> | null): StatusDetails | null {
  if (message === null || message.state === 'offline') return null;
  const r = StatusDetailsSchema.safeParse(message);
  return r.success ? r.data : null;
}

/** Bytes readable: B, KiB, MiB or GiB, one decimal above bytes. */
export function readableBytes(n: number): string {
  if (n < 1024) return `${n} B`;
  const units = ['KiB', 'MiB', 'GiB', 'TiB'];
  let v = n / 1024;
  let i = 0;
  while (v >= 1024 && i < units.length - 1) { v /= 1024; i++; }
  return `${v.toFixed(1)} ${units[i]}`;
}

const known = (v: number | null, f: (v: number) => string): string => (v === null ? 'unknown' : f(v));

/** The lines `status` prints under a processor, indented. Pure. */
export function statusDetailLines(d: StatusDetails): string[] {
  const db = d.database_reachable === null
    ? (d.spool_limit_bytes === null ? 'database: none configured (line-protocol files)' : 'database: not yet written to')
    : `database: ${d.database_reachable ? 'reachable' : 'UNREACHABLE (results go to the spool)'}`;
  const lines = [db];
  if (d.spool_limit_bytes !== null) {
    lines.push(`spool: ${known(d.spool_fill_ratio, (r) => `${(100 * r).toFixed(1)} %`)} of its limit ${readableBytes(d.spool_limit_bytes)}`
      + ` (${known(d.spool_bytes, readableBytes)}); disk free ${known(d.spool_disk_free_bytes, readableBytes)}`);
  }
  const codes = Object.entries(d.rejected_by_code ?? {}).filter(([, n]) => n > 0).sort(([a], [b]) => a.localeCompare(b)).map(([c, n]) => `${c} ${n}`);
  lines.push(`rejected messages (dead letters): ${known(d.rejected_messages, String)}${codes.length === 0 ? '' : ` (${codes.join(', ')})`}`);
  if (d.open_alarms !== null) {
    const levels = Object.entries(d.open_alarms.by_level).map(([l, n]) => `${l} ${n}`).join(', ');
    lines.push(`open alarms: ${d.open_alarms.total} (${levels}); unacknowledged ${d.open_alarms.unacknowledged}`);
  } else lines.push('open alarms: unknown (no alarms section, or not reported)');
  if (d.component_faults === null) lines.push('component faults: unknown');
  else if (d.component_faults.length === 0) lines.push('component faults: none');
  else for (const f of d.component_faults) lines.push(`COMPONENT FAULT ${f.component} since ${f.since}: ${f.failure}`);
  return lines.map((l) => `  ${l}`);
}
