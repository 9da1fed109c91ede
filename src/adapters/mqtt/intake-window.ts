import type { MqttClient } from 'mqtt';
import { OrderedAckQueue, type AckTicket } from './ack-queue.js';

/** Counters of the intake window. Mutated in place. */
export interface IntakeWindowStats {
  /** Most PUBACKs held at once since start. */
  peakHeldAcks: number;
  /** Messages that arrived with maxHeldAcks already held: the broker ignored the window (warned once per connection). */
  overWindow: number;
  /** Times intake stopped at maxHeldAcks (nothing awaited from the broker), and started again. */
  pauses: number;
  resumes: number;
}

export interface IntakeWindow {
  readonly stats: IntakeWindowStats;
  /** PUBACKs held now. */
  readonly held: number;
  /** An arrived QoS 1 message (arrival order); its ticket releases the PUBACK in order. */
  take(messageId: number): AckTicket;
}

/**
 * Longest run of messages handled without letting the event loop turn, ms. mqtt.js handles the
 * packets it has buffered one after another through process.nextTick, which runs before any I/O:
 * a burst of a few thousand scans (a window refilled at once) kept the database's answers and the
 * next batch's bytes waiting for up to 1.3 s (bench:pipeline), so processing and writing took
 * turns instead of overlapping.
 */
export const INTAKE_SLICE_MS = 4;

/** Marks the PUBACKs the ack queue releases, as opposed to the ones mqtt.js sends by itself. */
const RELEASED = Symbol('strainward.released-puback');

/**
 * Holds the client's PUBACKs until each message is acknowledged, and applies intake back-pressure.
 * PUBACKs are held by swapping mqtt.js's packet writer. Its own hook, customHandleAcks, cannot do
 * this: mqtt.js ignores it below MQTT 5, and while its callback is pending the client handles no
 * further packet (no later message, no PINGRESP), so one slow ack stalls everything.
 *
 * The broker is asked to keep to a window of maxHeldAcks (MQTT 5 Receive Maximum; with 3.1.1 its
 * own in-flight limit), but Mosquitto 2.0.11 keeps to it only until the first PUBACK. So at
 * maxHeldAcks held, mqtt.js is not told that its PUBACK went out until the count is back to half,
 * and reads no further packet meanwhile (the socket then stops being read too: its pipe into
 * mqtt.js's parser is full) — unless an answer the client's own requests wait for is due
 * (SUBACK, UNSUBACK, PUBACK of our own publish): it lies behind the messages on the wire (and a
 * dead letter's message waits for its copy's PUBACK), so then the client reads on, and the
 * messages beyond the window are taken, counted and warned about once per connection. Publishing
 * on a connection of its own (as the live job does) keeps those answers off this one.
 *
 * A PINGRESP is no such answer: nothing waits for it but mqtt.js's keep-alive timer. Reading on
 * for one sent while reading took in everything the broker had queued before it (52,661 held
 * against a window of 4,096 at 5x the sustained rate, bench:overload). So intake stops at the
 * window with a PINGREQ outstanding too, and every stop restarts the keep-alive timer; PINGREQs
 * go on while stopped (each restarting it again), the PINGRESPs are read once reading goes on,
 * and a connection that stays silent while read is given up as before.
 *
 * Reading also lets the event loop turn once every `sliceMs` of handling (INTAKE_SLICE_MS): the
 * next packet is read after a setImmediate, so the database's answers, the sockets' writes and the
 * timers get their turn inside a burst. Mutates `client`.
 */
export function holdPubacks(
  client: MqttClient, maxHeldAcks: number, protocolVersion: 4 | 5,
  warn: (event: string, detail?: Record<string, unknown>) => void, sliceMs = INTAKE_SLICE_MS,
): IntakeWindow {
  const internals = client as unknown as {
    _sendPacket: (p: Record<PropertyKey, unknown>, cb?: () => void, ...rest: unknown[]) => void;
    outgoing: Record<number, unknown>;
  };
  const sendPacket = internals._sendPacket.bind(client);
  const stats: IntakeWindowStats = { peakHeldAcks: 0, overWindow: 0, pauses: 0, resumes: 0 };
  const acks = new OrderedAckQueue((messageId) => {
    if (client.connected) sendPacket({ cmd: 'puback', messageId, reasonCode: 0, [RELEASED]: true });
  });
  let deferred: (() => void) | null = null;
  let warnedThisConnection = false;
  let sliceStartMs = performance.now();
  /** Bumped at every close: a read let go before it must not go on reading the next connection's packets. */
  let connectionGeneration = 0;
  /** Goes on reading now, or after one turn of the event loop once this slice has run `sliceMs`. */
  const readOn = (cb: () => void) => {
    const now = performance.now();
    if (now - sliceStartMs < sliceMs) return cb();
    const generation = connectionGeneration;
    setImmediate(() => {
      sliceStartMs = performance.now();
      if (generation === connectionGeneration) cb();
    });
  };

  /** Our own SUBSCRIBE, UNSUBSCRIBE or QoS 1/2 PUBLISH waits for the broker's answer. */
  const awaitingBroker = () => {
    for (const _ in internals.outgoing) return true;
    return false;
  };
  const resume = () => {
    if (deferred === null) return;
    const cb = deferred;
    deferred = null;
    stats.resumes++;
    sliceStartMs = performance.now();
    cb();
  };
  internals._sendPacket = (packet, cb, ...rest) => {
    if (packet.cmd === 'puback' && !packet[RELEASED]) {
      if (cb && acks.waiting >= maxHeldAcks && !awaitingBroker()) {
        deferred = cb;
        stats.pauses++;
        // A PINGRESP due now is read only after the stop: the keep-alive counts from here.
        client.reschedulePing(true);
        return;
      }
      // Tell mqtt.js it went out, so it reads the next packet (the queue sends the real one).
      if (cb) readOn(cb);
      return;
    }
    if (packet.cmd === 'pingreq' && deferred !== null) {
      // Paused: the PINGRESP lies behind what waits to be read, and reading on for it would take
      // in all of that. The broker still hears from us (this PINGREQ, the PUBACKs); we look for
      // its answer once we read again, and a dead connection shows then (or when a write fails).
      sendPacket(packet, cb, ...rest);
      client.reschedulePing(true);
      return;
    }
    sendPacket(packet, cb, ...rest);
    if (deferred !== null && awaitingBroker()) resume(); // its answer lies behind the messages on the wire
  };
  // A lost connection: the broker redelivers what was held; late acks of it must not reach the next one.
  client.on('close', () => {
    acks.reset();
    deferred = null;
    connectionGeneration++;
    warnedThisConnection = false;
  });

  const countHeld = () => {
    const held = acks.waiting;
    if (held > stats.peakHeldAcks) stats.peakHeldAcks = held;
    if (held <= maxHeldAcks) return;
    stats.overWindow++;
    if (warnedThisConnection) return;
    warnedThisConnection = true;
    warn('mqtt_window_exceeded', {
      heldAcks: held, maxHeldAcks, protocolVersion,
      message: `the broker sent more than mqtt.max_held_acks (${maxHeldAcks}) messages without their acknowledgement; `
        + 'set its in-flight limit (Mosquitto: max_inflight_messages) to at most that value',
    });
  };

  return {
    stats,
    get held() { return acks.waiting; },
    take(messageId) {
      const ticket = acks.enqueue(messageId);
      countHeld();
      return {
        ack: () => {
          ticket.ack();
          if (acks.waiting <= maxHeldAcks / 2) resume();
        },
      };
    },
  };
}
