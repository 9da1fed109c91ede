/**
 * The benchmark's logger side, run as a child process (`fork`) so publishing does not share the
 * measured process's event loop. Driven over IPC: each `PublishJob` publishes `count` scans at
 * QoS 1 with at most `window` PUBACKs outstanding, either as fast as the broker takes them
 * (`rate_per_s` 0) or paced. Each payload's `ts` is the publish time (epoch ms), written first so
 * the measuring side can read it without parsing the JSON.
 */
import mqtt, { type MqttClient } from 'mqtt';
import type { PublishJob, PublishReport } from './publisher.js';

let client: MqttClient | null = null;
/** Last `ts` written, kept across jobs, to count distinct timestamps. */
let lastTs = 0;
let distinctTs = 0;

function payload(job: PublishJob, i: number): string {
  const ts = Date.now();
  if (ts !== lastTs) {
    lastTs = ts;
    distinctTs++;
  }
  return `{"ts":${ts},"seq":${job.seqStart + i},"values":${job.bodies[i % job.bodies.length]}}`;
}

function run(job: PublishJob, c: MqttClient): Promise<PublishReport> {
  return new Promise((resolve, reject) => {
    const startMs = Date.now();
    const distinctBefore = distinctTs;
    let sent = 0;
    let acked = 0;
    let maxBehind = 0;
    let timer: ReturnType<typeof setInterval> | null = null;
    const due = () => (job.rate_per_s > 0 ? Math.min(job.count, Math.floor(((Date.now() - startMs) * job.rate_per_s) / 1000) + 1) : job.count);
    const pump = () => {
      const target = due();
      while (sent < target && sent - acked < job.window) {
        const i = sent++;
        c.publish(job.topic, payload(job, i), { qos: 1 }, (err) => {
          if (err) return reject(err);
          acked++;
          if (acked === job.count) {
            if (timer) clearInterval(timer);
            resolve({ startMs, endMs: Date.now(), published: acked, distinctTimestamps: distinctTs - distinctBefore, maxBehindSchedule: maxBehind });
          } else pump();
        });
      }
      maxBehind = Math.max(maxBehind, target - sent);
    };
    // Paced: a 2 ms tick releases what is due; unpaced, every PUBACK refills the window.
    if (job.rate_per_s > 0) timer = setInterval(pump, 2);
    pump();
  });
}

process.on('message', (msg: { cmd: 'connect'; url: string } | { cmd: 'publish'; job: PublishJob } | { cmd: 'exit' }) => {
  const reply = (m: unknown) => process.send!(m);
  if (msg.cmd === 'connect') {
    mqtt.connectAsync(msg.url, { clientId: 'sw-bench-logger', protocolVersion: 5, clean: true })
      .then((c) => { client = c; reply({ ok: true }); }, (e: unknown) => reply({ ok: false, error: String(e) }));
  } else if (msg.cmd === 'publish') {
    run(msg.job, client!).then((report) => reply({ ok: true, report }), (e: unknown) => reply({ ok: false, error: String(e) }));
  } else {
    const done = client ? client.endAsync() : Promise.resolve();
    done.finally(() => process.exit(0));
  }
});
process.on('disconnect', () => process.exit(0)); // the parent died: do not linger
