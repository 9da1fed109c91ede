import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadFatigueStates, parseFatigueStates, saveFatigueStates } from '../../src/app/fatigue-state-file.js';
import { detailFigures, detailTrusted, newDetailState, type FatigueDetailParams } from '../../src/fatigue/detail.js';
import { snCurve } from '../../src/fatigue/sn-curve.js';

const p: FatigueDetailParams = { curve: snCurve('direct', 71), scf: 1, gateMPa: 1, binWidthMPa: 10, bins: 20, gapMs: 5000, checkpointMs: 60_000, checkpoints: 24 };

describe('fatigue state file', () => {
  it('a run cut in two by a save and a restore counts exactly what one run counts', async () => {
    const values = Array.from({ length: 3000 }, (_, i) => 60 * Math.sin(i * 0.37) + 25 * Math.sin(i * 1.91));
    const whole = newDetailState(p);
    values.forEach((v, i) => detailTrusted(whole, p, i * 100, v));
    const first = newDetailState(p);
    values.slice(0, 1234).forEach((v, i) => detailTrusted(first, p, i * 100, v));
    const path = join(mkdtempSync(join(tmpdir(), 'sw-fatigue-')), 'fatigue-state.json');
    await saveFatigueStates(path, new Map([['d1', first]]));
    const restored = (await loadFatigueStates(path)).get('d1')!;
    values.slice(1234).forEach((v, i) => detailTrusted(restored, p, (i + 1234) * 100, v));
    expect(detailFigures(restored, p)).toEqual(detailFigures(whole, p));
    expect(detailFigures(whole, p).damage).toBeGreaterThan(0);
  });

  it('an unreadable file is refused naming the field', () => {
    expect(() => parseFatigueStates('{"version":2,"details":{}}')).toThrow(/version/);
    expect(() => parseFatigueStates(JSON.stringify({ version: 1, details: { d1: { ...newDetailState(p), damageCounted: -1 } } }))).toThrow(/details\.d1\.damageCounted/);
  });
});
