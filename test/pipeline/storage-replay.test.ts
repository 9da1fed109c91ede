import { readFile } from 'node:fs/promises';
import { parse } from 'yaml';
import { beforeAll, describe, expect, it } from 'vitest';
import { decodeLines } from '../../src/adapters/lineproto/decode.js';
import { replay, type ReplaySummary } from '../../src/app/replay.js';
import { compileStructure, type CompiledStructure } from '../../src/config/compile.js';
import { lineBlockText, type LineBlock, type Point, type PointSink } from '../../src/model/point.js';
import type { RawMessage } from '../../src/model/raw-message.js';
import { RESULT_QUANTITIES } from '../../src/model/result.js';
import { defaultScenario } from '../../simulators/default-scenario.js';
import { rawMessageOf } from '../../simulators/outputs.js';
import { createSimulation } from '../../simulators/run.js';

/**
 * The storage policy on a replay of the invented deck (two minutes of simulated traffic with a
 * heavy vehicle at mid-run and instrument faults): the summaries against a plain computation over
 * the full-rate results of the same replay, the event windows against the spans their triggers
 * and alarm transitions give, and replay twice.
 */

/** A sink keeping the line blocks as written and the alarm points. */
class TextSink implements PointSink {
  readonly blocks: string[] = [];
  readonly alarmPoints: Point[] = [];
  async write(points: readonly Point[]) { this.alarmPoints.push(...points); }
  async writeLines(block: LineBlock) { this.blocks.push(lineBlockText(block)); }
  async close() {}
  lines(): string[] { return this.blocks.flatMap((b) => b.split('\n')); }
}

const INTERVAL_S = 10;
const BEFORE_S = 4;
const AFTER_S = 6;
const LEVEL_MPA = 45;
const STORAGE = {
  default: { results: 'summary', interval_s: INTERVAL_S },
  raw: { store: 'summary' },
  event_windows: {
    before_s: BEFORE_S, after_s: AFTER_S, extent: 'zone',
    triggers: [{ id: 'heavy', kind: 'level', quantity: 'von_mises_MPa', above: LEVEL_MPA, scope: { kind: 'zone', zone: 'pier' } }],
  },
};

let docBase: Record<string, unknown>;
let messages: RawMessage[];

function compile(storage?: unknown): CompiledStructure {
  const r = compileStructure(storage === undefined ? docBase : { ...docBase, storage });
  if (!r.ok) throw new Error(r.problems.map((p) => `${p.path}: ${p.reason}`).join('\n'));
  return r.structure;
}

async function run(structure: CompiledStructure): Promise<{ sink: TextSink; summary: ReplaySummary }> {
  const sink = new TextSink();
  const summary = await replay({
    structure, messages: (async function* () { yield* messages; })(), sink, deadLetters: { write: async () => {} },
    runTag: 't', tickMs: 1000, speed: 0, sleep: async () => {}, alarms: true,
  });
  return { sink, summary };
}

const key = (p: Point) => `${p.tags.group}@${p.timeMs}`;

