/**
 * The write stage's tally (the metrics endpoint's frames and results written) under both storage
 * policies: a scan whose results all went into summaries is written as much as one stored in full,
 * so it must be counted the same. Two minutes of the invented deck (simulators/), through the live
 * chain's operators: pipeline, storage stage, write stage, into a memory sink.
 */
import { readFile } from 'node:fs/promises';
import { from, lastValueFrom, tap, toArray } from 'rxjs';
import { parse } from 'yaml';
import { describe, expect, it } from 'vitest';
import { MemorySink } from '../../src/adapters/memory-sink.js';
import { WriteTally } from '../../src/app/write-tally.js';
import { compileStructure, type CompiledStructure } from '../../src/config/compile.js';
import { storageOf } from '../../src/config/compile-storage.js';
import { compileTopicPattern } from '../../src/ingest/topic.js';
import { FrameProcessor } from '../../src/pipeline/frame-processor.js';
import { pipeline, type PipelineInput, type PipelineMessage } from '../../src/pipeline/pipeline.js';
import { storageInputs, storageStage } from '../../src/pipeline/storage-stage.js';
import { writeAndAck } from '../../src/pipeline/write-and-ack.js';
import { defaultScenario } from '../../simulators/default-scenario.js';
import { rawMessageOf } from '../../simulators/outputs.js';
import { createSimulation } from '../../simulators/run.js';

const SUMMARY = { default: { results: 'summary', interval_s: 10 }, raw: { store: 'summary' } };

async function structureWith(storage?: unknown): Promise<CompiledStructure> {
  const doc = parse(await readFile('config/brannock-mere.yaml', 'utf8'), { merge: true }) as Record<string, unknown>;
  const r = compileStructure(storage === undefined ? doc : { ...doc, storage });
  if (!r.ok) throw new Error(r.problems.map((p) => `${p.path}: ${p.reason}`).join('\n'));
  return r.structure;
}

async function tallyOf(structure: CompiledStructure) {
  const sim = createSimulation(structure, defaultScenario({ seed: 5, start_ms: Date.UTC(2026, 5, 1, 6), duration_s: 120, day_s: 600 }));
  let acked = 0;
  const inputs: PipelineInput<PipelineMessage>[] = [...sim.scans()].map((s) => ({ kind: 'message', message: { raw: rawMessageOf(s), ack: () => { acked++; } } }));
  const processor = new FrameProcessor<PipelineMessage>(structure);
  const processed$ = from(inputs).pipe(pipeline<PipelineMessage>({
    structure, topicPattern: compileTopicPattern(), deadLetters: { write: async () => {} }, processor: processor as FrameProcessor<unknown>,
  }));
  const tally = new WriteTally();
  const newest = new Map<string, number>();
  const noted$ = processed$.pipe(tap((o) => { if (o.kind === 'frame') newest.set(o.frame.loggerId, Math.max(newest.get(o.frame.loggerId) ?? 0, o.frame.timeMs)); }));
  const outcomes = await lastValueFrom(storageInputs(noted$).pipe(
    storageStage({ storage: storageOf(structure), structureId: structure.structureId, flushOnComplete: true }),
    writeAndAck(new MemorySink()),
    toArray(),
  ));
  for (const o of outcomes) tally.note(o);
  return { tally, processor, newest, acked, messages: inputs.length };
}

describe('frames and results written, per storage policy', () => {
  it('counts every scan and result once, stored in full or summarised', async () => {
    const full = await tallyOf(await structureWith());
    const summarised = await tallyOf(await structureWith(SUMMARY));
    for (const run of [full, summarised]) {
      expect(run.processor.counts.frames).toBeGreaterThan(1000);
      expect(run.tally.frames).toBe(run.processor.counts.frames);
      expect(run.tally.results).toBe(run.processor.counts.results);
      expect(run.acked).toBe(run.messages); // every message acknowledged (the refused ones after their dead letter)
      expect([...run.tally.byLogger.keys()].sort()).toEqual([...run.newest.keys()].sort());
      for (const [logger, w] of run.tally.byLogger) expect(w.newestTimeMs).toBe(run.newest.get(logger));
    }
    // The same scans either way: the policy changes what is stored, not what is counted.
    expect(summarised.tally.frames).toBe(full.tally.frames);
    expect(summarised.tally.results).toBe(full.tally.results);
  });
});
