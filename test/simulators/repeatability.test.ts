import { mkdtemp, readdir, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { defaultScenario } from '../../simulators/default-scenario.js';
import { captureSink, messagesFileSink, runSimulation, runSimulations, type ScanSink } from '../../simulators/outputs.js';
import type { SimScan } from '../../simulators/run.js';
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

describe('several structures in one run', () => {
  it('merges their scans in arrival order, each structure exactly as it runs alone, with its truth in its own folder', async () => {
    const s = await brannock();
    const copy = { ...s, structureId: 'brannock-copy' };
    const scnA = defaultScenario({ seed: 1, start_ms: START_MS, duration_s: 5, day_s: 60 });
    const scnB = defaultScenario({ seed: 2, start_ms: START_MS, duration_s: 5, day_s: 60 });
    const dir = await mkdtemp(join(tmpdir(), 'sw-sim-'));
    dirs.push(dir);
    const sent: SimScan[] = [];
    const memory: ScanSink = { send: async (scan) => { sent.push(scan); }, close: async () => {} };
    let t = 0;
    const summary = await runSimulations([
      { sim: createSimulation(s, scnA), scn: scnA, outDir: join(dir, 'a') },
      { sim: createSimulation(copy, scnB), scn: scnB, outDir: join(dir, 'b') },
    ], { outDir: dir, sinks: [memory], speed: 0, now: () => t++, sleep: async () => {} });
    const alone = (structure: typeof s, scn: typeof scnA) => [...createSimulation(structure, scn).scans()].map((x) => x.payload);
    expect(sent.filter((x) => x.structureId === s.structureId).map((x) => x.payload)).toEqual(alone(s, scnA));
    expect(sent.filter((x) => x.structureId === 'brannock-copy').map((x) => x.payload)).toEqual(alone(copy, scnB));
    expect(sent.filter((x) => x.structureId === 'brannock-copy').every((x) => x.topic.startsWith('strainward/brannock-copy/'))).toBe(true);
    expect(summary.scans).toBe(sent.length);
    for (let i = 1; i < sent.length; i++) expect(sent[i].arrivalMs).toBeGreaterThanOrEqual(sent[i - 1].arrivalMs);
    const truthLines = async (d: string) => (await readFile(join(dir, d, 'truth.ndjson'), 'utf8')).split('\n').filter((l) => l !== '').length;
    expect((await truthLines('a')) + (await truthLines('b'))).toBe(summary.truthLines);
  });
});
