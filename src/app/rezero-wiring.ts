import { resolve } from 'node:path';
import type { InboundMessage, Publish } from '../adapters/mqtt/connection.js';
import type { LoadedRuntime } from '../config/load-runtime.js';
import type { Point, PointWriter } from '../model/point.js';
import type { RawMessage } from '../model/raw-message.js';
import type { FrameProcessor } from '../pipeline/frame-processor.js';
import { applyRezeroRecord } from '../rezero/apply.js';
import { decideRezero, parseRezeroPayload, type RezeroRefusal } from '../rezero/decide.js';
import type { RezeroConfig, RezeroRecord, RezeroVerdict } from '../rezero/schema.js';
import { rezeroSubscription, rezeroUserMatcher, rezeroVerdictTopic } from '../rezero/topics.js';
import { appendAudit, keepAside, latestPerGroup, readAuditRecords, readZeroOverrides, writeZeroOverrides } from './rezero-files.js';

type Log = (event: string, detail?: Record<string, unknown>) => void;

/** The rezero files read before connecting, and the topic to subscribe to. */
export interface RezeroStart {
  cfg: RezeroConfig;
  subscription: string;
  overridesPath: string;
  auditPath: string;
  /** The rezeros in effect at start, to install before the first message. */
  restored: RezeroRecord[];
}

export interface RezeroWiring {
  /** The user of a rezero request topic, or null for any other topic. */
  userOf(topic: string): string | null;
  /** Takes a request (in arrival order with the scans): decided and installed at once, answered once persisted. */
  take(m: InboundMessage): void;
  counts(): { accepted: number; refused: number; persistFailures: number };
  /** Waits for the answers in progress. */
  close(): Promise<void>;
}

/**
 * Reads the overrides file before the live job connects (null without a `rezero` section). An
 * unreadable one does not stop the start (a processor that does not start raises no alarm): it is
 * kept aside and the overrides are rebuilt from the audit file's latest record per group.
 */
export async function loadRezeroStart(loaded: LoadedRuntime, now: () => number, warn: Log): Promise<RezeroStart | null> {
  const cfg = loaded.structure.config.rezero;
  if (cfg === undefined) return null;
  const overridesPath = resolve(loaded.baseDir, loaded.runtime.rezero.overrides_file);
  const auditPath = resolve(loaded.baseDir, loaded.runtime.rezero.audit_file);
  let restored: RezeroRecord[];
  try {
    restored = await readZeroOverrides(overridesPath);
  } catch (err) {
    const aside = await keepAside(overridesPath, now());
    const audit = await readAuditRecords(auditPath);
    restored = latestPerGroup(audit.records.filter((r) => r.structure === loaded.structure.structureId));
    warn('zero_overrides_unreadable', {
      file: overridesPath, keptAs: aside, reason: err instanceof Error ? err.message : String(err), rebuiltFrom: auditPath, groups: restored.map((r) => r.group_id),
      message: 'The zero overrides file could not be read; the overrides were rebuilt from the audit file. Check the zeros of these groups.',
    });
  }
  return { cfg, subscription: rezeroSubscription(cfg, loaded.structure.structureId), overridesPath, auditPath, restored };
}

export interface RezeroDeps {
  processor: FrameProcessor<unknown>;
  /** Where the `sw_rezero` audit point goes. */
  sink: PointWriter;
  publish: Publish;
  /** The raw capture: requests are archived with the scans. */
  record?: (raw: RawMessage) => void;
  now: () => number;
  log: Log;
  /** A rezero changes the reference of every later result: a line a person reads. */
  warn: Log;
}

/** The audit record as a point (measurement `sw_rezero`, at the logger time of the readings taken). Pure. */
export function rezeroPoint(r: RezeroRecord, zone: string): Point {
  const fields: Record<string, number> = {
    zero_temperature_old_degC: r.zero_temperature_degC.old, zero_temperature_new_degC: r.zero_temperature_degC.new,
    requested_after_ms: r.at_ms - r.readings_time_ms,
  };
  for (const c of [...r.elements, ...(r.companion === null ? [] : [r.companion])]) {
    fields[`old_zero_${c.gauge}`] = c.old_zero;
    fields[`new_zero_${c.gauge}`] = c.new_zero;
  }
  // Line protocol has no newline inside a value; the audit file keeps the reason exactly.
  const reason = r.reason.replace(/\s+/g, ' ').trim().slice(0, 200);
  return { measurement: 'sw_rezero', tags: { structure: r.structure, group: r.group_id, zone, user: r.user, reason }, fields, timeMs: r.readings_time_ms };
}

/**
 * The live job's rezero: installs the restored overrides, then decides each request against the
 * frame processor's latest readings of the group, in arrival order with the scans (the request's
 * zero applies from the logger time of those readings), installs it at once through the same path
 * a restart and a replay use (`applyRezeroRecord`), and answers on the user's verdict topic once the
 * overrides and audit files are on disk. The request's PUBACK waits for that too.
 */
