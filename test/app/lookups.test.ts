import { describe, expect, it } from 'vitest';
import { alarmLookups, STRUCTURE_ZONE } from '../../src/app/lookups.js';
import { compileStructure } from '../../src/config/compile.js';
import { loadStructureFile } from '../../src/config/load.js';
import { baseDoc, compileOrThrow, microGauge } from '../support/structures.js';

describe('alarmLookups from the example structure', () => {
  it('gives every group its zone and location, and every logger the zone of its groups', async () => {
    const s = await loadStructureFile('config/brannock-mere.yaml');
    const l = alarmLookups(s);
    expect(l.structureId).toBe('brannock-mere');
    expect([...l.groups.keys()]).toEqual(['web-north-pier', 'web-south-pier', 'flange-north-mid1', 'flange-south-mid1', 'slab-mid1']);
    expect(l.groups.get('slab-mid1')).toEqual({ zone: 'span-1', location: 'Slab at span 1 midspan between the girders, 60 mm above the slab soffit' });
    const zones = Object.fromEntries([...l.loggers].map(([id, lg]) => [id, lg.zone]));
    expect(zones).toEqual({ 'lg-pier': 'pier', 'lg-span1': 'span-1', 'lg-slab': 'span-1', 'lg-thermal': STRUCTURE_ZONE });
    expect(l.loggers.get('lg-pier')!.expectedIntervalS).toBe(0.1);
    expect(l.loggers.get('lg-thermal')!.location).toBe('Thermocouple scanner');
  });

  it('lists gauge channels with their group, signal unit and valid range, temperature channels in degC', async () => {
    const l = alarmLookups(await loadStructureFile('config/brannock-mere.yaml'));
    const pier = l.loggers.get('lg-pier')!.channels;
    expect(pier.size).toBe(7);
    expect(pier.get('ch01')).toMatchObject({ groupId: 'web-north-pier', validMin: -15, validMax: 15, unit: 'mV/V' });
    expect(pier.get('ch07')).toMatchObject({ groupId: 'web-south-pier', unit: 'mV/V' });
    const slab = l.loggers.get('lg-slab')!.channels;
    expect(slab.size).toBe(8);
    // The companion gauge belongs to its group too: its channel's alarms route with the slab.
    expect(slab.get('vw8')).toMatchObject({ groupId: 'slab-mid1', validMin: 400, validMax: 1400, unit: 'Hz' });
    expect(slab.get('vw8')!.location).toMatch(/^No-stress companion in an unbonded enclosure, Slab at span 1/);
    const thermal = l.loggers.get('lg-thermal')!.channels;
    expect([...thermal.keys()]).toEqual(['t1', 't2', 't3', 't4']);
    // valid_range_degC defaults to [-50, 100] (structure schema), offset 0.
    expect(thermal.get('t3')).toEqual({ groupId: null, location: 'temperature sensor tc-steel-north', validMin: -50, validMax: 100, unit: 'degC' });
  });
});

describe('alarmLookups edge cases', () => {
  const doc = baseDoc(
    [{ id: 'r1', kind: 'single', material: 'steel', zone: 'deck', location: 'test beam', elements: [{ gauge: 'g1' }] }],
    [microGauge('g1', 'ch1', { valid_range: [-2000, 2000] }), microGauge('spare', 'ch9')],
    {
      loggers: [{ id: 'lg', expected_interval_s: 2 }, { id: 'lg-t', expected_interval_s: 10 }],
      temperature_sensors: [{ id: 'tc1', kind: 'rtd', channel: { logger: 'lg-t', channel: 't1' }, offset_degC: 1.5, valid_range_degC: [-20, 60] }],
    },
  );

  it('names a logger by its id without a description, leaves a gauge outside any group unbounded', () => {
    const l = alarmLookups(compileOrThrow(doc));
    const lg = l.loggers.get('lg')!;
    expect(lg).toMatchObject({ zone: 'deck', location: 'lg', expectedIntervalS: 2 });
    expect(lg.channels.get('ch1')).toEqual({ groupId: 'r1', location: 'gauge g1, test beam', validMin: -2000, validMax: 2000, unit: 'microstrain' });
    expect(lg.channels.get('ch9')).toEqual({
      groupId: null, location: 'gauge spare', validMin: Number.NEGATIVE_INFINITY, validMax: Number.POSITIVE_INFINITY, unit: 'microstrain',
    });
  });

  it('shifts a temperature range by the calibration offset, so the raw check matches the pipeline (reading + offset)', () => {
    const t1 = alarmLookups(compileOrThrow(doc)).loggers.get('lg-t')!.channels.get('t1')!;
    expect(t1.validMin).toBeCloseTo(-21.5, 12);
    expect(t1.validMax).toBeCloseTo(58.5, 12);
  });
});

describe('the alarms section in a structure file', () => {
  const levels = ['advisory', 'alert'];
  const alarms = (rules: unknown[], extra: Record<string, unknown> = {}) => ({
    levels, rules, health: { level: 'advisory' }, acknowledgement: { allowed_users: { structural: ['eng-1'] } }, ...extra,
  });
  const doc = (a: unknown) => baseDoc(
    [{ id: 'r1', kind: 'single', material: 'steel', zone: 'deck', location: 'test beam', elements: [{ gauge: 'g1' }] }],
    [microGauge('g1', 'ch1')], { alarms: a },
  );
  const rule = (scope: unknown) => ({
    id: 'vm', kind: 'limit', quantity: 'von_mises_MPa', scope, direction: 'above', thresholds: [{ level: 'alert', value: 100 }], action: 'look',
  });

  it('is compiled with its defaults, or null when absent', () => {
    const s = compileOrThrow(doc(alarms([rule({ kind: 'structure' })])));
    expect(s.alarms?.escalation.after_s).toBe(900);
    expect(s.alarms?.acknowledgement.command_topic).toBe('strainward/{structure}/alarms/ack/{user}');
    expect(compileOrThrow(baseDoc(doc(undefined).groups as unknown[], doc(undefined).gauges as unknown[])).alarms).toBeNull();
  });

  it('reports its schema problems under alarms., with the rest of the file, all at once', () => {
    const bad = doc(alarms([{ ...rule({ kind: 'structure' }), thresholds: [{ level: 'severe', value: 1 }] }], { escalation: { after_s: -1 } }));
    (bad.loggers as Array<Record<string, unknown>>)[0].expected_interval_s = 0;
    const r = compileStructure(bad);
    expect(r.ok ? [] : r.problems).toEqual([
      { path: 'loggers[0].expected_interval_s', reason: 'must be > 0, received 0' },
      { path: 'alarms.escalation.after_s', reason: 'must be > 0, received -1' },
      { path: 'alarms.rules[0].thresholds[0].level', reason: 'unknown level "severe" (levels: advisory, alert)' },
    ]);
  });

  it('refuses rule scopes naming groups or zones the structure does not have', () => {
    const r = compileStructure(doc(alarms([rule({ kind: 'groups', group_ids: ['r1', 'r2'] }), { ...rule({ kind: 'zone', zone: 'pier' }), id: 'vm2' }])));
    expect(r.ok ? [] : r.problems).toEqual([
      { path: 'alarms.rules[0].scope.group_ids[1]', reason: 'unknown group "r2"' },
      { path: 'alarms.rules[1].scope.zone', reason: 'unknown zone "pier" (zones: deck)' },
    ]);
  });
});
