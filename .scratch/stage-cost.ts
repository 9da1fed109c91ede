import { benchStructure, scanValueBodies, BENCH_LOGGER } from '../bench/support/bench-structure.js';
import { FrameProcessor } from '../src/pipeline/frame-processor.js';
import { framePoints } from '../src/pipeline/to-points.js';
import { encodeLines } from '../src/adapters/lineproto/encode.js';
import { gzipSync } from 'node:zlib';
const s = benchStructure();
const bodies = scanValueBodies(s, 256);
const proc = new FrameProcessor<null>(s);
const t0 = Date.parse('2026-11-01T00:00:00Z');
const N = 20000;
const frames = bodies.map((b, i) => ({ structureId: 'brannock-mere', loggerId: BENCH_LOGGER, timeMs: 0, seq: 0, values: new Map(Object.entries(JSON.parse(b))) as Map<string, number|null>, arrivalMs: 0 }));
function time(name: string, f: (i: number) => void) { const st = performance.now(); for (let i = 0; i < N; i++) f(i); const us = (performance.now() - st) * 1000 / N; console.log(name.padEnd(12), us.toFixed(1), 'us/frame'); }
const pfs: any[] = [];
for (let r = 0; r < 2; r++) {
time('process', (i) => { const f = { ...frames[i % 256], timeMs: t0 + i * 10, seq: i, arrivalMs: t0 + i * 10 }; pfs[i] = proc.onFrame(f, null, f.arrivalMs)[0]; });
const pts: any[] = [];
time('toPoints', (i) => { pts[i] = framePoints(pfs[i]); });
const lines: string[][] = [];
time('encode', (i) => { lines[i] = encodeLines(pts[i]); });
let body = '';
time('join', (i) => { if (i % 450 === 0) body = lines.slice(i, i + 450).flat().join('\n'); });
time('gzip', (i) => { if (i % 450 === 0) gzipSync(lines.slice(i, i + 450).flat().join('\n')); });
}
