/**
 * Captures of the simulated deck for the replay benchmarks, written once per scenario and kept
 * under the system's temporary directory (a day of the deck takes minutes to simulate): the
 * standard scenario of `simulators/default-scenario.ts` (traffic, a heavy vehicle at mid-run,
 * every fault kind) over config/brannock-mere.yaml, keyed by duration, seed and the structure
 * file's and simulator's contents.
 */
import { createHash } from 'node:crypto';
import { readdir, readFile, rename, rm, stat } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { loadStructureFile } from '../../src/config/load.js';
import { defaultScenario } from '../../simulators/default-scenario.js';
import { captureSink } from '../../simulators/outputs.js';
import { createSimulation } from '../../simulators/run.js';

export const STRUCTURE_FILE = 'config/brannock-mere.yaml';
export const BENCH_START_MS = Date.UTC(2026, 5, 1, 0);

async function contentKey(durationS: number, seed: number): Promise<string> {
  const h = createHash('sha256').update(`${durationS}:${seed}:${BENCH_START_MS}`).update(await readFile(STRUCTURE_FILE));
  for (const f of (await readdir('simulators')).sort()) h.update(await readFile(join('simulators', f)));
  return h.digest('hex').slice(0, 12);
}

/** The capture directory of `durationS` simulated seconds, made now if not kept; also its message count. */
export async function simulatedCapture(durationS: number, seed = 1, log: (s: string) => void = () => {}): Promise<{ dir: string; messages: number; made: boolean }> {
  const dir = join(tmpdir(), `strainward-bench-capture-${durationS}s-${await contentKey(durationS, seed)}`);
  const done = join(dir, 'COUNT');
  try {
    return { dir, messages: Number(await readFile(done, 'utf8')), made: false };
  } catch { /* not yet made */ }
  const work = `${dir}.partial`;
  await rm(work, { recursive: true, force: true });
  log(`simulating ${durationS} s of the deck into ${dir} (once; kept for later runs)`);
  const structure = await loadStructureFile(STRUCTURE_FILE);
  const sim = createSimulation(structure, defaultScenario({ seed, start_ms: BENCH_START_MS, duration_s: durationS }));
  const sink = await captureSink(work, 2000);
  let n = 0;
  for (const scan of sim.scans()) { await sink.send(scan); n++; }
  await sink.close();
  await rm(dir, { recursive: true, force: true });
  await rename(work, dir);
  await import('node:fs/promises').then((fs) => fs.writeFile(done, String(n)));
  return { dir, messages: n, made: true };
}

/** Bytes of the files in a directory (not recursive). */
export async function dirBytes(dir: string): Promise<number> {
  let n = 0;
  for (const f of await readdir(dir)) n += (await stat(join(dir, f))).size;
  return n;
}
