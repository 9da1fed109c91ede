import { readFile } from 'node:fs/promises';
import { parse } from 'yaml';
import { beforeAll, describe, expect, it } from 'vitest';
import { compileStructure } from '../../src/config/compile.js';
import { ringSlotBytes, storageKeepsState } from '../../src/config/compile-storage.js';

let doc: Record<string, unknown>;
const compile = (storage: unknown) => compileStructure({ ...doc, storage });
const problems = (storage: unknown): string[] => {
  const r = compile(storage);
  return r.ok ? [] : r.problems.map((p) => `${p.path}: ${p.reason}`);
};

describe('the storage section of the structure file', () => {
  beforeAll(async () => { doc = parse(await readFile('config/brannock-mere.yaml', 'utf8'), { merge: true }) as Record<string, unknown>; });

  it('absent: every group and scan in full, no state to keep', () => {
    const r = compileStructure(doc);
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    const s = r.structure.storage!;
    expect([...s.groups.values()].every((g) => g.summaryIntervalMs === null && g.ringCapacity === 0)).toBe(true);
    expect(s.raw.store).toBe('full');
    expect(storageKeepsState(s)).toBe(false);
  });

  it('per-group overrides of the default; rings sized from the logger scan interval and before_s (1.5 x the scans in before_s + 5 s)', () => {
    const r = compile({ default: { results: 'summary', interval_s: 60 }, groups: [{ group: 'web-north-pier', results: 'full' }, { group: 'slab-mid1', interval_s: 600 }], event_windows: { before_s: 10 } });
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    const g = r.structure.storage!.groups;
    expect(g.get('web-north-pier')!.summaryIntervalMs).toBeNull();
    expect(g.get('web-south-pier')!.summaryIntervalMs).toBe(60_000);
    expect(g.get('slab-mid1')!.summaryIntervalMs).toBe(600_000);
    // lg-pier scans every 0.1 s: (10 + 5) / 0.1 x 1.5 = 225 slots; the slab's reader every 1 s: 22.5 -> 23.
    expect(g.get('web-south-pier')!.ringCapacity).toBe(225);
    expect(g.get('slab-mid1')!.ringCapacity).toBe(23);
    expect(g.get('web-south-pier')!.ringCapacity * ringSlotBytes(4)).toBe(70_200);
    expect(storageKeepsState(r.structure.storage!)).toBe(true);
  });

  it('refuses, naming the field and the reason: an unknown group, one listed twice, an interval a full group would ignore, triggers with nothing summarised, an unknown zone', () => {
    expect(problems({ groups: [{ group: 'web-nort-pier', results: 'summary' }] })).toEqual(['storage.groups[0].group: unknown group "web-nort-pier" (did you mean "web-north-pier"?)']);
    expect(problems({ default: { results: 'summary' }, groups: [{ group: 'slab-mid1' }, { group: 'slab-mid1' }] })).toEqual(['storage.groups[1].group: group "slab-mid1" is listed twice']);
    expect(problems({ groups: [{ group: 'slab-mid1', interval_s: 60 }] })).toEqual(['storage.groups[0].interval_s: the group is stored in full: an interval applies to `results: summary` only']);
    expect(problems({ raw: { store: 'full', interval_s: 5 } })).toEqual(['storage.raw.interval_s: raw readings are stored `full`: an interval applies to `store: summary` only']);
    expect(problems({ event_windows: { triggers: [{ id: 't', kind: 'level', quantity: 'von_mises_MPa', above: 50 }] } }))
      .toEqual(['storage.event_windows.triggers: every group is stored in full: a window would store nothing more (set `results: summary` for some group)']);
    expect(problems({ default: { results: 'summary' }, event_windows: { triggers: [{ id: 't', kind: 'level', quantity: 'von_mises_MPa', above: 50, scope: { kind: 'zone', zone: 'peir' } }] } }))
      .toEqual([expect.stringMatching(/^storage\.event_windows\.triggers\[0\]\.scope\.zone: unknown zone "peir"/)]);
  });

  it('refuses by schema: an interval below 0.1 s or not a whole number of ms, a level trigger without a level, an unknown key', () => {
    expect(problems({ default: { results: 'summary', interval_s: 0.05 } })).toEqual([expect.stringMatching(/^storage\.default\.interval_s: /)]);
    expect(problems({ default: { results: 'summary', interval_s: 1.0005 } })).toEqual(['storage.default.interval_s: must be a whole number of milliseconds']);
    expect(problems({ default: { results: 'summary' }, event_windows: { triggers: [{ id: 't', kind: 'level', quantity: 'von_mises_MPa' }] } }))
      .toEqual([expect.stringMatching(/^storage\.event_windows\.triggers\[0\]\.above: give `above` or `below`/)]);
    expect(problems({ default: { results: 'summary', intervall_s: 10 } })).toEqual([expect.stringMatching(/^storage\.default/)]);
  });
});
