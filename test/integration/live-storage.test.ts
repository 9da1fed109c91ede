/**
 * The live job with the summary policy against a real Mosquitto (started here on a free loopback
 * port), results to line-protocol files: stopped in the middle of a summary interval and started
 * again from its storage state file, every interval counts each result exactly once.
 */
import { mkdtemp, readdir, readFile, stat } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt from 'mqtt';
import { parse } from 'yaml';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decodeLines } from '../../src/adapters/lineproto/decode.js';
import { startLive } from '../../src/app/live.js';
import { replay } from '../../src/app/replay.js';
import { compileStructure, type CompiledStructure } from '../../src/config/compile.js';
import { parseRuntimeConfig } from '../../src/config/load-runtime.js';
import { lineBlockText, type LineBlock, type Point } from '../../src/model/point.js';
import { defaultScenario } from '../../simulators/default-scenario.js';
import { createSimulation } from '../../simulators/run.js';
import { startMosquitto } from '../support/servers.js';

const INTERVAL_MS = 2000;

const until = async (what: () => boolean, ms: number): Promise<boolean> => {
  const deadline = Date.now() + ms;
  while (Date.now() < deadline) {
    if (what()) return true;
    await new Promise((r) => setTimeout(r, 50));
  }
  return what();
};

describe('live job with summaries, stopped and started again', () => {
  let broker: Awaited<ReturnType<typeof startMosquitto>>;
  let structure: CompiledStructure;
  beforeAll(async () => {
    broker = await startMosquitto();
    const doc = parse(await readFile('config/brannock-mere.yaml', 'utf8'), { merge: true }) as Record<string, unknown>;
    // close_after_s long: the first run waits for its last frames' temperature (up to 6 s) before it is stopped, and the loggers must not count as silent meanwhile.
    const r = compileStructure({ ...doc, storage: { default: { results: 'summary', interval_s: INTERVAL_MS / 1000 }, raw: { store: 'summary' }, close_after_s: 120 } });
    if (!r.ok) throw new Error(r.problems.map((p) => p.reason).join('\n'));
    structure = r.structure;
  });
  afterAll(async () => { await broker?.stop(); });

  it('writes each interval once with every result in it, the one open at the stop completed after the start', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'sw-live-storage-'));
    const rc = parseRuntimeConfig({
      schema_version: 1, structure: 'unused', mqtt: { url: broker.url, client_id: 'test-live-storage' },
      line_protocol: { dir: join(dir, 'lp') }, dead_letters: { file: join(dir, 'dl.ndjson') },
      alarms: { state_file: join(dir, 'alarm-state.json'), log_file: join(dir, 'alarms.ndjson') },
      storage_state_file: join(dir, 'storage-state.json'), tick_ms: 200,
    }, 'test');
    // Ten seconds of the invented deck, dated in the past so no scan is ahead of its arrival.
    const start = Math.floor((Date.now() - 60_000) / INTERVAL_MS) * INTERVAL_MS;
    const scans = [...createSimulation(structure, defaultScenario({ seed: 3, start_ms: start, duration_s: 10, day_s: 600, faults: [] })).scans()];
    // The stop falls in the middle of an interval of logger time.
    const cut = scans.findIndex((s) => s.loggerMs >= start + 2 * INTERVAL_MS + INTERVAL_MS / 2);
    const pub = await mqtt.connectAsync(broker.url, { clientId: 'test-live-storage-loggers' });
    const publish = async (from: number, to: number) => { for (const s of scans.slice(from, to)) await pub.publishAsync(s.topic, s.payload, { qos: 1 }); };

    const runOnce = async (from: number, to: number) => {
      const live = await startLive({ runtime: rc, structure, baseDir: dir }, { now: Date.now, log: () => {} });
      await publish(from, to);
      const accepted = () => (live.status().decode as { accepted: number }).accepted;
      expect(await until(() => accepted() === to - from && live.connection.stats().heldAcks === 0, 20_000)).toBe(true);
      await live.stop();
      return live.status().storage as { lateResults: number; checkpoints: number };
    };
    const first = await runOnce(0, cut);
    expect(first.checkpoints).toBeGreaterThan(0);
    expect((await stat(join(dir, 'storage-state.json'))).mode & 0o777).toBe(0o600);
    const second = await runOnce(cut, scans.length);
    await pub.endAsync();
    expect(first.lateResults + second.lateResults).toBe(0);

    const files = (await readdir(join(dir, 'lp'))).sort();
    const lines = (await Promise.all(files.map((f) => readFile(join(dir, 'lp', f), 'utf8')))).join('\n');
    const summaries = decodeLines(lines.split('\n').filter((l) => l.startsWith('sw_summary')).join('\n'));
    // The reference: the same scans replayed with every result written.
    const full = compileStructure({ ...structure.config, storage: undefined });
    if (!full.ok) throw new Error('reference structure');
    const blocks: string[] = [];
    await replay({
      structure: full.structure, messages: (async function* () { for (const s of scans) yield { topic: s.topic, payload: new TextEncoder().encode(s.payload), arrivalMs: s.arrivalMs }; })(),
      sink: { write: async () => {}, writeLines: async (b: LineBlock) => { blocks.push(lineBlockText(b)); }, close: async () => {} },
      deadLetters: { write: async () => {} }, runTag: 'ref', tickMs: 200, speed: 0, sleep: async () => {},
    });
    const results: Point[] = decodeLines(blocks.join('\n').split('\n').filter((l) => l.startsWith('sw_result')).join('\n'));
    const perInterval = new Map<string, number>();
    for (const p of results) {
      const k = `${p.tags.group}@${Math.floor(p.timeMs / INTERVAL_MS) * INTERVAL_MS}`;
      perInterval.set(k, (perInterval.get(k) ?? 0) + 1);
    }
    // The intervals closed by later data (the last one stays open in the state file for the next start).
    const closed = [...perInterval.keys()].filter((k) => Number(k.split('@')[1]) + INTERVAL_MS <= start + 8000);
    const written = new Map(summaries.map((s) => [`${s.tags.group}@${s.timeMs}`, s.fields.results_trusted + s.fields.results_flagged]));
    expect(summaries.length).toBe(written.size); // no interval written twice
    expect(closed.length).toBeGreaterThan(15);
    for (const k of closed) expect(written.get(k), k).toBe(perInterval.get(k));
    const restartInterval = `web-north-pier@${start + 2 * INTERVAL_MS}`;
    expect(written.get(restartInterval)).toBe(perInterval.get(restartInterval));
  }, 120_000);
});
