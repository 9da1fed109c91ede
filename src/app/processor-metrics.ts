import { collectDefaultMetrics, Counter, Gauge, Registry } from 'prom-client';
import type { DeadLetterCounts } from '../adapters/deadletter/fan-out.js';
import type { AlarmClass, AlarmState } from '../alarms/types.js';
import type { DecodeCounts } from '../ingest/decode-operator.js';
import type { WriteTally } from './write-tally.js';

/** The live job's own counters, read when the endpoint is scraped (nothing is copied between scrapes). */
export interface MetricsSource {
  structureId: string;
  /** The structure's alarm levels, least severe first: every one has a series, zero included. */
  levels: readonly string[];
  decode: Readonly<DecodeCounts>;
  deadLetters: Readonly<DeadLetterCounts>;
  written: WriteTally;
  /** Failed write attempts of the write stage (a full spool under `block` fails every frame). */
  writeErrors(): number;
  /** The database sink's figures; null when results go to line-protocol files. */
  database(): { dbReachable: boolean | null; failedWrites: number; spoolBytes: number; spoolLimitBytes: number; spoolFillRatio: number } | null;
  heldAcks(): number;
  /** Alarms not closed: active, or cleared and not yet acknowledged. */
  openAlarms(): ReadonlyArray<{ level: string; alarmClass: AlarmClass; state: AlarmState }>;
  /** Wall clock, epoch ms: the lag is measured against it. */
  now(): number;
}

const OPEN_STATES: readonly AlarmState[] = ['active_unacknowledged', 'active_acknowledged', 'cleared_unacknowledged'];
const CLASSES: readonly AlarmClass[] = ['structural', 'health'];

/**
 * The processor's health as Prometheus metrics, in a registry of its own (not prom-client's
 * global one: two live jobs in one process, as in the tests, keep theirs apart). Every series
 * carries `structure`; values are taken from the live counters by each metric's `collect`, at
 * scrape time. Units in the names (`_seconds`, `_bytes`, `_ratio`), counters end in `_total`.
 */
export function processorRegistry(src: MetricsSource): Registry {
  const registry = new Registry();
  registry.setDefaultLabels({ structure: src.structureId });
  const registers = [registry];
  const counter = (name: string, help: string, value: () => number) => new Counter({
    name, help, registers, collect() { this.reset(); this.inc(value()); },
  });
  const gauge = (name: string, help: string, value: () => number | null) => new Gauge({
    name, help, registers, collect() {
      this.reset();
      const v = value();
      if (v !== null) this.set(v);
    },
  });

  counter('strainward_messages_received_total', 'Scan messages taken from the broker (accepted and refused; acknowledgement commands not counted).',
    () => src.decode.accepted + src.decode.rejected);
  counter('strainward_dead_letters_total', 'Messages refused and dead-lettered (one per message).', () => src.deadLetters.messages);
  new Counter({
    name: 'strainward_dead_letter_reasons_total', help: 'Reasons of refusal by code (a refused message may carry several).',
    labelNames: ['reason'], registers,
    collect() {
      this.reset();
      for (const [reason, n] of Object.entries(src.deadLetters.byCode)) this.inc({ reason }, n ?? 0);
    },
  });
  counter('strainward_frames_written_total', 'Scans whose results are durable (database, spool or files) and acknowledged.', () => src.written.frames);
  counter('strainward_results_written_total', 'Group results written with those scans.', () => src.written.results);
  counter('strainward_write_errors_total', 'Failed write attempts of the write stage (retried; the scan stays unacknowledged meanwhile).', src.writeErrors);
  counter('strainward_database_errors_total', 'Failed attempts to write to the database (each retry counted; the lines go to the spool).',
    () => src.database()?.failedWrites ?? 0);
  gauge('strainward_database_reachable', '1 when the latest database write succeeded, 0 when it failed; absent before the first or without a database.', () => {
    const reachable = src.database()?.dbReachable;
    return reachable === undefined || reachable === null ? null : reachable ? 1 : 0;
  });
  gauge('strainward_spool_bytes', 'Bytes waiting in the spool for the database.', () => src.database()?.spoolBytes ?? null);
  gauge('strainward_spool_limit_bytes', 'The spool\'s configured limit.', () => src.database()?.spoolLimitBytes ?? null);
  gauge('strainward_spool_fill_ratio', 'Spool bytes over its limit (0 to 1).', () => src.database()?.spoolFillRatio ?? null);
  gauge('strainward_held_acks', 'Messages taken and not yet acknowledged to the broker (waiting for their write).', src.heldAcks);
  new Gauge({
    name: 'strainward_lag_seconds', help: 'Wall clock minus the logger timestamp of the newest scan written, per logger (grows while a logger is silent or writes stall).',
    labelNames: ['logger'], registers,
    collect() {
      this.reset();
      const now = src.now();
      for (const [logger, w] of src.written.byLogger) this.set({ logger }, (now - w.newestTimeMs) / 1000);
    },
  });
  new Gauge({
    name: 'strainward_open_alarms', help: 'Alarms not closed, by severity (the structure\'s levels), class and state.',
    labelNames: ['severity', 'class', 'state'], registers,
    collect() {
      this.reset();
      const counts = new Map<string, number>();
      for (const a of src.openAlarms()) {
        const key = `${a.level}|${a.alarmClass}|${a.state}`;
        counts.set(key, (counts.get(key) ?? 0) + 1);
      }
      const seen = [...counts.keys()].map((k) => k.slice(0, k.indexOf('|')));
      for (const severity of new Set([...src.levels, ...seen])) {
        for (const cls of CLASSES) {
          for (const state of OPEN_STATES) this.set({ severity, class: cls, state }, counts.get(`${severity}|${cls}|${state}`) ?? 0);
        }
      }
    },
  });
  // Memory, CPU, event-loop delay and garbage collection of this process (prom-client's own set).
  collectDefaultMetrics({ register: registry });
  return registry;
}
