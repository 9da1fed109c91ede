import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parse } from 'yaml';
import { compileStructure } from '../../src/config/compile.js';

const base = () => parse(readFileSync('config/brannock-mere.yaml', 'utf8'), { merge: true }) as Record<string, unknown>;
const withFatigue = (details: unknown[]) => ({ ...base(), fatigue: { details } });

describe('fatigue configuration', () => {
  it('compiles a direction, a principal and a single-gauge detail once', () => {
    const r = compileStructure(withFatigue([
      { id: 'web-weld-45', group: 'web-north-pier', stress: { kind: 'direction', angle_deg: 45 }, category_MPa: 71, stress_concentration_factor: 1.2 },
      { id: 'web-p1', group: 'web-south-pier', stress: { kind: 'principal', which: 1 }, category_MPa: 80 },
      { id: 'flange-toe', gauge: base().groups ? singleGauge() : 'x', stress: { kind: 'direction' }, category_MPa: 56 },
    ]));
    expect(r.ok, JSON.stringify(!r.ok && r.problems)).toBe(true);
    if (!r.ok) return;
    const d = r.structure.fatigue!.details;
    expect(d.map((x) => x.groupId)).toEqual(['web-north-pier', 'web-south-pier', 'flange-south-mid1']);
    // Plane stress transformation at 45 degrees: (xx + yy) / 2 + xy (common practice).
    expect(d[0].reader).toMatchObject({ kind: 'plane' });
    const rd = d[0].reader as { a: number; b: number; c: number };
    expect([rd.a, rd.b, rd.c].map((v) => Number(v.toFixed(12)))).toEqual([0.5, 0.5, 1]);
    expect(d[0].params.curve.gammaMf).toBe(1.35);
    expect(d[0].params.scf).toBe(1.2);
  });

  it('refuses von Mises with the reason it is not a fatigue quantity', () => {
    const r = compileStructure(withFatigue([{ id: 'vm', group: 'web-north-pier', stress: { kind: 'von_mises' }, category_MPa: 71 }]));
    expect(r.ok).toBe(false);
    if (r.ok) return;
    const p = r.problems.find((x) => x.path.includes('fatigue'));
    expect(p?.path).toContain('stress');
    expect(p?.reason).toMatch(/von Mises is not a fatigue quantity.*sign/);
  });

  it('refuses a category that EN 1993-1-9 does not have, an unknown group and a shear category for direct stress', () => {
    const r = compileStructure(withFatigue([
      { id: 'a', group: 'web-north-pier', stress: { kind: 'direction' }, category_MPa: 70 },
      { id: 'b', group: 'no-such-group', stress: { kind: 'direction' }, category_MPa: 71 },
      { id: 'c', group: 'web-north-pier', stress: { kind: 'shear' }, category_MPa: 71 },
    ]));
    expect(r.ok).toBe(false);
    if (r.ok) return;
    const reasons = r.problems.map((p) => `${p.path}: ${p.reason}`).join('\n');
    expect(reasons).toMatch(/details\[0\]\.category_MPa: 70 is not an EN 1993-1-9 direct stress detail category/);
    expect(reasons).toMatch(/details\[1\]\.group: unknown group "no-such-group"/);
    expect(reasons).toMatch(/details\[2\]\.category_MPa: 71 is not an EN 1993-1-9 shear detail category \(100, 80\)/);
  });
});

describe('fatigue alarm rules in the configuration', () => {
  const withRules = (doc: Record<string, unknown>, rules: unknown[]) => {
    const alarms = doc.alarms as { rules: unknown[] };
    return { ...doc, alarms: { ...alarms, rules: [...alarms.rules, ...rules] } };
  };
  const rate = { id: 'fr', kind: 'fatigue_damage_rate', thresholds: [{ level: 'advisory', damage_per_day: 0.001 }], action: 'inspect' };

  it('the example deck compiles with its fatigue rules', () => {
    const r = compileStructure(base());
    expect(r.ok, JSON.stringify(!r.ok && r.problems)).toBe(true);
    if (!r.ok) return;
    expect(r.structure.alarms!.rules.filter((x) => x.kind.startsWith('fatigue_')).map((x) => x.id)).toEqual(['fatigue-damage-rate', 'fatigue-damage']);
  });

  it('refuses a fatigue rule without a fatigue section, an unknown detail and thresholds out of order, each naming its field', () => {
    const { fatigue: _f, ...noFatigue } = base();
    const alarms = (base().alarms as { rules: { kind: string }[] });
    const plain = { ...noFatigue, alarms: { ...alarms, rules: alarms.rules.filter((x) => !x.kind.startsWith('fatigue_')) } };
    const r1 = compileStructure(withRules(plain, [rate]));
    expect(r1.ok).toBe(false);
    if (!r1.ok) expect(r1.problems.map((p) => `${p.path}: ${p.reason}`)).toContain(`alarms.rules[4].kind: fatigue_damage_rate judges fatigue details, and the structure has no \`fatigue\` section`);
    const r2 = compileStructure(withRules(base(), [
      { ...rate, scope: { kind: 'details', detail_ids: ['flange-north-butt-weld', 'no-such-detail'] } },
      { id: 'fd', kind: 'fatigue_damage', thresholds: [{ level: 'advisory', fraction: 0.8 }, { level: 'alert', fraction: 0.5 }], action: 'inspect' },
    ]));
    expect(r2.ok).toBe(false);
    if (r2.ok) return;
    const reasons = r2.problems.map((p) => `${p.path}: ${p.reason}`).join('\n');
    expect(reasons).toMatch(/alarms\.rules\[7\]\.thresholds\[1\]: threshold values must increase with severity/);
    // The schema's problems come first: scopes are checked once the alarms section parses.
    const r3 = compileStructure(withRules(base(), [{ ...rate, scope: { kind: 'details', detail_ids: ['flange-north-butt-weld', 'no-such-detail'] } }]));
    expect(r3.ok).toBe(false);
    if (!r3.ok) expect(r3.problems.map((p) => `${p.path}: ${p.reason}`)).toEqual([expect.stringMatching(/^alarms\.rules\[6\]\.scope\.detail_ids\[1\]: unknown fatigue detail "no-such-detail" \(details: flange-south-cover-plate-end, /)]);
  });
});

function singleGauge(): string {
  const groups = base().groups as { id: string; elements: { gauge: string }[] }[];
  return groups.find((g) => g.id === 'flange-south-mid1')!.elements[0].gauge;
}
