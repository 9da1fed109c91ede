import { describe, expect, it } from 'vitest';
import { OrderedAckQueue } from '../../../src/adapters/mqtt/ack-queue.js';

describe('OrderedAckQueue', () => {
  it('releases PUBACKs in arrival order, holding early acks (MQTT 3.1.1 section 4.6, from memory)', () => {
    const sent: number[] = [];
    const q = new OrderedAckQueue((id) => sent.push(id));
    const [a, b, c, d] = [11, 12, 13, 14].map((id) => q.enqueue(id));
    c.ack();
    b.ack();
    expect(sent).toEqual([]);
    expect(q.waiting).toBe(4);
    a.ack();
    expect(sent).toEqual([11, 12, 13]);
    d.ack();
    d.ack(); // idempotent
    expect(sent).toEqual([11, 12, 13, 14]);
    expect(q.waiting).toBe(0);
  });

  it('after reset (connection lost) old tickets are inert and new ones start afresh', () => {
    const sent: number[] = [];
    const q = new OrderedAckQueue((id) => sent.push(id));
    const old = q.enqueue(1);
    q.enqueue(2).ack();
    q.reset();
    expect(q.waiting).toBe(0);
    const fresh = q.enqueue(1); // the broker redelivers with the same packet id
    old.ack();
    expect(sent).toEqual([]);
    fresh.ack();
    expect(sent).toEqual([1]);
  });

  it('stays correct across compaction of a long run', () => {
    const sent: number[] = [];
    const q = new OrderedAckQueue((id) => sent.push(id));
    const tickets = Array.from({ length: 5000 }, (_, i) => q.enqueue((i % 65535) + 1));
    for (let i = tickets.length - 1; i >= 1; i--) tickets[i].ack(); // all but the first, backwards
    expect(sent.length).toBe(0);
    tickets[0].ack();
    expect(sent.length).toBe(5000);
    expect(sent.slice(0, 3)).toEqual([1, 2, 3]);
    q.enqueue(7).ack();
    expect(sent.at(-1)).toBe(7);
  });
});
