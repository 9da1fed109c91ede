/** `strainward rezero` refusals that need no broker: bad options, no rezero section, an unknown group, nothing listening (a free loopback port). */
import { mkdtemp, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it, vi } from 'vitest';
import { EXIT } from '../../src/cli/errors.js';
import { freePort } from '../support/servers.js';
import { baseDoc, microGauge } from '../support/structures.js';
import { runCli } from '../support/cli-in-process.js';

const run = (args: string[]) => runCli(['rezero', ...args]);

async function files(rezero: unknown): Promise<string> {
  const dir = await mkdtemp(join(tmpdir(), 'sw-rezero-cli-'));
  const group = { id: 'r1', kind: 'single', material: 'steel', zone: 'deck', location: 'test beam', elements: [{ gauge: 'g1' }] };
  await writeFile(join(dir, 'structure.json'), JSON.stringify(baseDoc([group], [microGauge('g1', 'ch1')], rezero === undefined ? {} : { rezero })));
  const port = await freePort(); // nothing listens there
  await writeFile(join(dir, 'runtime.json'), JSON.stringify({ schema_version: 1, structure: 'structure.json', mqtt: { url: `mqtt://127.0.0.1:${port}`, client_id: 'sw' } }));
  return join(dir, 'runtime.json');
}
const REZERO = { allowed: [{ user: 'eng-1', groups: ['r1'] }] };

describe('strainward rezero', () => {
  it('refuses an empty reason or a user that cannot be a topic level as bad usage, naming the option', async () => {
    const r = await run(['--config', 'x.json', '--group', 'r1', '--user', 'eng/1', '--reason', '']);
    expect(r.code).toBe(EXIT.usage);
    expect(r.err).toContain('--user: letters, digits, ".", "_" and "-" only');
    expect(r.err).toContain('--reason: must not be empty');
  });

  it('refuses a structure without a rezero section as a configuration error, and an unknown group as bad usage', async () => {
    const none = await run(['--config', await files(undefined), '--group', 'r1', '--user', 'eng-1', '--reason', 'new gauge']);
    expect(none.code).toBe(EXIT.config);
    expect(none.err).toContain('rezero: the structure file has no rezero section');
    const unknown = await run(['--config', await files(REZERO), '--group', 'r2', '--user', 'eng-1', '--reason', 'new gauge']);
    expect(unknown.code).toBe(EXIT.usage);
    expect(unknown.err).toContain('--group: no group "r2" in test-structure (groups: r1)');
  });

  it('fails at run time, naming the broker, when nothing listens', async () => {
    const r = await run(['--config', await files(REZERO), '--group', 'r1', '--user', 'eng-1', '--reason', 'new gauge', '--timeout-ms', '3000']);
    expect(r.code).toBe(EXIT.runtime);
    expect(r.err).toMatch(/cannot connect to mqtt:\/\/127\.0\.0\.1:\d+/);
  });
});
