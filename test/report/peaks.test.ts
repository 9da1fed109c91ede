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
  const row = (html: string, g: string) => {
    const m = new RegExp(`<tr data-group="${g}">(.*?)</tr>`).exec(html)![1];
    return { numbers: [...m.matchAll(/data-value="([^"]+)"/g)].map((x) => Number(x[1])), text: m };
  };

  it('holds each group\'s max von Mises, max principal 1 and min principal with their times', () => {
    const flange = planeSeries('flange-north-mid1', 300);
    // A single gauge: axial stress only; its peaks come from stress_axial_MPa.
    const single = Array.from({ length: 500 }, (_, k) => result('flange-south-mid1', T0 + k * 100, {
      stress_axial_MPa: 30 * Math.sin(k / 40) - 4, von_mises_MPa: Math.abs(30 * Math.sin(k / 40) - 4),
    }));
    const html = renderReport({ title: 't', structureId: 'brannock-mere', generatedAtMs: T0, run: { label: 'a', results: [...flange, ...single] }, alarms: [] });
    const f = row(html, 'flange-north-mid1');
    const expected = [extreme(flange, 'von_mises_MPa', 1), extreme(flange, 'principal_1_MPa', 1), extreme(flange, 'principal_2_MPa', -1)];
    expect(f.numbers).toEqual(expected.map((e) => e.value));
    for (const e of expected) {
      expect(f.text).toContain(`>${e.value.toFixed(2)}<`);
      expect(f.text).toContain(new Date(e.timeMs).toISOString().replace('T', ' ').replace('Z', ''));
    }
    expect(f.numbers[0]).toBeGreaterThan(95); // unflagged, the fixture's jump at sample 1234 is a peak like any other
    const s = row(html, 'flange-south-mid1');
    expect(s.numbers).toEqual([extreme(single, 'von_mises_MPa', 1).value, extreme(single, 'stress_axial_MPa', 1).value, extreme(single, 'stress_axial_MPa', -1).value]);
    expect(html).toContain('No flagged result goes beyond these peaks.');
  });

  it('takes peaks from results without a flag only, and lists flagged extremes apart with their flags', () => {
    // The fixture's jump at sample 1234 (+140 MPa on sx) flagged as the spike it is; one more flagged
    // result (an element missing) below the trusted peaks, which is not listed.
    const flange = planeSeries('flange-north-mid1', 300).map((r, k) =>
      k === 1234 ? { ...r, flags: ['reading_spike'] as const } : k === 40 ? { ...r, flags: ['element_missing'] as const } : r);
    const trusted = flange.filter((r) => r.flags.length === 0);
    const html = renderReport({ title: 't', structureId: 'brannock-mere', generatedAtMs: T0, run: { label: 'a', results: flange }, alarms: [] });
    const f = row(html, 'flange-north-mid1');
    const expected = [extreme(trusted, 'von_mises_MPa', 1), extreme(trusted, 'principal_1_MPa', 1), extreme(trusted, 'principal_2_MPa', -1)];
    expect(f.numbers).toEqual(expected.map((e) => e.value));
    // sx = 40 sin(t/7) at most 40 without the spike; von Mises with sy and txy stays below 60.
    expect(f.numbers[0]).toBeLessThan(60);
    expect(f.text).toContain(`${trusted.length} of ${flange.length}`);
    const listed = [...html.matchAll(/<tr class="flagged" data-group="flange-north-mid1" data-kind="(\w+)">(.*?)<\/tr>/g)];
    const spike = flange[1234];
    expect(listed.map((m) => m[1])).toEqual(['maxVonMises', 'maxPrincipal']); // the spike raised sx: not the min principal
    expect(listed[0][2]).toContain(`data-value="${spike.values.von_mises_MPa}"`);
    expect(listed[1][2]).toContain(`data-value="${spike.values.principal_1_MPa}"`);
    for (const m of listed) expect(m[2]).toContain('<td>reading_spike</td>');
    expect(spike.values.von_mises_MPa!).toBeGreaterThan(95);
  });
});
