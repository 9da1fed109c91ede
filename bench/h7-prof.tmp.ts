import { from, lastValueFrom } from 'rxjs';
import { benchStructure, BENCH_LOGGER, BENCH_SUMMARY_STORAGE, scanValueBodies } from './support/bench-structure.js';
import { pipeline, type PipelineInput, type PipelineMessage } from '../src/pipeline/pipeline.js';
import { compileTopicPattern } from '../src/ingest/topic.js';
import { storageInputs, storageStage } from '../src/pipeline/storage-stage.js';
import { writeAndAck } from '../src/pipeline/write-and-ack.js';
import { storageOf } from '../src/config/compile-storage.js';

const policy = process.argv[2] ?? 'full';
const N = Number(process.argv[3] ?? 60000);
const structure = policy === 'full' ? benchStructure() : benchStructure(BENCH_SUMMARY_STORAGE);
const bodies = scanValueBodies(structure, 256);
const enc = new TextEncoder();
const t0 = Date.now();
const inputs: PipelineInput<PipelineMessage>[] = [];
for (let i = 0; i < N; i++) {
  const ts = t0 + i;
  inputs.push({ kind: 'message', message: { raw: { topic: `strainward/brannock-mere/${BENCH_LOGGER}/scan`, payload: enc.encode(`{"ts":${ts},"seq":${i},"values":${bodies[i % 256]}}`), arrivalMs: ts }, ack() {} } });
  if (i % 1000 === 999) inputs.push({ kind: 'tick', nowMs: ts });
}
let lines = 0;
const sink = { writeLines: async (b: { lines: number }) => { lines += b.lines; } };
const run = async () => {
  const processed$ = from(inputs).pipe(pipeline<PipelineMessage>({ structure, topicPattern: compileTopicPattern(undefined), deadLetters: { write: async () => {} } }));
  await lastValueFrom(storageInputs(processed$).pipe(storageStage({ storage: storageOf(structure), structureId: structure.structureId, flushOnComplete: true, persist: policy === 'full' ? undefined : async () => {} }), writeAndAck(sink as never)), { defaultValue: null });
};
await run(); // warm
const c0 = process.cpuUsage(); const w0 = performance.now();
await run();
const c = process.cpuUsage(c0);
console.log(policy, 'cpu us/frame', ((c.user + c.system) / N).toFixed(1), 'wall us/frame', ((performance.now() - w0) * 1000 / N).toFixed(1), 'lines', lines);
