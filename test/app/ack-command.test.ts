/** `strainward ack` refusals that need no broker: bad options, no alarms section, nothing listening (a free loopback port). */
import { mkdtemp, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it, vi } from 'vitest';
import { EXIT } from '../../src/cli/errors.js';
import { freePort } from '../support/servers.js';
import { baseDoc, microGauge } from '../support/structures.js';
import { runCli } from '../support/cli-in-process.js';

const run = (args: string[]) => runCli(['ack', ...args]);

async function files(alarms: unknown): Promise<string> {
  const dir = await mkdtemp(join(tmpdir(), 'sw-ack-cli-'));
  const group = { id: 'r1', kind: 'single', material: 'steel', zone: 'deck', location: 'test beam', elements: [{ gauge: 'g1' }] };
  await writeFile(join(dir, 'structure.json'), JSON.stringify(baseDoc([group], [microGauge('g1', 'ch1')], alarms === undefined ? {} : { alarms })));
  const port = await freePort(); // nothing listens there
  await writeFile(join(dir, 'runtime.json'), JSON.stringify({ schema_version: 1, structure: 'structure.json', mqtt: { url: `mqtt://127.0.0.1:${port}`, client_id: 'sw' } }));
  return join(dir, 'runtime.json');
}
const ALARMS = { levels: ['advisory'], health: { level: 'advisory' }, acknowledgement: { allowed_users: { structural: ['eng-1'] } } };

describe('strainward ack', () => {
  it('refuses an empty user or reason as bad usage, naming the option', async () => {
    const r = await run(['--config', 'x.json', '--alarm', 'a:1', '--user', '', '--reason', '']);
    expect(r.code).toBe(EXIT.usage);
    expect(r.err).toContain('--user: must not be empty');
    expect(r.err).toContain('--reason: must not be empty');
  });

  it('refuses a structure without an alarms section as a configuration error', async () => {
    const r = await run(['--config', await files(undefined), '--alarm', 'a:1', '--user', 'eng-1', '--reason', 'seen']);
    expect(r.code).toBe(EXIT.config);
    expect(r.err).toContain('alarms: the structure file has no alarms section');
  });

  it('fails at run time, naming the broker, when nothing listens', async () => {
    const r = await run(['--config', await files(ALARMS), '--alarm', 'a:1', '--user', 'eng-1', '--reason', 'seen', '--timeout-ms', '3000']);
    expect(r.code).toBe(EXIT.runtime);
    expect(r.err).toMatch(/cannot connect to mqtt:\/\/127\.0\.0\.1:\d+/);
  });
});
