/** The rezero files (no servers): overrides restored at start, an unreadable one kept aside and rebuilt from the audit, a torn audit line skipped. */
import { mkdtemp, readdir, readFile, rm, stat, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { appendAudit, readAuditRecords, readZeroOverrides, writeZeroOverrides } from '../../src/app/rezero-files.js';
import { loadRezeroStart } from '../../src/app/rezero-wiring.js';
import type { LoadedRuntime } from '../../src/config/load-runtime.js';
import { parseRuntimeConfig } from '../../src/config/load-runtime.js';
import type { RezeroRecord } from '../../src/rezero/schema.js';
import { baseDoc, compileOrThrow, microGauge } from '../support/structures.js';

let dir = '';
beforeEach(async () => { dir = await mkdtemp(join(tmpdir(), 'sw-rezero-files-')); });
afterEach(async () => { await rm(dir, { recursive: true, force: true }); });

const record = (group: string, newZero: number, atMs: number): RezeroRecord => ({
  id: `${group}@${new Date(atMs).toISOString()}`, structure: 'test-structure', group_id: group, user: 'eng-1', reason: 'new gauge',
  at: new Date(atMs).toISOString(), at_ms: atMs, readings_time: new Date(atMs - 100).toISOString(), readings_time_ms: atMs - 100,
  elements: [{ gauge: group === 'one' ? 'g' : 'h', channel: 'lg/c1', unit: 'microstrain', old_zero: 0, new_zero: newZero }], companion: null,
  zero_temperature_degC: { old: 20, new: 20 },
});

function loaded(): LoadedRuntime {
  const structure = compileOrThrow(baseDoc(
    [{ id: 'one', kind: 'single', material: 'steel', zone: 'z', location: 'bench', elements: [{ gauge: 'g' }] }],
    [microGauge('g', 'c1')], { rezero: { allowed: [{ user: 'eng-1', groups: ['one'] }] } },
  ));
  const runtime = parseRuntimeConfig({ schema_version: 1, structure: 's.json', mqtt: { url: 'mqtt://127.0.0.1:1', client_id: 'x' }, rezero: { overrides_file: 'o.json', audit_file: 'a.ndjson' } }, 'r.json');
  return { runtime, structure, baseDir: dir };
}

describe('rezero files', () => {
  it('the overrides file round-trips, owner-only; the audit keeps every accepted rezero in order and skips a torn line', async () => {
    await writeZeroOverrides(join(dir, 'o.json'), 'test-structure', [record('one', 120, 1000)], 5000);
    expect(await readZeroOverrides(join(dir, 'o.json'))).toEqual([record('one', 120, 1000)]);
    expect((await stat(join(dir, 'o.json'))).mode & 0o777).toBe(0o600);
    await appendAudit(join(dir, 'a.ndjson'), { type: 'rezero', record: record('one', 120, 1000) });
    await appendAudit(join(dir, 'a.ndjson'), { type: 'refusal', refusal: { code: 'user_not_allowed', reason: 'no', user: 'x', groupId: 'one', requestId: null, atMs: 1500 } });
    await appendAudit(join(dir, 'a.ndjson'), { type: 'rezero', record: record('one', 130, 2000) });
    await writeFile(join(dir, 'a.ndjson'), `${await readFile(join(dir, 'a.ndjson'), 'utf8')}{"type":"rezero","rec`);
    const audit = await readAuditRecords(join(dir, 'a.ndjson'));
    expect(audit.records.map((r) => r.elements[0].new_zero)).toEqual([120, 130]);
    expect(audit.unreadable).toBe(1);
    expect((await stat(join(dir, 'a.ndjson'))).mode & 0o777).toBe(0o600);
  });

  it('no files: nothing to restore', async () => {
    expect((await loadRezeroStart(loaded(), () => 0, () => {}))?.restored).toEqual([]);
  });

  it('an unreadable overrides file does not stop the start: kept aside, rebuilt from the audit\'s latest record per group, and said', async () => {
    await writeFile(join(dir, 'o.json'), '{"version": 1, "structure": "test-stru');
    await appendAudit(join(dir, 'a.ndjson'), { type: 'rezero', record: record('one', 120, 1000) });
    await appendAudit(join(dir, 'a.ndjson'), { type: 'rezero', record: record('one', 130, 2000) });
    const warnings: string[] = [];
    const start = await loadRezeroStart(loaded(), () => Date.UTC(2026, 0, 2, 3, 4, 5), (event) => { warnings.push(event); });
    expect(start?.restored.map((r) => r.elements[0].new_zero)).toEqual([130]);
    expect(warnings).toEqual(['zero_overrides_unreadable']);
    expect((await readdir(dir)).sort()).toEqual(['a.ndjson', 'o.json.unreadable-20260102T030405Z']);
  });
});
