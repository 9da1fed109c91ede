/** Rezero in the frame processor (no servers): the decision, the zero applied from the logger time of the readings, live and replayed alike. */
import { describe, expect, it } from 'vitest';
import type { LoggerFrame } from '../../src/model/raw-message.js';
import { FrameProcessor } from '../../src/pipeline/frame-processor.js';
import { applyRezeroRecord } from '../../src/rezero/apply.js';
import { decideRezero, parseRezeroPayload, type RezeroRequest } from '../../src/rezero/decide.js';
import type { RezeroRecord } from '../../src/rezero/schema.js';
import { baseDoc, compileOrThrow, microGauge, planeRosetteDoc } from '../support/structures.js';

const frame = (loggerId: string, timeMs: number, values: Record<string, number | null>, arrivalMs = timeMs): LoggerFrame =>
  ({ structureId: 'test-structure', loggerId, timeMs, seq: null, values: new Map(Object.entries(values)), arrivalMs });

const REZERO = { allowed: [{ user: 'eng-1', groups: ['one'] }, { user: 'tech-1', zones: ['elsewhere'] }] };

/** One steel gauge on `lg` (microstrain or vibrating wire), a thermocouple on `th`. */
function structure(gauge: Record<string, unknown> = microGauge('g', 'c1')) {
  return compileOrThrow(baseDoc(
    [
      { id: 'one', kind: 'single', material: 'steel', zone: 'z', location: 'bench', elements: [{ gauge: 'g' }], temperature_sensors: ['tc'] },
      { id: 'two', kind: 'single', material: 'steel', zone: 'elsewhere', location: 'bench', elements: [{ gauge: 'h' }] },
    ],
    [gauge, microGauge('h', 'c2')],
    {
      loggers: [{ id: 'lg', expected_interval_s: 1 }, { id: 'th', expected_interval_s: 10 }],
      temperature_sensors: [{ id: 'tc', kind: 'thermocouple', channel: { logger: 'th', channel: 't' } }],
      rezero: REZERO,
    },
  ));
}
const cfgOf = (s: ReturnType<typeof structure>) => s.config.rezero!;
const request = (over: Partial<RezeroRequest> = {}): RezeroRequest => ({ user: 'eng-1', groupId: 'one', reason: 'gauge re-bonded', requestId: 'r1', atMs: 10_500, ...over });

/** Rezero from the processor's latest readings (as the live wiring does); the record. */
function rezeroNow(p: FrameProcessor<string>, s: ReturnType<typeof structure>, req: RezeroRequest): RezeroRecord {
  const d = decideRezero(s, cfgOf(s), req, p.latestReadings(req.groupId), p.zeroStepAt(req.groupId, Number.POSITIVE_INFINITY));
  if (!d.ok) throw new Error(d.refusal.reason);
  const applied = applyRezeroRecord(p as FrameProcessor<unknown>, s, d.record);
  if (!applied.ok) throw new Error(applied.reason);
  return d.record;
}

const stress = (p: FrameProcessor<string>, f: LoggerFrame) => p.onFrame(f, 'm', f.arrivalMs)[0].results[0].values.stress_axial_MPa!;

