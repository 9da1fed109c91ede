import { benchStructure, scanValueBodies, BENCH_LOGGER } from '../bench/support/bench-structure.js';
import { FrameProcessor } from '../src/pipeline/frame-processor.js';
import { frameLineEncoder } from '../src/pipeline/frame-lines.js';
import { decodeMessage } from '../src/ingest/decode.js';
const s = benchStructure();
const bodies = scanValueBodies(s, 256);
const proc = new FrameProcessor<null>(s);
const t0 = Date.parse('2026-11-01T00:00:00Z');
const N = 50000;
const frames = bodies.map((b, i) => ({ structureId: 'brannock-mere', loggerId: BENCH_LOGGER, timeMs: 0, seq: 0, values: new Map(Object.entries(JSON.parse(b))) as Map<string, number|null>, arrivalMs: 0 }));
function time(name: string, f: (i: number) => void) { const st = performance.now(); for (let i = 0; i < N; i++) f(i); const us = (performance.now() - st) * 1000 / N; console.log(name.padEnd(12), us.toFixed(2), 'us/frame'); }
const pfs: any[] = [];
const enc = frameLineEncoder();
for (let r = 0; r < 3; r++) {
time('process', (i) => { const f = { ...frames[i % 256], timeMs: t0 + i * 10, seq: i, arrivalMs: t0 + i * 10 }; pfs[i] = proc.onFrame(f, null, f.arrivalMs)[0]; });
const blocks: any[] = [];
time('encode', (i) => { blocks[i] = enc(pfs[i]); });
time('join', (i) => { if (i % 450 === 0) blocks.slice(i, i + 450).map((b) => b.text).join('\n'); });
if (r === 2) { console.log(blocks[5].text.length, 'bytes', blocks[5].text.split('\n').reduce((a: number, l: string) => a + l.split(' ')[1].split(',').length, 0), 'fields'); console.log(blocks[5].text.split('\n').slice(0, 1).join('\n')); console.log(blocks[5].text.split('\n').pop()); }
}
