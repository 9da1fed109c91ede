/**
 * One async iterable read once for `n` consumers, each given every item in order: a replay and
 * its comparison run side by side from one read of the capture. A consumer waits while another
 * still has `maxLead` items to take, so neither gets far ahead (memory: at most maxLead items per
 * consumer, whatever the length of the source). A consumer that stops is left out; the source is
 * closed when all have stopped.
 */
export function teeAsync<T>(source: AsyncIterable<T>, n: number, maxLead = 1024): AsyncIterable<T>[] {
  const it = source[Symbol.asyncIterator]();
  const queues = Array.from({ length: n }, () => new ItemQueue<T>());
  const stopped = new Array<boolean>(n).fill(false);
  let ended = false;
  let failure: { error: unknown } | null = null;
  let reading: Promise<void> | null = null;
  let waiting: Array<() => void> = [];
  const wake = () => { const w = waiting; waiting = []; for (const f of w) f(); };
  const readOne = (): Promise<void> => (reading ??= (async () => {
    try {
      const r = await it.next();
      if (r.done) ended = true;
      else for (let j = 0; j < n; j++) if (!stopped[j]) queues[j].push(r.value);
    } catch (error) {
      failure = { error };
    } finally {
      reading = null;
      wake();
    }
  })());

  const consumer = (i: number): AsyncIterable<T> => ({
    async *[Symbol.asyncIterator]() {
      try {
        for (;;) {
          const q = queues[i];
          if (q.size > 0) { const v = q.shift(); wake(); yield v; continue; }
          if (failure !== null) throw (failure as { error: unknown }).error;
          if (ended) return;
          if (queues.some((other, j) => j !== i && !stopped[j] && other.size >= maxLead)) {
            await new Promise<void>((r) => waiting.push(r));
            continue;
          }
          await readOne();
        }
      } finally {
        stopped[i] = true;
        queues[i].clear();
        wake();
        if (stopped.every(Boolean) && !ended) await it.return?.();
      }
    },
  });
  return Array.from({ length: n }, (_, i) => consumer(i));
}

/** First-in first-out without Array.shift's copying. */
class ItemQueue<T> {
  private items: T[] = [];
  private head = 0;
  get size(): number { return this.items.length - this.head; }
  push(v: T): void { this.items.push(v); }
  shift(): T {
    const v = this.items[this.head++];
    if (this.head > 1024 && this.head * 2 > this.items.length) { this.items = this.items.slice(this.head); this.head = 0; }
    return v;
  }
  clear(): void { this.items = []; this.head = 0; }
}
