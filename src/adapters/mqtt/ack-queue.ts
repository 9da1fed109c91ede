/**
 * Ordered acknowledgement queue. MQTT requires PUBACKs in the order the PUBLISHes arrived
 * (MQTT 3.1.1 section 4.6, MQTT 5 section 4.6), but the pipeline finishes messages out of order
 * (a dead letter is written before the database batch holding an earlier frame). A message
 * acked early waits here until every earlier one is acked, then all due PUBACKs go out in order.
 *
 * Pure bookkeeping: sending is the injected `send`. One generation per network connection:
 * `reset()` on a lost connection drops the waiting entries (the broker redelivers them) and makes
 * their tickets inert, so a late ack never reaches a new connection.
 */
export interface AckTicket {
  /** Mark this message done. Idempotent. */
  ack(): void;
}

interface Entry {
  messageId: number;
  acked: boolean;
}

export class OrderedAckQueue {
  private entries: Entry[] = [];
  private head = 0;
  private generation = 0;

  constructor(private readonly send: (messageId: number) => void) {}

  /** Register a received message (arrival order). Mutates the queue. */
  enqueue(messageId: number): AckTicket {
    const entry: Entry = { messageId, acked: false };
    this.entries.push(entry);
    const generation = this.generation;
    return {
      ack: () => {
        if (generation !== this.generation || entry.acked) return;
        entry.acked = true;
        this.release();
      },
    };
  }

  /** Forget every waiting entry (connection lost). */
  reset(): void {
    this.generation++;
    this.entries = [];
    this.head = 0;
  }

  /** Messages received and not yet released (acked or not). */
  get waiting(): number {
    return this.entries.length - this.head;
  }

  private release(): void {
    while (this.head < this.entries.length && this.entries[this.head].acked) {
      this.send(this.entries[this.head].messageId);
      this.head++;
    }
    // Compact now and then so a long-lived connection does not grow the array forever.
    if (this.head > 1024 && this.head * 2 > this.entries.length) {
      this.entries = this.entries.slice(this.head);
      this.head = 0;
    }
  }
}
