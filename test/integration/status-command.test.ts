/**
 * `strainward status` against a real Mosquitto (started here on a free loopback port): exit 0 while
 * the live job heartbeats, exit 4 when no processor has a status, and when it has stopped.
 */
import { mkdtemp } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { startLive } from '../../src/app/live.js';
import { loadRuntimeFile } from '../../src/config/load-runtime.js';
import { main } from '../../src/cli/main.js';
import { startMosquitto } from '../support/servers.js';
import { filesUnder, writeRuntimeFile } from '../support/runtime-file.js';

/** Runs the command, returning its exit code and what it printed on stdout and stderr. */
async function status(runtime: string): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const o = vi.spyOn(process.stdout, 'write').mockImplementation((c) => { out += String(c); return true; });
  const e = vi.spyOn(process.stderr, 'write').mockImplementation((c) => { err += String(c); return true; });
  try {
    const code = await main(['node', 'strainward', 'status', '-c', runtime, '--wait-ms', '400']);
    return { code, out, err };
  } finally {
    o.mockRestore();
    e.mockRestore();
  }
}

describe('strainward status', () => {
  let broker: Awaited<ReturnType<typeof startMosquitto>>;
  beforeAll(async () => { broker = await startMosquitto(); });
  afterAll(async () => { await broker?.stop(); });

  it('fails with exit 4 while no processor has said anything', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'sw-status-'));
    const r = await status(await writeRuntimeFile(dir, broker.url, 'test-status-none'));
    expect(r.code).toBe(4);
    expect(r.out).toContain('no processor status on strainward/brannock-mere/processor/+');
    expect(r.err).toContain('nothing may be computing');
  });

  it('passes while the live job heartbeats, and fails with exit 4 once it has stopped', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'sw-status-'));
    const runtime = await writeRuntimeFile(dir, broker.url, 'test-status-live', [
      'presence: { every_s: 0.2 }',
      ...filesUnder(dir),
    ]);
    const live = await startLive(await loadRuntimeFile(runtime), { now: Date.now, log: () => {} });
    let ok: Awaited<ReturnType<typeof status>>;
    try {
      ok = await status(runtime);
    } finally {
      await live.stop();
    }
    expect(ok.code).toBe(0);
    expect(ok.out).toMatch(/^test-status-live {2}online {2}\d+\.\d s ago\n/m);
    const after = await status(runtime);
    expect(after.code).toBe(4);
    expect(after.out).toMatch(/test-status-live {2}stopped .*NOT HEALTHY: stopped/);
  });
});
