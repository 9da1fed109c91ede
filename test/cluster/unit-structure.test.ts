import { describe, expect, it } from 'vitest';
import { compileStructure } from '../../src/config/compile.js';
import { loadStructureFile } from '../../src/config/load.js';
import type { StructureConfig } from '../../src/config/structure-schema.js';
import { checkSplit, unitStructureConfig } from '../../src/cluster/unit-structure.js';
import { ownsAlarm, ownsGroup, requestGroupId, type UnitIdentity } from '../../src/cluster/unit-topics.js';

/** The ids of a part's alarm rules (none when its alarms are disabled). */
const rulesOf = (c: StructureConfig) => (c.alarms !== undefined && 'rules' in c.alarms ? c.alarms.rules : []).map((r) => r.id);
const deck = (await loadStructureFile('config/brannock-mere.yaml')).config;

/** The invented deck with the slab's two thermocouples on a logger of their own: the slab can be a unit apart. */
function withSlabThermal(c: StructureConfig): StructureConfig {
  return {
    ...c,
    loggers: [...c.loggers, { id: 'lg-slab-thermal', expected_interval_s: 1 }],
    temperature_sensors: c.temperature_sensors.map((t) => (t.id.startsWith('tc-slab') ? { ...t, channel: { logger: 'lg-slab-thermal', channel: t.channel.channel } } : t)),
  };
}

describe('splitting a structure into work units', () => {
  it('refuses a split that puts a group\'s loggers in two units, and names the group and the units', () => {
    const problems = checkSplit(deck, [{ id: 'pier', loggers: ['lg-pier'] }, { id: 'rest', loggers: ['lg-span1', 'lg-slab', 'lg-thermal'] }], 'units[0].split');
    expect(problems.map((p) => p.reason)).toEqual([
      'group "web-north-pier" reads loggers in units "pier" and "rest": a group\'s loggers (strain, companion, temperature) must be in one unit',
      'group "web-south-pier" reads loggers in units "pier" and "rest": a group\'s loggers (strain, companion, temperature) must be in one unit',
    ]);
  });

  it('refuses a logger left out, one named twice and one that does not exist', () => {
    const reasons = checkSplit(deck, [{ id: 'a', loggers: ['lg-pier', 'lg-span1', 'lg-thermal', 'lg-nowhere'] }, { id: 'b', loggers: ['lg-pier'] }], 'split').map((p) => `${p.path}: ${p.reason}`);
    expect(reasons).toContain('split[0].loggers[3]: unknown logger "lg-nowhere" (loggers: lg-pier, lg-span1, lg-slab, lg-thermal)');
    expect(reasons).toContain('split[1].loggers[0]: logger "lg-pier" is already in unit "a"');
    expect(reasons).toContain('split: logger "lg-slab" is in no unit: its readings would never be processed');
  });

  it('gives each unit its loggers, groups, rules scoped to what remains, and compiles both parts', () => {
    const c = withSlabThermal(deck);
    const split = [{ id: 'steel', loggers: ['lg-pier', 'lg-span1', 'lg-thermal'] }, { id: 'slab', loggers: ['lg-slab', 'lg-slab-thermal'] }];
    expect(checkSplit(c, split, 'split')).toEqual([]);
    const steel = unitStructureConfig(c, new Set(split[0].loggers));
    const slab = unitStructureConfig(c, new Set(split[1].loggers));
    expect(steel.groups.map((g) => g.id)).toEqual(['web-north-pier', 'web-south-pier', 'flange-north-mid1', 'flange-south-mid1']);
    expect(slab.groups.map((g) => g.id)).toEqual(['slab-mid1']);
    // The fatigue details sit on the steel flanges: their rules go with the steel unit only.
    expect(rulesOf(steel)).toEqual(['steel-von-mises', 'steel-yield-ratio', 'flange-stress-rate', 'fatigue-damage-rate', 'fatigue-damage']);
    expect(slab.fatigue).toBeUndefined();
    // A zone rule goes with every unit that has a group in the zone (the slab is in span-1 too).
    expect(rulesOf(slab)).toEqual(['slab-principal-tension', 'flange-stress-rate']);
    expect(slab.temperature_sensors.map((t) => t.id)).toEqual(['tc-slab-top', 'tc-slab-bottom']);
    // Every gauge and sensor is in exactly one part.
    expect(steel.gauges.length + slab.gauges.length).toBe(c.gauges.length);
    expect(compileStructure(steel).ok).toBe(true);
    expect(compileStructure(slab).ok).toBe(true);
    expect(steel.structure.id).toBe('brannock-mere');
  });
});

