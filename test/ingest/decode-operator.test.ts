import { map, NEVER, Subject } from 'rxjs';
import { TestScheduler } from 'rxjs/testing';
import { describe, expect, it } from 'vitest';
import { decodeFrames, newDecodeCounts, type DecodedFrame } from '../../src/ingest/decode-operator.js';
import { compileTopicPattern } from '../../src/ingest/topic.js';
import type { RawMessage } from '../../src/model/raw-message.js';
import { directory, raw } from './fixtures.js';

const pattern = compileTopicPattern();
type Msg = { raw: RawMessage; id: string };
const good = (id: string, v = 1): Msg => ({ id, raw: raw(`{"ts":1741944413589,"values":{"ch01":${v}}}`) });
const bad = (id: string): Msg => ({ id, raw: raw('not json') });
const ch01 = map((f: DecodedFrame<Msg>) => f.frame.values.get('ch01'));
const newScheduler = () => new TestScheduler((actual, expected) => expect(actual).toEqual(expected));

describe('decodeFrames', () => {
  it('passes frames on at their time and diverts rejects (marbles)', () => {
    const dead: string[] = [];
    const counts = newDecodeCounts();
    newScheduler().run(({ cold, expectObservable }) => {
      const source = cold<Msg>('a-b-c-|', { a: good('a', 1), b: bad('b'), c: good('c', 3) });
      const out = source.pipe(decodeFrames(directory, pattern, (_d, m) => void dead.push(m.id), counts), ch01);
      expectObservable(out).toBe('a---c-|', { a: 1, c: 3 });
    });
    expect(dead).toEqual(['b']);
    expect(counts).toEqual({ accepted: 2, rejected: 1, deadLetterFailures: 0 });
  });

  it('empty completes, source errors pass through, never-ending stays open', () => {
    newScheduler().run(({ cold, expectObservable }) => {
      const op = decodeFrames<Msg>(directory, pattern, () => {});
      expectObservable(cold<Msg>('|').pipe(op)).toBe('|');
      expectObservable(cold<Msg>('--#', undefined, new Error('broker gone')).pipe(op)).toBe('--#', undefined, new Error('broker gone'));
      expectObservable(NEVER.pipe(op)).toBe('-');
    });
  });

  it('a dead-letter handler that throws or rejects does not kill the stream', async () => {
    const counts = newDecodeCounts();
    const handlerErrors: unknown[] = [];
    let calls = 0;
    const handler = () => {
      calls++;
      if (calls === 1) throw new Error('disk full');
      return Promise.reject(new Error('broker down'));
    };
    const source = new Subject<Msg>();
    const seen: unknown[] = [];
    let completed = false;
    source
      .pipe(decodeFrames(directory, pattern, handler, counts, (e) => handlerErrors.push((e as Error).message)), ch01)
      .subscribe({ next: (v) => seen.push(v), complete: () => (completed = true) });
    source.next(bad('1'));
    source.next(good('2', 2));
    source.next(bad('3'));
    source.next(good('4', 4));
    source.complete();
    await Promise.resolve(); // let the rejected promise's handler run
    expect(seen).toEqual([2, 4]);
    expect(completed).toBe(true);
    expect(counts).toEqual({ accepted: 2, rejected: 2, deadLetterFailures: 2 });
    expect(handlerErrors).toEqual(['disk full', 'broker down']);
  });

  it('early unsubscribe stops reading the source', () => {
    const source = new Subject<Msg>();
    const seen: unknown[] = [];
    const sub = source.pipe(decodeFrames(directory, pattern, () => {}), ch01).subscribe((v) => seen.push(v));
    source.next(good('1', 1));
    sub.unsubscribe();
    source.next(good('2', 2));
    expect(seen).toEqual([1]);
    expect(source.observed).toBe(false);
  });
});
