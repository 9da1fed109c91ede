/** `strainward replay` of a capture with one corrupted byte: the rest is replayed, the gap reported, exit 6 unless accepted. */
import { mkdtemp, readdir, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { readCaptureIndex } from '../../src/adapters/capture/capture-index.js';
import { readGzipMembers } from '../../src/adapters/capture/gzip-members.js';
import { decodeLines } from '../../src/adapters/lineproto/decode.js';
import { main } from '../../src/cli/main.js';
import { EXIT } from '../../src/cli/errors.js';
import { loadStructureFile } from '../../src/config/load.js';
import { defaultScenario } from '../../simulators/default-scenario.js';
import { captureSink } from '../../simulators/outputs.js';
import { createSimulation } from '../../simulators/run.js';

async function run(args: string[]): Promise<{ code: number; stderr: string }> {
  let stderr = '';
  const e = vi.spyOn(process.stderr, 'write').mockImplementation((chunk) => { stderr += String(chunk); return true; });
  try { return { code: await main(['node', 'strainward', ...args]), stderr }; } finally { e.mockRestore(); }
}

describe('strainward replay of a damaged capture', () => {
  let dir: string;
  let total = 0;
  let member: { fromByte: number; toByte: number; first: number; last: number };
  beforeAll(async () => {
    dir = await mkdtemp(join(tmpdir(), 'sw-replay-gaps-'));
    const structure = await loadStructureFile('config/brannock-mere.yaml');
    const scn = defaultScenario({ seed: 11, start_ms: Date.UTC(2026, 5, 1, 6), duration_s: 120, day_s: 600, faults: [], noise: false });
    const sink = await captureSink(join(dir, 'capture')); // written by the capture writer, 500 scans a member
    for (const scan of createSimulation(structure, scn).scans()) await sink.send(scan);
    await sink.close();
    total = (await readCaptureIndex(join(dir, 'capture'))).files.reduce((n, f) => n + f.count, 0);
    // One corrupted byte in the third member.
    const [name] = (await readdir(join(dir, 'capture'))).filter((n) => n.endsWith('.gz'));
    const path = join(dir, 'capture', name);
    const bytes = await readFile(path);
    const third = [...readGzipMembers(bytes)][2];
    if (third.kind !== 'intact' || third.figures === null) throw new Error('expected an intact third member with figures');
    member = { fromByte: third.fromByte, toByte: third.toByte, first: third.figures.firstArrivalMs, last: third.figures.lastArrivalMs };
    bytes[third.fromByte + Math.floor((third.toByte - third.fromByte) / 2)] ^= 0x20;
    await writeFile(path, bytes);
  });
  afterAll(async () => { await rm(dir, { recursive: true, force: true }); });

  it('replays every other member, reports the gap with its count and time range in the output and the report, exits 6', async () => {
    expect(total).toBeGreaterThan(1500); // more than three members
    const out = join(dir, 'out');
    const report = join(dir, 'report.html');
    const { code, stderr } = await run(['replay', '--capture', join(dir, 'capture'), '-s', 'config/brannock-mere.yaml', '--out', out, '--report', report]);
    expect(code).toBe(EXIT.gaps);
    expect(EXIT.gaps).toBe(6);
    const [from, to] = [new Date(member.first).toISOString(), new Date(member.last).toISOString()];
    expect(stderr).toContain(`capture gap: 500 messages lost between ${from} and ${to}`);
    expect(stderr).toContain(`damaged gzip member at bytes ${member.fromByte}..${member.toByte}`);
    expect(stderr).toContain(`replayed ${total - 500} messages`);
    expect(stderr).toContain('1 capture gap, 500 messages lost');
    expect(stderr).toContain('--accept-gaps');
    // The output is written all the same: one sw_raw line per replayed scan.
    const files = (await readdir(out)).filter((f) => f.endsWith('.lp'));
    const points = decodeLines((await Promise.all(files.map((f) => readFile(join(out, f), 'utf8')))).join(''));
    expect(points.filter((p) => p.measurement === 'sw_raw')).toHaveLength(total - 500);
    const html = await readFile(report, 'utf8');
    expect(html).toContain('The capture has 1 gap: 500 messages lost.');
    expect(html).toContain(`<td class="n">500</td>`);
  });

  it('with --accept-gaps: the same replay and the same gap report, exit 0', async () => {
    const { code, stderr } = await run(['replay', '--capture', join(dir, 'capture'), '-s', 'config/brannock-mere.yaml', '--out', join(dir, 'out2'), '--accept-gaps']);
    expect(code).toBe(0);
    expect(stderr).toContain('capture gap: 500 messages lost');
    expect(stderr).toContain(`replayed ${total - 500} messages`);
  });
});