describe('rezero in the frame processor', () => {
  it('takes the latest readings as the zero: later results are E x (reading - new zero)', () => {
    const s = structure();
    const p = new FrameProcessor<string>(s);
    p.onFrame(frame('th', 0, { t: 20 }), 'th', 0);
    // Hooke's law for a uniaxial stress, sigma = E eps (common practice): 210000 MPa x 120e-6 = 25.2 MPa.
    expect(stress(p, frame('lg', 10_000, { c1: 120, c2: 0 }))).toBeCloseTo(25.2, 9);
    const record = rezeroNow(p, s, request());
    expect(record).toMatchObject({
      group_id: 'one', user: 'eng-1', reason: 'gauge re-bonded', at_ms: 10_500, readings_time_ms: 10_000,
      elements: [{ gauge: 'g', channel: 'lg/c1', unit: 'microstrain', old_zero: 0, new_zero: 120 }], companion: null,
      zero_temperature_degC: { old: 20, new: 20 },
    });
    expect(stress(p, frame('lg', 11_000, { c1: 120, c2: 0 }))).toBeCloseTo(0, 12);
    // 220 - 120 = 100 microstrain: 210000 x 100e-6 = 21 MPa (Hooke's law, common practice).
    expect(stress(p, frame('lg', 12_000, { c1: 220, c2: 0 }))).toBeCloseTo(21, 9);
    // A late frame dated before the readings taken is computed against the zero it was read with.
    expect(stress(p, frame('lg', 9_000, { c1: 120, c2: 0 }, 12_500))).toBeCloseTo(25.2, 9);
    // The other group on the same logger keeps its zero.
    expect(p.onFrame(frame('lg', 13_000, { c1: 120, c2: 50 }), 'm', 13_000)[0].results[1].values.stress_axial_MPa).toBeCloseTo(10.5, 9);
  });

  it('moves the zero-reading temperature: a vibrating-wire gauge on steel is zero at the rezero temperature', () => {
    const vw = {
      id: 'g', kind: 'vibrating_wire', channel: { logger: 'lg', channel: 'c1' },
      signal: { unit: 'Hz', micro_per_digit: 3, wire_alpha_per_degC: 11.7e-6 }, zero_reading: 800, zero_temperature_degC: 20,
    };
    const s = structure(vw);
    const p = new FrameProcessor<string>(s);
    p.onFrame(frame('th', 0, { t: 25 }), 'th', 0);
    const before = stress(p, frame('lg', 1_000, { c1: 820, c2: 0 }));
    // Vibrating-wire reduction with its thermal correction, eps = B (R1 - R0) + (alpha_wire - alpha_host)(T1 - T0), R = f^2/1000
    // (common practice): 3 x (672.4 - 640) + (11.7 - 12) x 5 = 95.7 microstrain; x 210000 MPa = 20.097 MPa.
    expect(before).toBeCloseTo(20.097, 9);
    const record = rezeroNow(p, s, request({ atMs: 1_200 }));
    expect(record.elements[0]).toMatchObject({ unit: 'Hz', old_zero: 800, new_zero: 820 });
    expect(record.zero_temperature_degC).toEqual({ old: 20, new: 25 });
    expect(stress(p, frame('lg', 2_000, { c1: 820, c2: 0 }))).toBeCloseTo(0, 9);
    // The same reading 10 degC warmer, the wire held by the steel: (11.7 - 12) x 10 = -3 microstrain, x 210000 MPa = -0.63 MPa.
    p.onFrame(frame('th', 2_500, { t: 35 }), 'th', 2_500);
    expect(stress(p, frame('lg', 3_000, { c1: 820, c2: 0 }))).toBeCloseTo(-0.63, 9);
  });

  it('a replay that installs the recorded rezero first gives the very results of the live run', () => {
    const s = structure();
    const frames = [frame('th', 0, { t: 20 }), ...[1, 2, 3, 4, 5, 6].map((k) => frame('lg', k * 1000, { c1: 100 + 7 * k, c2: k }))];
    const live = new FrameProcessor<string>(s);
    const liveOut = frames.slice(0, 4).flatMap((f) => live.onFrame(f, 'm', f.arrivalMs));
    const record = rezeroNow(live, s, request({ atMs: 3_400 }));
    liveOut.push(...frames.slice(4).flatMap((f) => live.onFrame(f, 'm', f.arrivalMs)));
    const replayed = new FrameProcessor<string>(s);
    expect(applyRezeroRecord(replayed as FrameProcessor<unknown>, s, record)).toEqual({ ok: true });
    const replayOut = frames.flatMap((f) => replayed.onFrame(f, 'm', f.arrivalMs));
    expect(replayOut.map((o) => o.results)).toEqual(liveOut.map((o) => o.results));
    // 142 - 121 = 21 microstrain after the zero; x 210000 MPa = 4.41 MPa (Hooke's law, common practice).
    expect(liveOut[6].results[0].values.stress_axial_MPa).toBeCloseTo(4.41, 9);
  });

  it('a redundant rosette: the averaged residual restarts at the first frame on the new zero, live and replayed alike', () => {
    const s = compileOrThrow({ ...planeRosetteDoc([0, 45, 90, 135]), rezero: { allowed: [{ user: 'eng-1', groups: ['r1'] }] } });
    // A steady 20 microstrain offset on the fourth element over a small alternating noise: the averaged residual drifts.
    const reading = (k: number) => Object.fromEntries([0, 1, 2, 3].map((i) => [`ch${i}`, ((k * 7 + i * 3) % 5) - 2 + (i === 3 ? 20 : 0)]));
    // The detector judges from its 61st sample (RESIDUAL_JUDGE_AFTER): 70 frames before the rezero, 70 after.
    const frames = Array.from({ length: 140 }, (_, k) => frame('lg', 1_000 + 100 * k, reading(k)));
    const drifting = (o: { results: Array<{ flags: readonly string[] }> }) => o.results[0].flags.includes('residual_drift');
    const live = new FrameProcessor<string>(s);
    const liveOut = frames.slice(0, 70).flatMap((f) => live.onFrame(f, 'm', f.arrivalMs));
    expect(drifting(liveOut[69])).toBe(true);
    const d = decideRezero(s, s.config.rezero!, request({ groupId: 'r1', atMs: 8_000 }), live.latestReadings('r1'), null);
    if (!d.ok) throw new Error(d.refusal.reason);
    applyRezeroRecord(live as FrameProcessor<unknown>, s, d.record);
    liveOut.push(...frames.slice(70).flatMap((f) => live.onFrame(f, 'm', f.arrivalMs)));
    expect(liveOut.slice(70).some(drifting)).toBe(false);
    const replayed = new FrameProcessor<string>(s);
    applyRezeroRecord(replayed as FrameProcessor<unknown>, s, d.record);
    expect(frames.flatMap((f) => replayed.onFrame(f, 'm', f.arrivalMs)).map((o) => o.results)).toEqual(liveOut.map((o) => o.results));
  });

  it('refuses, with a code and a reason, what must not become a zero', () => {
    const s = structure();
    const p = new FrameProcessor<string>(s);
    const decide = (req: RezeroRequest) => {
      const d = decideRezero(s, cfgOf(s), req, p.latestReadings(req.groupId), null);
      return d.ok ? 'accepted' : `${d.refusal.code}: ${d.refusal.reason}`;
    };
    expect(decide(request())).toMatch(/^no_readings: /);
    expect(decide(request({ groupId: 'nope' }))).toBe('unknown_group: no group "nope" in structure test-structure');
    expect(decide(request({ user: 'tech-1' }))).toBe('user_not_allowed: user "tech-1" may not rezero group "one" (zone z; rezero.allowed)');
    p.onFrame(frame('lg', 1_000, { c1: 50, c2: 0 }), 'm', 1_000);
    expect(decide(request({ atMs: 1_100 }))).toMatch(/^temperature_missing: /);
    // Allowed by zone; no sensors on that group: its zero temperature stays.
    expect(decide(request({ user: 'tech-1', groupId: 'two', atMs: 1_100 }))).toBe('accepted');
    p.onFrame(frame('th', 1_500, { t: 20 }), 'th', 1_500);
    p.onFrame(frame('lg', 2_000, { c1: null, c2: 0 }), 'm', 2_000);
    expect(decide(request({ atMs: 2_100 }))).toBe('readings_incomplete: no reading of lg/c1 in the latest frame');
    p.onFrame(frame('lg', 3_000, { c1: 40, c2: 0 }), 'm', 3_000);
    expect(decide(request({ atMs: 3_100 }))).toBe('accepted');
    expect(decide(request({ atMs: 33_100 }))).toMatch(/^readings_stale: the latest readings of group "one" arrived 30\.1 s before the request/);
  });

  it('decodes a request: the user is the topic\'s, a bad field is named', () => {
    expect(parseRezeroPayload('{"group_id":"one","reason":"new gauge","request_id":"x"}', 5, 'eng-1'))
      .toEqual({ ok: true, request: { user: 'eng-1', groupId: 'one', reason: 'new gauge', requestId: 'x', atMs: 5 } });
    expect(parseRezeroPayload('{"group_id":"one","reason":"","request_id":"x"}', 5, 'eng-1')).toMatchObject({ ok: false, refusal: { code: 'invalid_command', requestId: 'x', groupId: 'one' } });
    expect(parseRezeroPayload('{"group_id":"one","reason":"r","user":"eng-2"}', 5, 'eng-1'))
      .toMatchObject({ ok: false, refusal: { code: 'identity_mismatch', reason: 'the payload names user "eng-2" but the request came on the topic of "eng-1"' } });
    expect(parseRezeroPayload('not json', 5, 'eng-1')).toMatchObject({ ok: false, refusal: { code: 'invalid_command', reason: 'payload is not JSON' } });
  });

  it('refuses a rezero section naming groups or zones the structure does not have', () => {
    const doc = baseDoc([{ id: 'one', kind: 'single', material: 'steel', zone: 'z', location: 'bench', elements: [{ gauge: 'g' }] }], [microGauge('g', 'c1')],
      { rezero: { allowed: [{ user: 'eng-1', groups: ['onee'], zones: ['zz'] }, { user: 'eng-2' }] } });
    expect(() => compileOrThrow(doc)).toThrow(/rezero\.allowed\[1\]: name the groups or the zones this user may rezero/);
    const doc2 = { ...doc, rezero: { allowed: [{ user: 'eng-1', groups: ['onee'], zones: ['zz'] }] } };
    expect(() => compileOrThrow(doc2)).toThrow(/rezero\.allowed\[0\]\.groups\[0\]: unknown group "onee"\nrezero\.allowed\[0\]\.zones\[0\]: unknown zone "zz"/);
  });
});
