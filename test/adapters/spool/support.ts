import type { Spool } from '../../../src/adapters/spool/spool.js';

/** Every line left in the spool, oldest segment first, removing each segment as it is read. */
export async function drainAll(spool: Spool): Promise<string[]> {
  const out: string[] = [];
  for (let seg = await spool.takeOldest(); seg !== null; seg = await spool.takeOldest()) {
    out.push(...seg.lines);
    await spool.remove(seg.id);
  }
  return out;
}
