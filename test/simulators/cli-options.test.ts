import { describe, expect, it } from 'vitest';
import { CliOptionsSchema } from '../../simulators/cli-options.js';

const good = {
  config: 'config/brannock-mere.yaml', seed: '4', start: '2025-06-01T06:00:00Z', durationS: '600', dayS: '600', rateFactor: '1',
  speed: '0', faults: 'debond,silent', noise: true, messages: false, out: 'var/x', broker: 'mqtt://127.0.0.1:1883',
};

describe('simulator CLI options', () => {
  it('converts good options', () => {
    const o = CliOptionsSchema.parse(good);
    expect(o.seed).toBe(4);
    expect(o.start).toBe(Date.UTC(2025, 5, 1, 6));
    expect(o.faults).toEqual(['debond', 'silent']);
    expect(CliOptionsSchema.parse({ ...good, faults: 'all' }).faults).toHaveLength(6);
    expect(CliOptionsSchema.parse({ ...good, faults: 'none' }).faults).toEqual([]);
    const now = CliOptionsSchema.parse({ ...good, start: 'now' }).start;
    expect(now % 1000).toBe(0);
    expect(Math.abs(now - Date.now())).toBeLessThan(2000);
  });

  it('names the field and the reason for bad ones', () => {
    const r = CliOptionsSchema.safeParse({ ...good, seed: '1.5', start: 'yesterday', faults: 'debond,flood', broker: 'http://x', durationS: '-3' });
    expect(r.success).toBe(false);
    const paths = r.error!.issues.map((i) => String(i.path[0])).sort();
    expect(paths).toEqual(['broker', 'durationS', 'faults', 'seed', 'start']);
    expect(r.error!.issues.find((i) => i.path[0] === 'faults')!.message).toContain('unknown fault "flood"');
  });
});

describe('simulator: a broker beyond this machine only when asked for', () => {
  const brokerIssue = (broker: string, allowRemoteBroker = false) => {
    const r = CliOptionsSchema.safeParse({ ...good, broker, allowRemoteBroker });
    return r.success ? null : r.error.issues.map((i) => `${String(i.path[0])}: ${i.message}`).join('; ');
  };

  it('takes loopback brokers (127.0.0.0/8, ::1, localhost) without the option', () => {
    for (const url of ['mqtt://127.0.0.1:1883', 'mqtt://127.8.9.10:1', 'mqtts://localhost:8883', 'mqtt://[::1]:1883', 'ws://127.0.0.1:8080/mqtt']) {
      expect(brokerIssue(url), url).toBeNull();
    }
  });

  it('refuses any other broker, naming the option that allows it, and takes it with --allow-remote-broker', () => {
    for (const url of ['mqtt://10.0.0.5:1883', 'mqtt://0.0.0.0:1883', 'mqtt://broker.example.org', 'mqtt://[::ffff:7f00:1]:1883', 'mqtt://127.0.0.1.example.org']) {
      expect(brokerIssue(url), url).toBe(`broker: ${url} is not on this machine (loopback): simulated readings there could fake or hide a real structure's alarms; `
        + 'use a broker on 127.0.0.1, or give --allow-remote-broker if this broker serves no real structure');
      expect(brokerIssue(url, true), url).toBeNull();
    }
  });
});

describe('simulator: several structures, the nodes of a clustered broker, what the broker confirmed', () => {
  it('takes one --config or several, and a comma list of broker nodes, each of them on loopback', () => {
    expect(CliOptionsSchema.parse(good).config).toEqual(['config/brannock-mere.yaml']);
    expect(CliOptionsSchema.parse({ ...good, config: ['a.yaml', 'b.yaml'] }).config).toEqual(['a.yaml', 'b.yaml']);
    const o = CliOptionsSchema.parse({ ...good, broker: 'mqtt://127.0.0.1:1, mqtt://127.0.0.1:2', connectTimeoutMs: '15000', publishedLog: 'p.ndjson' });
    expect(o.broker).toEqual(['mqtt://127.0.0.1:1', 'mqtt://127.0.0.1:2']);
    expect(o.connectTimeoutMs).toBe(15_000);
    expect(o.clientId).toBe('strainward-simulator');
    const r = CliOptionsSchema.safeParse({ ...good, broker: 'mqtt://127.0.0.1:1,mqtt://10.0.0.5:1883' });
    const issues = r.success ? [] : r.error.issues.map((i) => `${String(i.path[0])}: ${i.message}`);
    expect(issues).toHaveLength(1);
    expect(issues[0]).toMatch(/^broker: mqtt:\/\/10\.0\.0\.5:1883 is not on this machine \(loopback\)/);
  });

  it('refuses a published log without a broker, and a connect timeout under 0.1 s', () => {
    const { broker: _b, ...noBroker } = good;
    const r = CliOptionsSchema.safeParse({ ...noBroker, publishedLog: 'p.ndjson', connectTimeoutMs: '50' });
    expect(r.success ? [] : r.error.issues.map((i) => String(i.path[0])).sort()).toEqual(['connectTimeoutMs', 'publishedLog']);
    expect(r.success ? '' : r.error.issues.find((i) => i.path[0] === 'publishedLog')!.message).toBe('records what a broker confirmed: give --broker too');
  });
});

