/**
 * The simulator's broker sink at a stop with the broker gone (real Mosquitto, stopped under it): a
 * send waiting for room in a full window returns when the run is aborted, later sends publish
 * nothing, and close gives up what the broker never confirmed without counting it as published.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { mqttSink } from '../../simulators/mqtt-sink.js';
import type { SimScan } from '../../simulators/run.js';
import { startMosquitto, type MosquittoServer } from '../support/servers.js';

let broker: MosquittoServer | undefined;
afterAll(async () => { await broker?.stop(); });

const scan = (seq: number): SimScan => ({
  structureId: 'test-structure', loggerId: 'lg', topic: 'strainward/test-structure/lg/scan', trueMs: seq, loggerMs: seq, arrivalMs: seq,
  seq, values: { ch1: seq }, payload: JSON.stringify({ ts: seq, seq, values: { ch1: seq } }), truth: [],
});

describe('simulator broker sink, stopped with the broker down', () => {
  it('a send waiting for room returns on abort; nothing unconfirmed counts as published', async () => {
    broker = await startMosquitto();
    const confirmed: number[] = [];
    const sink = await mqttSink(broker.url, { clientId: 'test-sim-sink-stop', maxInFlight: 4, drainTimeoutMs: 200, onConfirmed: (c) => confirmed.push(c.seq) });
    for (let i = 1; i <= 3; i++) await sink.send(scan(i));
    await new Promise((r) => setTimeout(r, 300));
    expect(confirmed).toEqual([1, 2, 3]);
    await broker.stop();
    broker = undefined;
    for (let i = 4; i <= 7; i++) await sink.send(scan(i)); // the window of 4 fills: none can be confirmed
    let returned = false;
    const waiting = sink.send(scan(8)).then(() => { returned = true; });
    await new Promise((r) => setTimeout(r, 300));
    expect(returned).toBe(false); // held by the full window
    sink.abort();
    await waiting;
    expect(returned).toBe(true);
    await sink.send(scan(9)); // after abort: returns at once, nothing handed to the client
    await sink.close();
    expect(sink.counts()).toEqual({ confirmed: 3, unconfirmed: 4 });
    expect(confirmed).toEqual([1, 2, 3]);
  }, 30_000);
});
