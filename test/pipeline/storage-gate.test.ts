import { VirtualTimeScheduler } from 'rxjs';
import { describe, expect, it } from 'vitest';
import { StorageGate } from '../../src/pipeline/storage-gate.js';

const flush = () => new Promise<void>((r) => setImmediate(r));

describe('storage gate: acknowledgement after a persisted state', () => {
  it('acknowledges an epoch only once all its blocks are durable and its state is persisted, in order; a given-up block stays unacknowledged', async () => {
    const acked: number[] = [];
    const persisted: string[] = [];
    let state = 0;
    let release: () => void = () => {};
    const gate = new StorageGate(() => `state ${state}`, (json) => new Promise<void>((r) => { release = () => { persisted.push(json); r(); }; }));
    const msg = (n: number) => ({ ack: () => acked.push(n) });
    const a = gate.item(msg(1));
    const b = gate.item(msg(2));
    state = 2;
    gate.poke(); // sealed with state 2
    const c = gate.item(msg(3));
    state = 3;
    gate.poke(); // one epoch waits already: no second seal
    b.ack();
    await flush();
    expect(persisted).toEqual([]); // block 1 is not durable yet
    a.ack();
    await flush();
    expect(acked).toEqual([]); // durable, but the state is not written yet
    release();
    await flush();
    expect(persisted).toEqual(['state 2']);
    expect(acked).toEqual([1, 2]);
    c.nack(); // its write was given up
    await flush();
    release();
    await flush();
    expect(persisted).toEqual(['state 2', 'state 3']);
    expect(acked).toEqual([1, 2]);
    await gate.drained();
  });

  it('a state that cannot be written keeps its messages unacknowledged and is tried again at the next poke; at stop it is given up', async () => {
    const acked: number[] = [];
    let fail = true;
    const gate = new StorageGate(() => 's', async () => { if (fail) throw new Error('disk full'); });
    gate.item({ ack: () => acked.push(1) }).ack();
    gate.poke();
    await flush();
    expect(gate.counts.checkpointFailures).toBe(1);
    expect(acked).toEqual([]);
    fail = false;
    gate.poke();
    await flush();
    expect(acked).toEqual([1]);
    fail = true;
    gate.item({ ack: () => acked.push(2) }).ack();
    gate.poke();
    await flush();
    gate.stop();
    await gate.drained();
    expect(acked).toEqual([1]);
  });

  it('with spacing, states are taken at most once per interval of the scheduler clock', async () => {
    const scheduler = new VirtualTimeScheduler();
    let snapshots = 0;
    const gate = new StorageGate(() => { snapshots++; return 's'; }, async () => {}, () => {}, { ms: 20, scheduler });
    for (let i = 0; i < 10; i++) {
      gate.item(null).ack();
      gate.poke();
      await flush();
    }
    expect(snapshots).toBe(1); // the clock has not moved: the rest wait for the timer
    scheduler.flush(); // 20 ms later
    await flush();
    expect(snapshots).toBe(2);
    await gate.drained();
  });
});
