import { mkdtemp, readdir, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { defaultScenario } from '../../simulators/default-scenario.js';
import { captureSink, messagesFileSink, runSimulation } from '../../simulators/outputs.js';
import { createSimulation } from '../../simulators/run.js';
import { brannock, START_MS } from './support.js';

const dirs: string[] = [];
afterAll(async () => { for (const d of dirs) await rm(d, { recursive: true, force: true }); });

async function runToFiles(seed: number): Promise<Map<string, Buffer>> {
  const s = await brannock();
  const scn = defaultScenario({ seed, start_ms: START_MS, duration_s: 60, day_s: 60 });
  const dir = await mkdtemp(join(tmpdir(), 'sw-sim-'));
  dirs.push(dir);
  const sinks = [messagesFileSink(join(dir, 'messages.ndjson')), await captureSink(join(dir, 'capture'), 200)];
  let t = 0;
  await runSimulation(createSimulation(s, scn), scn, { outDir: dir, sinks, speed: 0, now: () => t++, sleep: async () => {} });
  const files = new Map<string, Buffer>();
  for (const name of ['messages.ndjson', 'truth.ndjson', 'fault-log.json', 'scenario.json']) files.set(name, await readFile(join(dir, name)));
  for (const name of (await readdir(join(dir, 'capture'))).sort()) files.set(`capture/${name}`, await readFile(join(dir, 'capture', name)));
  return files;
}

describe('repeatability', () => {
  it('the same seed gives byte-identical messages, truth, fault log and capture files', async () => {
    const a = await runToFiles(42);
    const b = await runToFiles(42);
    expect([...a.keys()]).toEqual([...b.keys()]);
    expect(a.size).toBeGreaterThanOrEqual(6); // four files plus at least one capture file and its index
    for (const [name, bytes] of a) expect(bytes.equals(b.get(name)!), name).toBe(true);
    expect(a.get('messages.ndjson')!.length).toBeGreaterThan(100_000);
  });

  it('another seed gives other readings', async () => {
    const s = await brannock();
    const payloads = (seed: number) => {
      const scn = defaultScenario({ seed, start_ms: START_MS, duration_s: 10 });
      return [...createSimulation(s, scn).scans()].map((x) => x.payload).join('\n');
    };
    expect(payloads(1)).toBe(payloads(1));
    expect(payloads(1)).not.toBe(payloads(2));
  });
});
