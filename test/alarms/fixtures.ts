import type { GroupResult } from '../../src/model/result.js';
import type { QualityFlag } from '../../src/model/quality.js';
import type { LoggerFrame } from '../../src/model/raw-message.js';
import { AlarmsConfigSchema, type AlarmsConfig, type AlarmsConfigInput } from '../../src/alarms/schema.js';
import type { AlarmLookups, ChannelInfo } from '../../src/alarms/types.js';

/** Invented scenario: Brannock Mere Crossing, a two-span composite deck. */
export const STRUCTURE = 'brannock-mere';
export const T0 = Date.UTC(2031, 4, 12, 8, 0, 0);

export function configInput(over: Partial<AlarmsConfigInput> = {}): AlarmsConfigInput {
  return {
    levels: ['advisory', 'alert', 'action'],
    rules: [
      {
        id: 'vm-girder', kind: 'limit', quantity: 'von_mises_MPa', scope: { kind: 'structure' }, direction: 'above',
        thresholds: [{ level: 'advisory', value: 150 }, { level: 'alert', value: 200 }, { level: 'action', value: 250 }],
        clear_margin: 10, action: 'Inspect the girder bottom flange at midspan; restrict heavy traffic if action level.',
      },
    ],
    health: { level: 'advisory', spike: { enabled: false }, flatline: { window_s: 120, tolerance: 0.5 } },
    recipients: [
      { id: 'deck-crew', kind: 'crew', channels: [{ kind: 'mqtt', topic: 'strainward/{structure}/notify/deck-crew' }] },
      { id: 'instr-crew', kind: 'crew', channels: [{ kind: 'mqtt', topic: 'strainward/{structure}/notify/instr-crew' }] },
      { id: 'on-call', kind: 'on_call', channels: [{ kind: 'log' }] },
      { id: 'control', kind: 'control_room', channels: [{ kind: 'log' }] },
    ],
    routes: [
      { match: { alarm_class: ['structural'] }, tiers: [['deck-crew'], ['on-call'], ['control']] },
      { match: { alarm_class: ['health'] }, tiers: [['instr-crew'], ['on-call']] },
    ],
    escalation: { after_s: 600 },
    acknowledgement: { allowed_users: { structural: ['eng-ashdown'], health: ['tech-morrow', 'eng-ashdown'] } },
    ...over,
  };
}

export function config(over: Partial<AlarmsConfigInput> = {}): AlarmsConfig {
  return AlarmsConfigSchema.parse(configInput(over));
}

const ch = (groupId: string | null, location: string): ChannelInfo => ({
  groupId, location, validMin: -3000, validMax: 3000, unit: 'micro',
});

export const lookups: AlarmLookups = {
  structureId: STRUCTURE,
  groups: new Map([
    ['S1-MID-G2', { zone: 'span-1', location: 'span 1 midspan, girder G2 bottom flange' }],
    ['S2-MID-G2', { zone: 'span-2', location: 'span 2 midspan, girder G2 bottom flange' }],
  ]),
  loggers: new Map([
    ['LG-01', {
      zone: 'span-1', location: 'span 1 cabinet at pier P1', expectedIntervalS: 10,
      channels: new Map([['ch01', ch('S1-MID-G2', 'span 1 G2 gauge a')], ['ch02', ch('S1-MID-G2', 'span 1 G2 gauge b')]]),
    }],
  ]),
};

export function result(tMs: number, vm: number, flags: QualityFlag[] = [], groupId = 'S1-MID-G2'): GroupResult {
  return {
    structureId: STRUCTURE, groupId, zone: groupId.startsWith('S1') ? 'span-1' : 'span-2', loggerId: 'LG-01',
    timeMs: tMs, seq: null, values: { von_mises_MPa: vm, temperature_age_s: 0 }, elementStrainMicro: {}, flags,
  };
}

export function frame(tMs: number, values: Record<string, number | null>, loggerId = 'LG-01'): LoggerFrame {
  return { structureId: STRUCTURE, loggerId, timeMs: tMs, seq: null, values: new Map(Object.entries(values)), arrivalMs: tMs };
}
