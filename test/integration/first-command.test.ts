/**
 * The README's first command, `npm ci && npm start`, as a new user runs it: in a clean clone of
 * this repository (what is committed, nothing else; the installed node_modules linked in for the
 * `npm ci` part), with a timeout. Starts the embedded broker, the simulator and the live job of the
 * demo on free loopback ports (STRAINWARD_DEMO_MQTT_PORT / STRAINWARD_DEMO_PAGE_PORT = 0).
 */
import { execFileSync } from 'node:child_process';
import { mkdtemp, readdir, readFile, symlink } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { startDemo, type DemoProcess } from '../support/demo-process.js';

describe('README first command', () => {
  let demo: DemoProcess | undefined;
  afterAll(async () => { await demo?.interrupt(); }, 60_000);

  it('prints the page address and where the files go, and writes results within 60 s; stops cleanly on an interrupt', async () => {
    const readme = await readFile('README.md', 'utf8');
    expect(readme).toMatch(/```sh\nnpm ci && npm start\n```/);
    const dir = await mkdtemp(join(tmpdir(), 'sw-first-'));
    const clone = join(dir, 'strainward');
    execFileSync('git', ['clone', '--quiet', '--local', '--no-hardlinks', resolve('.'), clone]);
    await symlink(resolve('node_modules'), join(clone, 'node_modules'));
    const started = Date.now();
    demo = startDemo(clone, [], { STRAINWARD_DEMO_MQTT_PORT: '0', STRAINWARD_DEMO_PAGE_PORT: '0' });
    const page = await demo.waitFor(/live page\s+(http:\/\/127\.0\.0\.1:\d+\/)/, 30_000);
    await demo.waitFor(/Ctrl-C stops everything/, 5_000); // the last line of the start-up block
    expect(demo.output()).toMatch(/results\s+var\/lp\/ \(line protocol\)/);
    expect(demo.output()).toMatch(/alarm log\s+var\/alarms\.ndjson/);
    expect(demo.output()).toContain('does not replace qualified engineering judgement');
    expect(demo.output()).toContain('Missing data is itself an alarm');
    expect((await fetch(page[1])).status).toBe(200);

    // Result lines in the line-protocol files, within 60 s of the command.
    let lines = 0;
    while (Date.now() - started < 60_000) {
      const files = await readdir(join(clone, 'var', 'lp')).catch(() => [] as string[]);
      lines = 0;
      for (const f of files) lines += (await readFile(join(clone, 'var', 'lp', f), 'utf8')).split('\n').filter((l) => l.startsWith('sw_result,')).length;
      if (lines > 50) break;
      await new Promise((r) => setTimeout(r, 500));
    }
    expect(lines).toBeGreaterThan(50);
    expect(Date.now() - started).toBeLessThan(60_000);

    await demo.interrupt();
    const stopped = await demo.waitFor(/stopped: (\d+) scans and (\d+) results processed; (\d+) messages left unacknowledged/, 5_000);
    expect(Number(stopped[3])).toBe(0);
    demo = undefined;
  }, 120_000);
});
