/**
 * Times the live pipeline's acknowledgements. It subscribes to the connection's messages after the
 * pipeline did, so each message has already entered the pipeline (which acknowledges only later,
 * once its points are written) when this wraps the message's `ack` to note the time. Mutates the
 * messages it sees (their `ack` property), nothing else.
 */
import type { MqttConnection } from '../../src/adapters/mqtt/connection.js';
import { LatencyRecorder, tsFromPayload } from './measure.js';

export class AckObserver {
  /** Acknowledgements since the last `reset`. */
  acked = 0;
  /** Epoch ms of the latest acknowledgement. */
  lastAckMs = 0;
  /** Logger ts to acknowledgement, ms. */
  latency = new LatencyRecorder(1);
  /** Logger ts to arrival in the pipeline process, ms: the broker's (and event loop's) share. */
  arrival = new LatencyRecorder(1);
  /** Called with the running count after each acknowledgement. */
  onAck: (acked: number) => void = () => {};

  constructor(connection: MqttConnection) {
    connection.messages$.subscribe((m) => {
      const ts = tsFromPayload(m.raw.payload);
      this.arrival.add(m.raw.arrivalMs - ts);
      const ack = m.ack;
      m.ack = () => {
        this.lastAckMs = Date.now();
        this.latency.add(this.lastAckMs - ts);
        this.onAck(++this.acked);
        ack();
      };
    });
  }

  /** Starts a measured span of `count` messages (all earlier ones must be acknowledged). */
  reset(count: number): void {
    this.acked = 0;
    this.latency = new LatencyRecorder(count);
    this.arrival = new LatencyRecorder(count);
    this.onAck = () => {};
  }
}
