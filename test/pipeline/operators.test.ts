import { TestScheduler } from 'rxjs/testing';
import { describe, expect, it } from 'vitest';
import { MemorySink } from '../../src/adapters/memory-sink.js';
import { lineBlockText, type LineBlock, type LineWriter } from '../../src/model/point.js';
import type { LoggerFrame } from '../../src/model/raw-message.js';
import { processFrames, type FrameInput, type FrameOutput } from '../../src/pipeline/process-frames.js';
import { writeAndAck } from '../../src/pipeline/write-and-ack.js';
import { firstValueFrom, from, lastValueFrom, map, ReplaySubject, toArray } from 'rxjs';
import { baseDoc, compileOrThrow, microGauge } from '../support/structures.js';

const structure = compileOrThrow(baseDoc(
  [{ id: 'one', kind: 'single', material: 'steel', zone: 'z', location: 'bench', elements: [{ gauge: 'g' }], temperature_sensors: ['tc'],
    temperature: { mode: 'interpolate', max_age_s: 60, max_wait_s: 5 } }],
  [microGauge('g', 'c1')],
  { loggers: [{ id: 'lg', expected_interval_s: 1 }, { id: 'th', expected_interval_s: 10 }],
    temperature_sensors: [{ id: 'tc', kind: 'thermocouple', channel: { logger: 'th', channel: 't' } }] },
));
const frame = (loggerId: string, t: number, values: Record<string, number>): LoggerFrame =>
  ({ structureId: 'test-structure', loggerId, timeMs: t, seq: null, values: new Map(Object.entries(values)), arrivalMs: t });
const label = (o: FrameOutput<string>) => (o.kind === 'tick' ? `tick${o.nowMs}` : o.kind === 'received' ? `in:${o.frame.loggerId}` : o.kind === 'refused' ? `refused:${o.loggerId}` : `out:${o.message}`);

describe('processFrames (virtual time)', () => {
  it('passes frames in at once, computes them when temperature allows, passes ticks, and flushes on completion', () => {
    new TestScheduler((a, b) => expect(a).toEqual(b)).run(({ cold, expectObservable }) => {
      const inputs: Record<string, FrameInput<string>> = {
        a: { kind: 'frame', frame: frame('th', 0, { t: 10 }), message: 'th0' },
        b: { kind: 'frame', frame: frame('lg', 1000, { c1: 1 }), message: 'lg1' },
        c: { kind: 'tick', nowMs: 3000 },
        d: { kind: 'frame', frame: frame('th', 4000, { t: 20 }), message: 'th1' },
        e: { kind: 'frame', frame: frame('lg', 5000, { c1: 2 }), message: 'lg2' },
      };
      const out$ = cold('a 9ms b 9ms c 9ms d 9ms e 9ms |', inputs).pipe(processFrames<string>(structure));
      const labels = { p: 'in:th', q: 'out:th0', r: 'in:lg', s: 'tick3000', t: 'out:lg1', u: 'out:th1', w: 'out:lg2' };
      // lg1 waits for the 4 s reading (interpolation); lg2 has none after it and is computed at completion.
      expectObservable(out$.pipe(map(label))).toBe('(pq) 6ms r 9ms s 9ms (ptu) 5ms r 9ms (w|)', labels);
    });
  });
});

