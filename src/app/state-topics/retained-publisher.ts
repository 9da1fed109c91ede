import type { Publish } from '../../adapters/mqtt/connection.js';

/**
 * Retained publishes where only the newest body matters: at most one publish per topic in flight,
 * and a newer body waiting behind it replaces an older one. While the broker is away nothing piles
 * up in the MQTT client's queue (one message per topic at most), and once it is back the topic
 * gets the state of that moment, not the history. The body is built when it is sent.
 */
export class RetainedPublisher {
  private readonly busy = new Set<string>();
  private readonly waiting = new Map<string, () => string>();
  private readonly inFlight = new Set<Promise<void>>();

  constructor(private readonly publish: Publish, private readonly onError: (topic: string, err: unknown) => void) {}

  send(topic: string, body: () => string): void {
    if (this.busy.has(topic)) {
      this.waiting.set(topic, body);
      return;
    }
    this.busy.add(topic);
    let payload: string;
    try {
      payload = body();
    } catch (err) {
      this.busy.delete(topic);
      this.onError(topic, err);
      return;
    }
    const p: Promise<void> = this.publish(topic, payload, { qos: 1, retain: true })
      .catch((err: unknown) => { this.onError(topic, err); })
      .finally(() => {
        this.inFlight.delete(p);
        this.busy.delete(topic);
        const next = this.waiting.get(topic);
        if (next !== undefined) {
          this.waiting.delete(topic);
          this.send(topic, next);
        }
      });
    this.inFlight.add(p);
  }

  /** Resolves once nothing is in flight or waiting, or after `maxMs` (a broker that is away). */
  async idle(maxMs: number): Promise<void> {
    const deadline = Date.now() + maxMs;
    while (this.inFlight.size > 0 && Date.now() < deadline) {
      let timer: NodeJS.Timeout | undefined;
      await Promise.race([Promise.all(this.inFlight), new Promise((r) => { timer = setTimeout(r, deadline - Date.now()); })]);
      clearTimeout(timer);
    }
  }
}
