import mqtt from 'mqtt';
import { serverList } from '../src/adapters/mqtt/options.js';
import type { ScanSink } from './outputs.js';
import type { SimScan } from './run.js';

/** One publish the broker confirmed (PUBACK): a line of `--published-log`. */
export interface ConfirmedPublish { structure: string; logger: string; seq: number; logger_ts_ms: number }

export interface MqttSinkOptions {
  /** Every node of a clustered broker (the first is also `url`); absent: `url` alone. */
  servers?: readonly string[];
  clientId?: string;
  connectTimeoutMs?: number;
  /** Publishes awaiting their PUBACK at most; `send` waits below it. */
  maxInFlight?: number;
  /** How long `close` waits for outstanding PUBACKs before giving them up (not counted as published). */
  drainTimeoutMs?: number;
  /** Called once per confirmed publish, in PUBACK order. */
  onConfirmed?: (c: ConfirmedPublish) => void;
}

export interface MqttScanSink extends ScanSink {
  /** Publishes confirmed by the broker, and those still awaiting (or given up at close). */
  counts(): { confirmed: number; unconfirmed: number };
  /** The run is ending: a `send` waiting for room returns at once, and later ones publish nothing. */
  abort(): void;
}

/**
 * Publishes each scan on its topic with QoS 1, the simulator playing the loggers. A persistent
 * session and reconnects (to any of `servers`): a publish not yet confirmed when the connection
 * drops is sent again (mqtt.js keeps it in its outgoing store). `send` resolves once the publish is
 * handed to the client (at most `maxInFlight` outstanding), so the pace is the scans', not the
 * broker's round trip; only a PUBACK counts a scan as published.
 */
export async function mqttSink(url: string, o: MqttSinkOptions = {}): Promise<MqttScanSink> {
  const client = await mqtt.connectAsync(url, {
    ...serverList(o.servers), clientId: o.clientId ?? 'strainward-simulator', clean: false, protocolVersion: 4,
    reconnectPeriod: 200, connectTimeout: o.connectTimeoutMs ?? 10_000, keepalive: 5,
  });
  const maxInFlight = o.maxInFlight ?? 256;
  let pending = 0;
  let confirmed = 0;
  let failed = 0;
  let wakeSender: (() => void) | null = null;
  let aborted = false;
  const settled = () => {
    pending--;
    if (wakeSender !== null && pending < maxInFlight) { const w = wakeSender; wakeSender = null; w(); }
  };
  const drained = async (timeoutMs: number) => {
    const deadline = Date.now() + timeoutMs;
    while (pending > 0 && Date.now() < deadline) await new Promise((r) => setTimeout(r, 20));
  };
  return {
    async send(scan: SimScan) {
      // With the broker down the window stays full: a stop must not wait for the broker to come back.
      while (pending >= maxInFlight && !aborted) await new Promise<void>((r) => { wakeSender = r; });
      if (aborted) return; // never handed to the client: not published, not counted
      pending++;
      client.publishAsync(scan.topic, scan.payload, { qos: 1 }).then(() => {
        confirmed++;
        o.onConfirmed?.({ structure: scan.structureId, logger: scan.loggerId, seq: scan.seq, logger_ts_ms: scan.loggerMs });
      }, () => { failed++; }).finally(settled);
    },
    counts: () => ({ confirmed, unconfirmed: pending + failed }),
    abort() {
      aborted = true;
      if (wakeSender !== null) { const w = wakeSender; wakeSender = null; w(); }
    },
    async close() {
      await drained(o.drainTimeoutMs ?? 30_000);
      // Whatever is still unconfirmed is given up (end(true) drops it), and never counted.
      await client.endAsync(pending > 0);
    },
  };
}
