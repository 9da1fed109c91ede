import { startVictoriaMetrics } from '../test/support/servers.js';
import { benchStructure, scanValueBodies, BENCH_LOGGER } from '../bench/support/bench-structure.js';
import { FrameProcessor } from '../src/pipeline/frame-processor.js';
import { framePoints } from '../src/pipeline/to-points.js';
import { encodeLines } from '../src/adapters/lineproto/encode.js';
import { request, Agent } from 'node:http';

const N = Number(process.env.N ?? 20000);
const CONC = Number(process.env.CONC ?? 1);
const BATCH_FRAMES = Number(process.env.BF ?? 450);
const MODE = process.env.MODE ?? 'full';
const s = benchStructure();
const bodies = scanValueBodies(s, 256);
const proc = new FrameProcessor<null>(s);
const t0 = Date.parse('2026-11-01T00:00:00Z');
const frameLines: string[] = [];
for (let i = 0; i < N; i++) {
  const v = JSON.parse(bodies[i % 256]);
  const frame = { structureId: 'brannock-mere', loggerId: BENCH_LOGGER, timeMs: t0 + i * 10, seq: i, values: new Map(Object.entries(v)) as Map<string, number|null>, arrivalMs: t0 + i * 10 };
  for (const pf of proc.onFrame(frame, null, frame.arrivalMs)) {
    let pts = framePoints(pf);
    if (MODE === 'slim') pts = pts.map((p) => ({ ...p, fields: Object.fromEntries(Object.entries(p.fields).filter(([k]) => !k.startsWith('flag_') && !k.startsWith('el_') && !k.startsWith('strain_') && !k.startsWith('ratio_') && k !== 'good' && k !== 'tresca_MPa' && k !== 'temperature_age_s')) }));
    if (MODE === 'round') pts = pts.map((p) => ({ ...p, fields: Object.fromEntries(Object.entries(p.fields).map(([k, x]) => [k, Math.round(x * 1e6) / 1e6])) }));
    frameLines.push(encodeLines(pts).join('\n'));
  }
}
const samples = frameLines.slice(0, 1).join('\n').split('\n').reduce((a, l) => a + l.split(' ')[1].split(',').length, 0);
const bytes = frameLines[0].length;
console.log(`mode ${MODE}: ${samples} samples/frame, ${bytes} bytes/frame`);
const vm = await startVictoriaMetrics();
const agent = new Agent({ keepAlive: true, maxSockets: 8 });
const post = (body: string) => new Promise<void>((res, rej) => {
  const r = request(`${vm.url}/api/v2/write?org=a&bucket=b&precision=ms`, { method: 'POST', agent, headers: { 'content-type': 'text/plain' } }, (resp) => { resp.resume(); resp.on('end', () => resp.statusCode === 204 ? res() : rej(new Error(String(resp.statusCode)))); });
  r.on('error', rej); r.end(body);
});
const batches: string[] = [];
for (let i = 0; i < N; i += BATCH_FRAMES) batches.push(frameLines.slice(i, i + BATCH_FRAMES).join('\n'));
// warm
await post(batches[0]);
const start = performance.now();

let next = 0;
await Promise.all(Array.from({ length: CONC }, async () => { while (next < batches.length) { const b = batches[next++]; await post(b); } }));
const sec = (performance.now() - start) / 1000;
console.log(`${N} frames in ${sec.toFixed(2)} s: ${(N / sec).toFixed(0)} frames/s, ${(N * samples / sec / 1e6).toFixed(2)} M samples/s, conc ${CONC}`);
await vm.stop();
