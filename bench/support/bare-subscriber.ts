/**
 * The yardstick of the pipeline benchmark: a bare mqtt.js subscriber on the same broker that only
 * parses each payload's JSON and counts its channel values (QoS 1, PUBACKs sent by mqtt.js at once).
 */
import mqtt from 'mqtt';
import { LatencyRecorder } from './measure.js';

export interface BareRun {
  /** Epoch ms of the last message parsed. */
  lastMs: number;
  values: number;
  latency: LatencyRecorder;
}

export interface BareSubscriber {
  /** Resolves when `count` more messages have been parsed. Call before publishing them. */
  expect(count: number): Promise<BareRun>;
  close(): Promise<void>;
}

/** Connects (MQTT 5, clean session, same Receive Maximum as the pipeline) and subscribes at QoS 1. */
export async function startBareSubscriber(url: string, topic: string): Promise<BareSubscriber> {
  const client = await mqtt.connectAsync(url, { clientId: 'sw-bench-bare', protocolVersion: 5, clean: true, properties: { receiveMaximum: 65_535 } });
  await client.subscribeAsync(topic, { qos: 1 });
  let run: (BareRun & { left: number; done: (r: BareRun) => void }) | null = null;
  client.on('message', (_topic, payload) => {
    const scan = JSON.parse(payload.toString('utf8')) as { ts: number; values: Record<string, number | null> };
    if (run === null) return;
    let n = 0;
    for (const _ in scan.values) n++;
    run.values += n;
    run.lastMs = Date.now();
    run.latency.add(run.lastMs - scan.ts);
    if (--run.left === 0) {
      const finished = run;
      run = null;
      finished.done(finished);
    }
  });
  return {
    expect: (count) => new Promise<BareRun>((resolve) => {
      run = { lastMs: 0, values: 0, latency: new LatencyRecorder(count), left: count, done: resolve };
    }),
    close: () => client.endAsync(),
  };
}