describe('which unit answers an acknowledgement', () => {
  const base = { structureLoggers: ['lg-pier', 'lg-span1', 'lg-thermal', 'lg-slab', 'lg-slab-thermal'], structureGroups: ['web-north-pier', 'slab-mid1'] };
  const steel: UnitIdentity = { ...base, id: 'steel', loggers: ['lg-pier', 'lg-span1', 'lg-thermal'], groups: ['web-north-pier'], first: true };
  const slab: UnitIdentity = { ...base, id: 'slab', loggers: ['lg-slab', 'lg-slab-thermal'], groups: ['slab-mid1'], first: false };
  const answeredBy = (id: string) => [steel, slab].filter((u) => ownsAlarm(id, 'brannock-mere', u)).map((u) => u.id);

  it('exactly one unit answers every id: its own subjects, and the first unit for anything else', () => {
    expect(answeredBy('brannock-mere:slab-principal-tension:g:slab-mid1:3')).toEqual(['slab']);
    expect(answeredBy('brannock-mere:steel-von-mises:g:web-north-pier:1')).toEqual(['steel']);
    expect(answeredBy('brannock-mere:spike:c:lg-slab/vw3:2')).toEqual(['slab']);
    expect(answeredBy('brannock-mere:no_data:l:lg-thermal:1')).toEqual(['steel']);
    expect(answeredBy('brannock-mere:component_fault:p:spool@slab:1')).toEqual(['slab']);
    expect(answeredBy('brannock-mere:steel-von-mises:g:no-such-group:1')).toEqual(['steel']);
    expect(answeredBy('not an alarm id')).toEqual(['steel']);
    expect(answeredBy('')).toEqual(['steel']);
  });
});

describe('which unit of a split structure answers a rezero request', () => {
  const base = { structureLoggers: ['lg-pier', 'lg-span1', 'lg-thermal', 'lg-slab', 'lg-slab-thermal'], structureGroups: ['web-north-pier', 'slab-mid1'] };
  const steel: UnitIdentity = { ...base, id: 'steel', loggers: ['lg-pier', 'lg-span1', 'lg-thermal'], groups: ['web-north-pier'], first: true };
  const slab: UnitIdentity = { ...base, id: 'slab', loggers: ['lg-slab', 'lg-slab-thermal'], groups: ['slab-mid1'], first: false };
  const answeredBy = (payload: string) => [steel, slab].filter((u) => ownsGroup(requestGroupId(Buffer.from(payload)), u)).map((u) => u.id);

  it('the unit with the group, and only it', () => {
    expect(answeredBy('{"group_id":"slab-mid1","reason":"new cabinet"}')).toEqual(['slab']);
    expect(answeredBy('{"group_id":"web-north-pier","reason":"new cabinet"}')).toEqual(['steel']);
  });

  it('an unknown group, a request without one and a payload that is not JSON: the first unit alone (it refuses them)', () => {
    expect(answeredBy('{"group_id":"no-such-group","reason":"x"}')).toEqual(['steel']);
    expect(answeredBy('{"reason":"x"}')).toEqual(['steel']);
    expect(answeredBy('{"group_id":7}')).toEqual(['steel']);
    expect(answeredBy('not json')).toEqual(['steel']);
  });
});
