import { readableBytes } from './status-details.js';
import { asyncScheduler, interval, type SchedulerLike, type Subscription } from 'rxjs';
import { redactUrl } from '../adapters/secret.js';
import type { DeliveryRecord } from '../alarms/index.js';

/** A change in one of the processor's own links, for the log and the alarms. */
export interface ComponentChange {
  /** `database`, `broker`, `webhook-<recipient>`. */
  component: string;
  /** Why it fails, readable; null once it works again. */
  failure: string | null;
  /** The log event: `database_unreachable`, `database_reachable`, `broker_lost`, ... */
  event: string;
}

export interface ComponentWatch {
  /** The MQTT connection's own events (`mqtt_offline`, `mqtt_connected`). */
  brokerEvent(event: string): void;
  /** Delivery records of one alarm batch. */
  deliveries(records: readonly DeliveryRecord[]): void;
  stop(): void;
}

/**
 * Watches the links a silent failure would hide: the database (its reachability, polled), the
 * broker (connection events) and each webhook (delivery outcomes). Reports each change once, so
 * an outage is one alarm and two log lines, not one per write. Pure bookkeeping apart from the
 * poll timer on the injected scheduler.
 */
export function watchComponents(o: {
  report: (change: ComponentChange) => void;
  brokerUrl: string;
  database?: () => { dbReachable: boolean | null; lastError: string | null; spoolFillRatio?: number | null; spoolDiskFreeBytes?: number | null; spoolBytes?: number };
  every_ms: number;
  scheduler?: SchedulerLike;
}): ComponentWatch {
  const failing = new Map<string, boolean>();
  const change = (component: string, failure: string | null, event: string): void => {
    const was = failing.get(component) ?? false;
    if (was === (failure !== null)) return;
    failing.set(component, failure !== null);
    o.report({ component, failure, event });
  };
  let poll: Subscription | null = null;
  if (o.database !== undefined) {
    const db = o.database;
    poll = interval(o.every_ms, o.scheduler ?? asyncScheduler).subscribe(() => {
      const s = db();
      if (s.dbReachable === false) {
        // The fill is of the spool's own limit; the disk may fill long before it.
        const disk = s.spoolDiskFreeBytes === undefined || s.spoolDiskFreeBytes === null ? '' : `, ${readableBytes(s.spoolDiskFreeBytes)} free on its disk`;
        const size = s.spoolBytes === undefined ? '' : `${readableBytes(s.spoolBytes)}, `;
        const spool = s.spoolFillRatio === undefined || s.spoolFillRatio === null ? '' : ` (spool ${size}${(100 * s.spoolFillRatio).toFixed(1)} % of its limit${disk})`;
        change('database', `unreachable: ${s.lastError ?? 'no answer'}; results go to the spool${spool}`, 'database_unreachable');
      } else if (s.dbReachable === true) change('database', null, 'database_reachable');
    });
  }
  return {
    brokerEvent(event) {
      if (event === 'mqtt_offline') change('broker', `connection to ${redactUrl(o.brokerUrl)} lost; reconnecting (alarms still go to the log and webhooks)`, 'broker_lost');
      else if (event === 'mqtt_connected') change('broker', null, 'broker_back');
    },
    deliveries(records) {
      for (const r of records) {
        if (r.channel !== 'webhook') continue;
        const last = r.attempts[r.attempts.length - 1];
        if (r.status === 'failed') {
          change(`webhook-${r.recipientId}`, `deliveries to ${r.target} failing after ${r.attemptCount} attempts: ${last?.error ?? 'no answer'}`, 'webhook_failing');
        } else change(`webhook-${r.recipientId}`, null, 'webhook_delivering');
      }
    },
    stop() { poll?.unsubscribe(); },
  };
}

/** Bytes as KiB below 1 MiB, else MiB, one decimal. */
