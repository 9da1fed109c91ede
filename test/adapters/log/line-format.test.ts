import { describe, expect, it } from 'vitest';
import { formatLogChunk, formatLogLine } from '../../../src/adapters/log/line-format.js';
import { makeLogger } from '../../../src/adapters/log/make-logger.js';

const at = Date.parse('2026-12-02T08:09:12.345Z');

describe('formatLogLine', () => {
  it('an alarm raised is one WARNING line with level, class, subject, value against limit and id', () => {
    const line = formatLogLine({
      level: 40, time: at, pid: 1, hostname: 'h', name: 'strainward', event: 'alarm_raised',
      alarmId: 'deck:vm-high:G3:1', alarmLevel: 'alert', class: 'structural', subject: 'group G3', quantity: 'von_mises_MPa',
      value: 181.23456, limit: 180, units: 'MPa', at: '2026-12-02T08:09:12.000Z',
    });
    // `level` is pino's own field; the alarm's level travels as `alarmLevel`
    expect(line.startsWith('08:09:12.345 WARNING alarm RAISED alert structural: group G3')).toBe(true);
    expect(line).toContain('group G3 von_mises_MPa 181.235 MPa (limit 180 MPa); id deck:vm-high:G3:1');
    expect(line).not.toContain('hostname');
    expect(line).not.toContain('\n');
  });

  it('database lost, spool high water and the intake window name the reason and the setting to change', () => {
    expect(formatLogLine({ level: 40, time: at, event: 'database_unreachable', component: 'database', reason: 'unreachable: ECONNREFUSED; results go to the spool (spool 12.5 % full)' }))
      .toBe('08:09:12.345 WARNING database LOST: unreachable: ECONNREFUSED; results go to the spool (spool 12.5 % full)');
    expect(formatLogLine({ level: 40, time: at, event: 'database_reachable', component: 'database', spoolFillRatio: 0.125 }))
      .toBe('08:09:12.345 WARNING database BACK: results are written again, the spool drains (spool 12.5 % full)');
    // From the live job: with the spool's size in bytes.
    expect(formatLogLine({ level: 40, time: at, event: 'database_unreachable', component: 'database', reason: 'unreachable: ECONNREFUSED; results go to the spool (spool 0.0 KiB, 0.0 % of its limit)', spoolFillRatio: 0, spoolBytes: 0 }))
      .toBe('08:09:12.345 WARNING database LOST: unreachable: ECONNREFUSED; results go to the spool (spool 0.0 KiB, 0.0 % of its limit)');
    expect(formatLogLine({ level: 40, time: at, event: 'database_reachable', component: 'database', spoolFillRatio: 0.125, spoolBytes: 128 * 1024 ** 2 }))
      .toBe('08:09:12.345 WARNING database BACK: results are written again, the spool drains (spool 128.0 MiB, 12.5 % full)');
    expect(formatLogLine({ level: 30, time: at, event: 'spool_high_water', fillRatio: 0.8, limitBytes: 1024 ** 3, diskFreeBytes: 5 * 1024 ** 3 }))
      .toBe('08:09:12.345 INFO    spool 80.0 % full of 1024.0 MiB (disk free 5120.0 MiB): the database is not taking results; raise database.spool.limit_bytes or bring the database back');
  });

  it('dead letters: one refusal, then a count over the interval with the first reason', () => {
    expect(formatLogLine({ level: 40, time: at, event: 'dead_letters', logger: 'LG-02', messages: 1, first_reason: 'not_json: payload is not JSON' }))
      .toBe('08:09:12.345 WARNING message REFUSED from LG-02: not_json: payload is not JSON (kept in the dead-letter file)');
    expect(formatLogLine({ level: 40, time: at, event: 'dead_letters', logger: 'LG-02', messages: 37, over_s: 10, first_reason: 'x' }))
      .toBe('08:09:12.345 WARNING 37 messages REFUSED from LG-02 in 10 s; first: x (kept in the dead-letter file)');
  });

  it('the start line carries the caution, and says when alarms are disabled; synthetic data names its logger', () => {
    expect(formatLogLine({ level: 30, time: at, event: 'started', structure: 'deck', protocolVersion: 5, livePage: null, alarmsDisabled: false, notice: 'Caution text.' }))
      .toBe('08:09:12.345 INFO    started: structure deck. Caution text. protocolVersion=5');
    expect(formatLogLine({ level: 30, time: at, event: 'started', structure: 'deck', alarmsDisabled: true, notice: 'Caution text.' }))
      .toBe('08:09:12.345 INFO    started: structure deck, ALARMS DISABLED. Caution text.');
    expect(formatLogLine({ level: 40, time: at, event: 'synthetic_data', logger: 'lg-1', reason: 'simulated' }))
      .toBe('08:09:12.345 WARNING SYNTHETIC data from logger lg-1: simulated');
  });

  it('an event without words keeps its name and every detail as key=value, strings with spaces quoted', () => {
    expect(formatLogLine({ level: 30, time: at, event: 'something_new', count: 3, note: 'two words', nested: { a: 1 } }))
      .toBe('08:09:12.345 INFO    something_new count=3 note="two words" nested={"a":1}');
  });

  it('a chunk that is not a JSON record passes unchanged; a blank one gives nothing', () => {
    expect(formatLogChunk('plain text')).toBe('plain text');
    expect(formatLogChunk('  ')).toBe('');
  });
});

describe('makeLogger', () => {
  it('readable: a pino warn call becomes one formatted line; json: the pino record itself', async () => {
    const lines: string[] = [];
    const readable = makeLogger({ readable: true, write: (l) => lines.push(l) });
    readable.warn({ event: 'broker_lost', component: 'broker', reason: 'connection to mqtt://127.0.0.1:1883 lost; reconnecting' });
    const json = makeLogger({ readable: false, write: (l) => lines.push(l) });
    json.info({ event: 'broker_back', component: 'broker' });
    await new Promise((r) => setImmediate(r));
    expect(lines).toHaveLength(2);
    expect(lines[0]).toMatch(/^\d\d:\d\d:\d\d\.\d{3} WARNING broker LOST: connection to mqtt:\/\/127\.0\.0\.1:1883 lost; reconnecting\n$/);
    const record = JSON.parse(lines[1]) as Record<string, unknown>;
    expect(record).toMatchObject({ level: 30, event: 'broker_back', component: 'broker', name: 'strainward' });
  });

  it('level warn keeps the warnings and drops the info lines', async () => {
    const lines: string[] = [];
    const log = makeLogger({ readable: false, level: 'warn', write: (l) => lines.push(l) });
    log.info({ event: 'status', frames: 10 });
    log.warn({ event: 'database_unreachable', component: 'database', reason: 'connect ECONNREFUSED' });
    await new Promise((r) => setImmediate(r));
    expect(lines.map((l) => (JSON.parse(l) as { event: string; level: number }))).toMatchObject([{ event: 'database_unreachable', level: 40 }]);
  });

  it('the start line names the live page and the metrics endpoint', () => {
    expect(formatLogLine({ level: 30, time: 0, event: 'started', structure: 'brannock-mere', livePage: 'http://127.0.0.1:8480/', metrics: 'http://127.0.0.1:9464/metrics', protocolVersion: 5 }))
      .toBe('00:00:00.000 INFO    started: structure brannock-mere, live page http://127.0.0.1:8480/, metrics http://127.0.0.1:9464/metrics. protocolVersion=5');
  });
});