export function attachRezero(loaded: LoadedRuntime, start: RezeroStart, deps: RezeroDeps): RezeroWiring {
  const { structure } = loaded;
  const s = structure.structureId;
  const inEffect = new Map<string, RezeroRecord>();
  for (const r of start.restored) {
    const applied = applyRezeroRecord(deps.processor, structure, r);
    if (applied.ok) {
      inEffect.set(r.group_id, r);
      deps.log('rezero_restored', { group: r.group_id, record: r.id, from: r.readings_time });
    } else deps.warn('rezero_not_restored', { group: r.group_id, record: r.id, reason: applied.reason, message: 'the configured zero applies to this group' });
  }
  const userOf = rezeroUserMatcher(start.cfg, s);
  const counts = { accepted: 0, refused: 0, persistFailures: 0 };
  let chain: Promise<void> = Promise.resolve();
  let closed = false;
  // Answers in request order; a failing step is logged and never stops the later ones.
  const enqueue = (step: () => Promise<void> | void): void => {
    chain = chain.then(step).catch((err: unknown) => deps.log('rezero_failed', { message: err instanceof Error ? err.message : String(err) }));
  };
  const iso = (ms: number) => new Date(ms).toISOString();

  const answer = (v: RezeroVerdict): Promise<void> => deps.publish(rezeroVerdictTopic(start.cfg, s, v.user), JSON.stringify(v), { qos: 1, retain: false })
    .catch((err: unknown) => deps.log('rezero_verdict_failed', { user: v.user, message: err instanceof Error ? err.message : String(err) }));

  const refused = (r: RezeroRefusal): void => {
    counts.refused++;
    deps.log('rezero_refused', { user: r.user, group: r.groupId, code: r.code, reason: r.reason });
    enqueue(async () => {
      await appendAudit(start.auditPath, { type: 'refusal', refusal: r }).catch((err: unknown) => deps.log('rezero_audit_failed', { message: String(err) }));
      await answer({ request_id: r.requestId, group_id: r.groupId, user: r.user, verdict: 'refused', code: r.code, reason: r.reason, at: iso(r.atMs), record: null, persisted: false });
    });
  };

  return {
    userOf,
    take(m) {
      if (closed) return; // stopping: unacknowledged, the broker gives it to the next start
      try {
        takeRequest(m);
      } catch (err) {
        // Never into the intake stream: one bad request must not stop the scans.
        deps.log('rezero_failed', { message: err instanceof Error ? err.message : String(err) });
        enqueue(() => m.ack());
      }
    },
    counts: () => ({ ...counts }),
    close: () => {
      closed = true;
      return chain;
    },
  };

  function takeRequest(m: InboundMessage): void {
    deps.record?.(m.raw);
    const parsed = parseRezeroPayload(m.raw.payload, m.raw.arrivalMs, userOf(m.raw.topic) ?? '');
    if (!parsed.ok) {
      refused(parsed.refusal);
      enqueue(() => m.ack());
      return;
    }
    const req = parsed.request;
    const d = decideRezero(structure, start.cfg, req, deps.processor.latestReadings(req.groupId), deps.processor.zeroStepAt(req.groupId, Number.POSITIVE_INFINITY));
    if (!d.ok) {
      refused(d.refusal);
      enqueue(() => m.ack());
      return;
    }
    const record = d.record;
    const applied = applyRezeroRecord(deps.processor, structure, record);
    if (!applied.ok) throw new Error(`rezero of ${record.group_id} decided but not applicable: ${applied.reason}`); // decided on this structure: cannot happen
    inEffect.set(record.group_id, record);
    counts.accepted++;
    const zone = structure.groupsById.get(record.group_id)!.config.zone;
    deps.warn('rezero_applied', {
      group: record.group_id, user: record.user, reason: record.reason, readingsTime: record.readings_time,
      zeros: record.elements.map((e) => `${e.channel} ${e.old_zero} -> ${e.new_zero} ${e.unit}`).join('; '),
      zeroTemperature: `${record.zero_temperature_degC.old} -> ${record.zero_temperature_degC.new} degC`,
    });
    enqueue(async () => {
      let persisted = true;
      try {
        await writeZeroOverrides(start.overridesPath, s, [...inEffect.values()], deps.now());
        await appendAudit(start.auditPath, { type: 'rezero', record });
      } catch (err) {
        persisted = false;
        counts.persistFailures++;
        deps.warn('rezero_not_persisted', { group: record.group_id, record: record.id, reason: err instanceof Error ? err.message : String(err), message: 'the new zero is in effect but a restart would lose it' });
      }
      deps.sink.write([rezeroPoint(record, zone)]).catch((err: unknown) => deps.log('rezero_point_failed', { message: String(err) }));
      await answer({
        request_id: req.requestId, group_id: record.group_id, user: record.user, verdict: 'accepted', code: null, at: record.at, record, persisted,
        reason: `the readings of ${record.readings_time} are the zero of group ${record.group_id} from then on${persisted ? '' : '; NOT PERSISTED: a restart would lose it'}`,
      });
      m.ack();
    });
  }
}