describe('storage policy on a replay of the invented deck', () => {
  let full: { sink: TextSink; summary: ReplaySummary };
  let summarised: { sink: TextSink; summary: ReplaySummary };
  let fullResults: Point[];
  let structure: CompiledStructure;

  beforeAll(async () => {
    docBase = parse(await readFile('config/brannock-mere.yaml', 'utf8'), { merge: true }) as Record<string, unknown>;
    const start = Date.UTC(2026, 5, 1, 6);
    const sim = createSimulation(compile(), defaultScenario({ seed: 11, start_ms: start, duration_s: 120, day_s: 600, faults: ['spikes', 'dropout', 'open_circuit', 'silent'] }));
    messages = [...sim.scans()].map(rawMessageOf);
    structure = compile(STORAGE);
    full = await run(compile());
    summarised = await run(structure);
    fullResults = decodeLines(full.sink.lines().filter((l) => l.startsWith('sw_result')).join('\n'));
  });

  it('without a storage section every result and scan is written, as before', () => {
    expect(fullResults.length).toBe(full.summary.results);
    expect(full.sink.lines().filter((l) => l.startsWith('sw_raw,')).length).toBe(full.summary.frames);
    expect(full.summary.storage.summaryLines).toBe(0);
  });

  it('each summary equals min, max, mean, population std and counts computed plainly from the full-rate results of its interval (to the stored 1e-6)', () => {
    const lines = decodeLines(summarised.sink.lines().filter((l) => l.startsWith('sw_summary')).join('\n'));
    const byInterval = new Map<string, Point[]>();
    for (const p of fullResults) {
      const k = `${p.tags.group}@${Math.floor(p.timeMs / (INTERVAL_S * 1000)) * INTERVAL_S * 1000}`;
      byInterval.set(k, [...(byInterval.get(k) ?? []), p]);
    }
    // Every interval that had results has exactly one summary, and no other.
    expect(new Set(lines.map(key))).toEqual(new Set(byInterval.keys()));
    expect(lines.length).toBe(byInterval.size);
    let compared = 0;
    let flaggedSeen = 0;
    for (const s of lines) {
      const rs = byInterval.get(key(s))!;
      const trusted = rs.filter((p) => p.fields.quality_bits === 0);
      const flagged = rs.filter((p) => p.fields.quality_bits !== 0);
      expect(s.fields.results_trusted).toBe(trusted.length);
      expect(s.fields.results_flagged).toBe(flagged.length);
      expect(s.fields.flags_seen).toBe(flagged.reduce((b, p) => b | p.fields.quality_bits, 0));
      flaggedSeen += flagged.length;
      for (const q of RESULT_QUANTITIES) {
        const xs = trusted.filter((p) => q in p.fields).map((p) => p.fields[q]);
        if (xs.length === 0) { expect(s.fields[`${q}_mean`]).toBeUndefined(); continue; }
        const mean = xs.reduce((a, b) => a + b, 0) / xs.length;
        const std = Math.sqrt(xs.reduce((a, b) => a + (b - mean) ** 2, 0) / xs.length);
        // Both sides are stored with 6 decimals: the full-rate values each within 5e-7 of the exact ones.
        expect(Math.abs(s.fields[`${q}_mean`] - mean)).toBeLessThanOrEqual(1.01e-6);
        expect(Math.abs(s.fields[`${q}_std`] - std)).toBeLessThanOrEqual(1.01e-6);
        expect(s.fields[`${q}_min`]).toBe(Math.min(...xs));
        expect(s.fields[`${q}_max`]).toBe(Math.max(...xs));
        expect(s.fields[`${q}_count`] ?? s.fields.results_trusted).toBe(xs.length);
        // The extreme was reached at the time given (first time at the stored resolution; a tie below it may pick a later one).
        const atMin = trusted.filter((p) => p.fields[q] === s.fields[`${q}_min`]).map((p) => p.timeMs);
        expect(atMin).toContain(s.fields[`${q}_min_time_ms`]);
        const atMax = trusted.filter((p) => p.fields[q] === s.fields[`${q}_max`]).map((p) => p.timeMs);
        expect(atMax).toContain(s.fields[`${q}_max_time_ms`]);
        compared++;
      }
    }
    expect(compared).toBeGreaterThan(500);
    expect(flaggedSeen).toBeGreaterThan(0);
    expect(summarised.summary.storage.lateResults).toBe(0);
  });

  it('raw summaries count every scan and equal the plain statistics of the readings', () => {
    const raw = decodeLines(full.sink.lines().filter((l) => l.startsWith('sw_raw,')).join('\n'));
    const lines = decodeLines(summarised.sink.lines().filter((l) => l.startsWith('sw_raw_summary')).join('\n'));
    expect(lines.reduce((n, p) => n + p.fields.scans, 0)).toBe(raw.length);
    expect(summarised.sink.lines().some((l) => l.startsWith('sw_raw,'))).toBe(false);
    for (const s of lines) {
      const scans = raw.filter((p) => p.tags.logger === s.tags.logger && Math.floor(p.timeMs / 10_000) * 10_000 === s.timeMs);
      expect(s.fields.scans).toBe(scans.length);
      for (const ch of structure.storage!.loggerChannels.get(s.tags.logger)!) {
        const xs = scans.filter((p) => ch in p.fields).map((p) => p.fields[ch]);
        if (xs.length === 0) continue;
        expect(s.fields[`${ch}_count`]).toBe(xs.length);
        expect(s.fields[`${ch}_min`]).toBe(Math.min(...xs));
        expect(s.fields[`${ch}_max`]).toBe(Math.max(...xs));
        expect(Math.abs(s.fields[`${ch}_mean`] - xs.reduce((a, b) => a + b, 0) / xs.length)).toBeLessThanOrEqual(1e-8 * Math.max(1, Math.abs(s.fields[`${ch}_mean`])));
      }
    }
  });

  it('an event window holds every result of its span, and nothing outside a span is written at full rate', () => {
    const groups = structure.groups;
    const zoneOf = new Map(groups.map((g) => [g.config.id, g.config.zone]));
    const spans = new Map<string, Array<[number, number]>>(groups.map((g) => [g.config.id, []]));
    const open = (groupId: string, t: number) => {
      for (const g of groups) if (g.config.zone === zoneOf.get(groupId)) spans.get(g.config.id)!.push([t - BEFORE_S * 1000, t + AFTER_S * 1000]);
    };
    // The trigger: a trusted result of a pier group above the level.
    for (const p of fullResults) if (zoneOf.get(p.tags.group) === 'pier' && p.fields.quality_bits === 0 && p.fields.von_mises_MPa > LEVEL_MPA) open(p.tags.group, p.timeMs);
    // The alarm transitions that open windows, from the same replay.
    let fromAlarms = 0;
    for (const t of full.summary.transitions) {
      if (!['raised', 'level_changed', 'cleared'].includes(t.kind)) continue;
      const s = t.alarm.subject;
      const ids = s.kind === 'group' ? [s.groupId] : s.kind === 'channel' ? (s.groupId === null ? [] : [s.groupId])
        : s.kind === 'logger' ? groups.filter((g) => g.loggerId === s.loggerId).map((g) => g.config.id) : [];
      for (const id of ids) { open(id, t.atMs); fromAlarms++; }
    }
    expect(fromAlarms).toBeGreaterThan(0);
    const inSpan = (p: Point) => spans.get(p.tags.group)!.some(([a, b]) => p.timeMs >= a && p.timeMs <= b);
    const expected = full.sink.lines().filter((l) => l.startsWith('sw_result')).filter((l) => inSpan(decodeLines(l)[0]));
    const written = summarised.sink.lines().filter((l) => l.startsWith('sw_result'));
    expect(expected.length).toBeGreaterThan(100);
    // The same lines, byte for byte (those from the ring rebuilt exactly), each once.
    expect([...written].sort()).toEqual([...expected].sort());
    expect(written.length).toBeLessThan(fullResults.length / 2);
    expect(summarised.summary.storage.windowResults).toBe(written.length);
    expect(summarised.summary.storage.ringOverwritten).toBe(0);
  });

  it('alarm transitions are stored as without the policy', () => {
    expect(summarised.sink.alarmPoints).toEqual(full.sink.alarmPoints);
  });

  it('gives byte-identical output when replayed again', async () => {
    const again = await run(compile(STORAGE));
    expect(again.sink.blocks.join('\n')).toBe(summarised.sink.blocks.join('\n'));
    expect(again.sink.alarmPoints).toEqual(summarised.sink.alarmPoints);
  });
});
