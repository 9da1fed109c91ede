import { mkdtemp, readdir, readFile, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parse, stringify } from 'yaml';
import { beforeAll, describe, expect, it, vi } from 'vitest';
import { decodeLines } from '../../src/adapters/lineproto/decode.js';
import { main } from '../../src/cli/main.js';
import { loadStructureFile } from '../../src/config/load.js';
import { defaultScenario } from '../../simulators/default-scenario.js';
import { captureSink } from '../../simulators/outputs.js';
import { createSimulation } from '../../simulators/run.js';

async function run(args: string[]): Promise<number> {
  const e = vi.spyOn(process.stderr, 'write').mockImplementation(() => true);
  try { return await main(['node', 'strainward', ...args]); } finally { e.mockRestore(); }
}

async function readOutput(dir: string): Promise<string> {
  const files = (await readdir(dir)).filter((f) => f.endsWith('.lp')).sort();
  return (await Promise.all(files.map((f) => readFile(join(dir, f), 'utf8')))).join('');
}

describe('strainward replay', () => {
  let dir: string;
  let truthCount = 0;
  const start = Date.UTC(2026, 5, 1, 6);

  beforeAll(async () => {
    dir = await mkdtemp(join(tmpdir(), 'sw-replay-'));
    const structure = await loadStructureFile('config/brannock-mere.yaml');
    // Noise-free, fault-free, two minutes: the true answer is known for every result.
    const scn = defaultScenario({ seed: 7, start_ms: start, duration_s: 120, day_s: 600, faults: [], noise: false });
    const sim = createSimulation(structure, scn);
    const sink = await captureSink(join(dir, 'capture'));
    for (const scan of sim.scans()) {
      await sink.send(scan);
      truthCount += scan.truth.length;
    }
    await sink.close();
  });

  it('gives byte-identical results from the same capture and configuration, run after run', async () => {
    const a = join(dir, 'a'), b = join(dir, 'b');
    expect(await run(['replay', '--capture', join(dir, 'capture'), '-s', 'config/brannock-mere.yaml', '--out', a, '--run-tag', 'r1'])).toBe(0);
    expect(await run(['replay', '--capture', join(dir, 'capture'), '-s', 'config/brannock-mere.yaml', '--out', b, '--run-tag', 'r1'])).toBe(0);
    const [ta, tb] = [await readOutput(a), await readOutput(b)];
    expect(ta.length).toBeGreaterThan(10_000);
    expect(ta).toBe(tb);
    const points = decodeLines(ta);
    const results = points.filter((p) => p.measurement === 'sw_result');
    expect(results.length).toBe(truthCount);
    expect(results.every((p) => p.tags.run === 'r1')).toBe(true);
    // The scenario's heavy vehicle (at mid-run) raises the configured von Mises alarm in the replay too.
    const alarms = points.filter((p) => p.measurement === 'sw_alarm' && p.tags.transition === 'raised' && p.tags.alarm_class === 'structural');
    expect(alarms.map((p) => p.tags.rule)).toContain('steel-von-mises');
    expect(alarms.every((p) => p.tags.run === 'r1')).toBe(true);
    // Fatigue: every detail's figures at the end of the replay (a 2-minute run crosses no 300 s boundary), tagged with the run.
    const fatigue = points.filter((p) => p.measurement === 'sw_fatigue' && p.tags.bin_from_MPa === undefined);
    expect(fatigue.map((p) => p.tags.detail).sort()).toEqual(['flange-north-butt-weld', 'flange-south-cover-plate-end', 'web-north-stiffener-toe']);
    expect(fatigue.every((p) => p.tags.run === 'r1' && p.fields.monitored_s > 60 && p.fields.cycles > 0)).toBe(true);
    expect(await readdir(a)).toEqual(await readdir(b));
  });

  it('replays a corrected configuration: a changed zero reading shifts exactly that gauge', async () => {
    const doc = parse(await readFile('config/brannock-mere.yaml', 'utf8'), { merge: true });
    const gauge = doc.gauges.find((g: { id: string }) => g.id === 'sg-sm-a');
    gauge.zero_reading = 50; // microstrain: the single flange gauge reads 50 less mechanical strain
    const corrected = join(dir, 'corrected.yaml');
    await writeFile(corrected, stringify(doc));
    const out = join(dir, 'c');
    const report = join(dir, 'report.html');
    expect(await run(['replay', '--capture', join(dir, 'capture'), '-s', 'config/brannock-mere.yaml', '--out', out,
      '--report', report, '--compare-structure', corrected])).toBe(0);
    const html = await readFile(report, 'utf8');
    expect(html).toContain('flange-south-mid1');
    expect(html).toContain('does not replace qualified engineering judgement');
    expect(html).toContain('steel-von-mises'); // the alarm table lists the replay's alarms
    expect(html).toContain(corrected);
    // 50 microstrain less indicated on steel, E = 210000 MPa, nu = 0.3, gauge Kt = 0.009 calibrated at nu0 = 0.285:
    // under uniaxial stress the gauge reads eps (1 - nu Kt) / (1 - nu0 Kt) (transverse sensitivity, Dally and Riley,
    // Experimental Stress Analysis; from memory), so sigma changes by -E 50e-6 (1 - nu0 Kt) / (1 - nu Kt) = -10.5014 MPa.
    const row = (group: string, quantity: string) => {
      const m = html.match(new RegExp(`<tr data-group="${group}" data-quantity="${quantity}">.*?</tr>`));
      expect(m, `${group} ${quantity}`).not.toBeNull();
      return [...m![0].matchAll(/data-value="([^"]+)"/g)].map((x) => Number(x[1]));
    };
    const [mean, maxAbs] = row('flange-south-mid1', 'stress_axial_MPa');
    const expected = (-210000 * 50e-6 * (1 - 0.285 * 0.009)) / (1 - 0.3 * 0.009);
    expect(mean).toBeCloseTo(expected, 9); // data-value carries the full double
    expect(maxAbs).toBeCloseTo(-expected, 9);
    // Every other group is untouched by the correction.
    expect(row('web-north-pier', 'von_mises_MPa')[1]).toBe(0);
    // Fatigue: the section with each detail's remaining life and its assumptions, and the damage compared. A zero
    // reading shifts the stress, not its ranges; EN 1993-1-9 counts ranges only (no mean-stress term, 7.1), so
    // the corrected gauge's detail has the same damage, to round-off.
    expect(html).toContain('<h2 id="fatigue">Fatigue</h2>');
    expect(html).toContain('damage before monitoring began is not known and is not included');
    const diff = html.match(/<table class="fatigue-differences">.*?<\/table>/)![0];
    const [a, b, d] = [...diff.match(/<tr data-detail="flange-south-cover-plate-end">.*?<\/tr>/)![0].matchAll(/data-value="([^"]+)"/g)].map((x) => Number(x[1]));
    expect(a).toBeGreaterThan(0);
    expect(Math.abs(b / a - 1)).toBeLessThan(1e-9);
    expect(Math.abs(d)).toBeLessThan(1e-9 * a);
  });

  it('replays the acknowledgement commands recorded in the capture', async () => {
    const { replay } = await import('../../src/app/replay.js');
    const { MemorySink } = await import('../../src/adapters/memory-sink.js');
    const { readCapture } = await import('../../src/adapters/capture/capture-reader.js');
    const structure = await loadStructureFile('config/brannock-mere.yaml');
    const first = await replay({
      structure, messages: readCapture(join(dir, 'capture')), sink: new MemorySink(), runTag: 'a', tickMs: 1000, speed: 0,
      deadLetters: { write: async () => {} }, sleep: async () => {}, alarms: true,
    });
    const raised = first.transitions.find((t) => t.kind === 'raised' && t.alarm.alarmClass === 'structural')!;
    expect(raised).toBeDefined();
    // The same capture with an engineer's acknowledgement recorded a second after the alarm was raised.
    async function* withAck() {
      let sent = false;
      for await (const m of readCapture(join(dir, 'capture'))) {
        if (!sent && m.arrivalMs > raised.atMs + 1000) {
          sent = true;
          const body = JSON.stringify({ alarm_id: raised.alarm.id, user: 'duty-engineer-1', reason: 'heavy vehicle seen on camera' });
          yield { topic: 'strainward/brannock-mere/alarms/ack/duty-engineer-1', payload: new TextEncoder().encode(body), arrivalMs: m.arrivalMs };
        }
        yield m;
      }
    }
    const second = await replay({
      structure, messages: withAck(), sink: new MemorySink(), runTag: 'b', tickMs: 1000, speed: 0,
      deadLetters: { write: async () => {} }, sleep: async () => {}, alarms: true,
    });
    const ack = second.transitions.find((t) => t.kind === 'acknowledged' && t.alarm.id === raised.alarm.id);
    expect(ack?.alarm.acknowledgement).toMatchObject({ user: 'duty-engineer-1', reason: 'heavy vehicle seen on camera' });
    expect(second.results).toBe(first.results); // the command is not a logger message
    expect(second.rejected).toBe(0);
  });

  it('refuses what cannot give a result, each with a sentence: an empty window (exit 8), --compare-structure without --report (exit 2), a missing capture (exit 2)', async () => {
    const lines: string[] = [];
    const e = vi.spyOn(process.stderr, 'write').mockImplementation((s) => { lines.push(String(s)); return true; });
    const go = (args: string[]) => main(['node', 'strainward', ...args]);
    try {
      const base = ['replay', '--capture', join(dir, 'capture'), '-s', 'config/brannock-mere.yaml', '--out', join(dir, 'empty')];
      expect(await go([...base, '--from', '2030-01-01T00:00:00Z'])).toBe(8);
      expect(lines.join('')).toContain('no data to replay');
      expect(await go([...base, '--compare-structure', 'config/brannock-mere.yaml'])).toBe(2);
      expect(lines.join('')).toMatch(/--compare-structure goes with --report/);
      lines.length = 0;
      expect(await go(['replay', '--capture', join(dir, 'nowhere'), '-s', 'config/brannock-mere.yaml', '--out', join(dir, 'empty')])).toBe(2);
      expect(lines.join('')).toContain(`no capture at ${join(dir, 'nowhere')}: the directory or its index file does not exist`);
      expect(lines.join('')).not.toContain('ENOENT');
    } finally { e.mockRestore(); }
  });
});
