import { describe, expect, it } from 'vitest';
import { AlarmsConfigSchema } from '../../src/alarms/schema.js';
import { configInput } from './fixtures.js';

const issues = (input: unknown) => {
  const r = AlarmsConfigSchema.safeParse(input);
  return r.success ? [] : r.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`);
};

describe('AlarmsConfigSchema', () => {
  it('accepts the fixture and fills defaults', () => {
    const cfg = AlarmsConfigSchema.parse(configInput());
    expect(cfg.acknowledgement.command_topic).toBe('strainward/{structure}/alarms/ack/{user}');
    expect(cfg.health.no_data).toEqual({ enabled: true, off_delay_s: 0, missing_after_intervals: 3 });
    expect(cfg.health.spike).toMatchObject({ enabled: false, window_samples: 15, k_mads: 3 });
    expect(cfg.flapping).toEqual({ max_cycles: 4, window_s: 600 });
    expect(cfg.rules[0]).toMatchObject({ on_delay_s: 0, off_delay_s: 0, clear_margin: 10 });
  });

  it('reports every cross-field problem at once, each with its path', () => {
    const bad = configInput({
      rules: [
        { id: 'a', kind: 'limit', quantity: 'von_mises_MPa', scope: { kind: 'structure' }, direction: 'above',
          thresholds: [{ level: 'alert', value: 200 }, { level: 'advisory', value: 250 }, { level: 'severe', value: 300 }], action: 'x' },
        { id: 'a', kind: 'limit', quantity: 'principal_1_MPa', scope: { kind: 'structure' }, direction: 'below',
          thresholds: [{ level: 'advisory', value: -10 }, { level: 'alert', value: -5 }], action: 'x' },
      ],
      routes: [{ match: { level: ['urgent'] }, tiers: [['deck-crew', 'nobody']] }],
    });
    expect(issues(bad)).toEqual([
      'rules.0.thresholds.1.level: thresholds must name levels in increasing severity',
      'rules.0.thresholds.2.level: unknown level "severe" (levels: advisory, alert, action)',
      'rules.1.id: duplicate rule id "a"',
      'rules.1.thresholds.1: thresholds below must decrease with severity',
      'routes.0.match.level.0: unknown level "urgent"',
      'routes.0.tiers.0.1: unknown recipient "nobody"',
    ]);
  });

  it('is strict and names unknown keys and bad quantities', () => {
    const input = configInput();
    const withTypo = { ...input, health: { ...(input.health as object), no_dta: {} } };
    expect(issues(withTypo).join()).toMatch(/health.*no_dta/);
    const badQ = configInput({ rules: [{ id: 'q', kind: 'limit', quantity: 'stress_MPa' as never, scope: { kind: 'structure' },
      direction: 'above', thresholds: [{ level: 'alert', value: 1 }], action: 'x' }] });
    expect(issues(badQ)[0]).toMatch(/^rules\.0\.quantity:/);
  });
});