describe('simulator: when heavy vehicles pass and faults happen', () => {
  it('parses --heavy-at-s and --fault-at, and names what is wrong', () => {
    const o = CliOptionsSchema.parse({ ...good, heavyAtS: '40, 900', faultAt: 'dropout@240-270,silent@480,clock_drift@1200' });
    expect(o.heavyAtS).toEqual([40, 900]);
    expect(o.faultAt).toEqual({ dropout: { start_s: 240, end_s: 270 }, silent: { start_s: 480 }, clock_drift: { start_s: 1200 } });
    expect(CliOptionsSchema.parse({ ...good, heavyAtS: 'none' }).heavyAtS).toEqual([]);
    const bad = CliOptionsSchema.safeParse({ ...good, heavyAtS: '40,soon', faultAt: 'flood@10,dropout@50-20' });
    expect(bad.success).toBe(false);
    const messages = bad.error!.issues.map((i) => `${String(i.path[0])}: ${i.message}`);
    expect(messages).toContain('heavyAtS: "soon" is not a number of seconds (0 or more)');
    expect(messages.some((m) => m.startsWith('faultAt: "flood@10": expected kind@start_s[-end_s]'))).toBe(true);
    expect(messages).toContain('faultAt: "dropout@50-20": the end must come after the start');
  });

  it('places the scenario\'s heavy vehicles and faults at the given times, and says so at the start and as they happen', async () => {
    const { defaultScenario } = await import('../../simulators/default-scenario.js');
    const { createSimulation } = await import('../../simulators/run.js');
    const { describeRun, episodeSink, episodesOf } = await import('../../simulators/announce.js');
    const { loadStructureFile } = await import('../../src/config/load.js');
    const start = Date.UTC(2026, 0, 1, 10);
    const scn = defaultScenario({
      seed: 1, start_ms: start, duration_s: 20, day_s: 600, faults: ['dropout', 'silent', 'debond'], heavy_at_s: [5],
      fault_times: { dropout: { start_s: 2, end_s: 4 }, silent: { start_s: 8 }, debond: { start_s: 1 } },
    });
    expect(scn.heavy_vehicles).toEqual([{ at_s: 5, gross_kN: 1000 }]);
    expect(scn.faults.map((f) => [f.kind, f.start_s, 'end_s' in f ? f.end_s : null])).toEqual([['debond', 1, null], ['dropout', 2, 4], ['silent', 8, 9.6]]);
    const sim = createSimulation(await loadStructureFile('config/brannock-mere.yaml'), scn);
    expect(describeRun(scn, sim.faultLog, 'mqtt://127.0.0.1:1', 1, 'brannock-mere')).toMatch(/in real time .* for 20 s .*heavy vehicle at \+5 s; faults: debond \+1 s, dropout \+2 s\.\.\+4 s, silent \+8 s\.\.\+10 s/);
    const lines: string[] = [];
    const sink = episodeSink(scn, episodesOf(scn, sim.faultLog), (l) => lines.push(l));
    for (const scan of sim.scans()) await sink.send(scan);
    expect(lines.map((l) => l.replace(/ \(.*$/, '').replace(/: expect.*$/, ''))).toEqual([
      'simulator +1 s: fault debond starts on lg-pier/ch06',
      'simulator +2 s: fault dropout starts on lg-span1/ch04',
      'simulator +4 s: fault dropout on lg-span1/ch04 ends',
      'simulator +5 s: heavy vehicle',
      'simulator +8 s: fault silent starts on lg-thermal',
      'simulator +10 s: fault silent on lg-thermal ends',
    ]);
  });
});
