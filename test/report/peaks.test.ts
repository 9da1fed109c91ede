import { describe, expect, it } from 'vitest';
import type { GroupResult, ResultQuantity } from '../../src/model/result.js';
import { renderReport } from '../../src/report/render-report.js';
import { planeSeries, result, T0 } from './fixtures.js';

/** Extreme of a quantity over results, computed plainly (the check the table must equal). */
function extreme(rs: GroupResult[], q: ResultQuantity, sign: 1 | -1): { value: number; timeMs: number } {
  let best = { value: -sign * Infinity, timeMs: NaN };
  for (const r of rs) { const v = r.values[q]; if (v !== undefined && sign * v > sign * best.value) best = { value: v, timeMs: r.timeMs }; }
  return best;
}

describe('peak table', () => {
  it('holds each group\'s max von Mises, max principal 1 and min principal with their times', () => {
    const flange = planeSeries('flange-north-mid1', 300);
    // A single gauge: axial stress only; its peaks come from stress_axial_MPa.
    const single = Array.from({ length: 500 }, (_, k) => result('flange-south-mid1', T0 + k * 100, {
      stress_axial_MPa: 30 * Math.sin(k / 40) - 4, von_mises_MPa: Math.abs(30 * Math.sin(k / 40) - 4),
    }));
    const html = renderReport({ title: 't', structureId: 'brannock-mere', generatedAtMs: T0, run: { label: 'a', results: [...flange, ...single] }, alarms: [] });
    const row = (g: string) => {
      const m = new RegExp(`<tr data-group="${g}">(.*?)</tr>`).exec(html)![1];
      return { numbers: [...m.matchAll(/data-value="([^"]+)"/g)].map((x) => Number(x[1])), text: m };
    };
    const f = row('flange-north-mid1');
    const expected = [extreme(flange, 'von_mises_MPa', 1), extreme(flange, 'principal_1_MPa', 1), extreme(flange, 'principal_2_MPa', -1)];
    expect(f.numbers).toEqual(expected.map((e) => e.value));
    for (const e of expected) {
      expect(f.text).toContain(`>${e.value.toFixed(2)}<`);
      expect(f.text).toContain(new Date(e.timeMs).toISOString().replace('T', ' ').replace('Z', ''));
    }
    expect(f.numbers[0]).toBeGreaterThan(95); // the fixture's injected spike is the peak
    const s = row('flange-south-mid1');
    expect(s.numbers).toEqual([extreme(single, 'von_mises_MPa', 1).value, extreme(single, 'stress_axial_MPa', 1).value, extreme(single, 'stress_axial_MPa', -1).value]);
  });
});