describe('writeAndAck', () => {
  const processed = (message: { ack(): void }, t: number): FrameOutput<{ ack(): void }> => ({
    kind: 'frame', frame: frame('lg', t, { c1: t }), message, results: [], temperatures: {},
  });

  it('acknowledges a frame only after its points are written, in order', async () => {
    const events: string[] = [];
    const sink: LineWriter = {
      writeLines: async (block: LineBlock) => { events.push(`write ${lineBlockText(block).split(' ').pop()}`); },
    };
    const msg = (t: number) => ({ ack: () => events.push(`ack ${t}`) });
    await lastValueFrom(from([processed(msg(1), 1), { kind: 'tick', nowMs: 2 } as const, processed(msg(3), 3)]).pipe(writeAndAck(sink)));
    expect(events).toEqual(['write 1', 'write 3', 'ack 1', 'ack 3']);
  });

  it('leaves a message unacknowledged when its write fails, reports it, and goes on', async () => {
    const failing: LineWriter = { writeLines: async () => { throw new Error('spool full'); } };
    let acked = 0;
    const errors: string[] = [];
    const out = await firstValueFrom(from([processed({ ack: () => { acked++; } }, 1), processed({ ack: () => { acked++; } }, 2)])
      .pipe(writeAndAck(failing, {}, 16, (err) => errors.push((err as Error).message)), toArray()));
    expect(out.map((w) => [w.timeMs, w.acknowledged])).toEqual([[1, false], [2, false]]);
    expect(acked).toBe(0);
    expect(errors).toEqual(['spool full', 'spool full']);
  });

  it('writes raw readings with the frame and tags every point with the run tag', async () => {
    const sink = new MemorySink();
    await lastValueFrom(from([processed({ ack() {} }, 7)]).pipe(writeAndAck(sink, { extraTags: { run: 'r9' } })));
    expect(sink.points.map((p) => `${p.measurement} ${p.tags.run} ${p.fields.c1}`)).toEqual(['sw_raw r9 7']);
  });

  it('tries a failed write again with backoff and acknowledges once it succeeds', async () => {
    let calls = 0;
    const flaky: LineWriter = { writeLines: async () => { if (++calls < 3) throw new Error('spool full'); } };
    let acked = 0;
    const errors: string[] = [];
    await lastValueFrom(from([processed({ ack: () => { acked++; } }, 1)])
      .pipe(writeAndAck(flaky, {}, 16, (err) => errors.push((err as Error).message), { maxAttempts: 10, initialDelayMs: 1, maxDelayMs: 4 })));
    expect(calls).toBe(3);
    expect(errors).toEqual(['spool full', 'spool full']);
    expect(acked).toBe(1);
  });

  it('gives up waiting retries once told to stop, leaving the message unacknowledged', async () => {
    const stop$ = new ReplaySubject<void>(1);
    const failing: LineWriter = { writeLines: async () => { stop$.next(); throw new Error('spool full'); } };
    let acked = 0;
    const out = await lastValueFrom(from([processed({ ack: () => { acked++; } }, 1)])
      .pipe(writeAndAck(failing, {}, 16, () => {}, { maxAttempts: Number.POSITIVE_INFINITY, initialDelayMs: 60_000, maxDelayMs: 60_000, until: stop$ }), toArray()));
    expect(out).toHaveLength(0); // the frame never completed: not acknowledged, the broker redelivers it
    expect(acked).toBe(0);
  });

  it('keeps at most `concurrency` writes in flight, starts the rest in arrival order, and completes after the last', async () => {
    const started: string[] = [];
    const finish: Array<() => void> = [];
    const sink: LineWriter = { writeLines: (block) => new Promise<void>((resolve) => { started.push(lineBlockText(block).split(' ').pop()!); finish.push(resolve); }) };
    const acked: number[] = [];
    let completed = false;
    const out: number[] = [];
    from([1, 2, 3, 4].map((t) => processed({ ack: () => acked.push(t) }, t))).pipe(writeAndAck(sink, {}, 2))
      .subscribe({ next: (w) => out.push(w.timeMs), complete: () => { completed = true; } });
    const tick = () => new Promise((r) => setTimeout(r, 0));
    expect(started).toEqual(['1', '2']);
    finish[1]();
    await tick();
    expect(started).toEqual(['1', '2', '3']);
    expect(acked).toEqual([2]);
    finish[0]();
    finish[2]();
    await tick();
    expect(started).toEqual(['1', '2', '3', '4']);
    expect(completed).toBe(false);
    finish[3]();
    await tick();
    expect(acked).toEqual([2, 1, 3, 4]);
    expect(out).toEqual([2, 1, 3, 4]);
    expect(completed).toBe(true);
  });

  it('works through a long queue (a replay pushes thousands at once): every frame acknowledged once, in order', async () => {
    const sink: LineWriter = { writeLines: () => new Promise<void>((resolve) => setImmediate(resolve)) };
    const acked: number[] = [];
    const n = 5_000;
    const out = await lastValueFrom(from(Array.from({ length: n }, (_, i) => processed({ ack: () => acked.push(i) }, i)))
      .pipe(writeAndAck(sink, {}, 3), toArray()));
    expect(out.map((w) => w.timeMs)).toEqual(Array.from({ length: n }, (_, i) => i));
    expect(out.every((w) => w.acknowledged)).toBe(true);
    expect(acked).toEqual(Array.from({ length: n }, (_, i) => i));
  });
});
