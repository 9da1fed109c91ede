import { describe, expect, it } from 'vitest';
import { renderReport } from '../../src/report/render-report.js';
import { downsample, findGaps, segmentsOf } from '../../src/report/series.js';
import { planeSeries, result, T0 } from './fixtures.js';

const polylines = (html: string, series: string) =>
  [...html.matchAll(new RegExp(`<polyline class="series" data-series="${series}" points="([^"]+)"`, 'g'))]
    .map((m) => m[1].split(' ').map((p) => p.split(',').map(Number)));

describe('gaps and downsampling', () => {
  it('a gap in the data is a break in the polyline, with the gap shaded between the two pieces', () => {
    const rs = planeSeries('web-south-pier', 200, [60, 120]);
    const html = renderReport({ title: 't', structureId: 'brannock-mere', generatedAtMs: T0, run: { label: 'a', results: rs }, alarms: [] });
    const lines = polylines(html, 'web-south-pier:stress_xx_MPa');
    expect(lines).toHaveLength(2);
    const gap = /<rect class="gap" x="([\d.]+)" y="[\d.]+" width="([\d.]+)"/.exec(html)!;
    const gx = Number(gap[1]), gw = Number(gap[2]);
    const endFirst = lines[0].at(-1)![0], startSecond = lines[1][0][0];
    expect(Math.abs(endFirst - gx)).toBeLessThan(0.2);
    expect(Math.abs(startSecond - (gx + gw))).toBeLessThan(0.2);
    expect(gw).toBeGreaterThan(100); // 60 s of 200 s on an ~784 px plot
    expect(html).toContain('Data gaps (missing data is itself an alarm)');
  });

  it('without a gap the line is one piece', () => {
    const html = renderReport({ title: 't', structureId: 's', generatedAtMs: T0, run: { label: 'a', results: planeSeries('g', 100) }, alarms: [] });
    expect(polylines(html, 'g:stress_xx_MPa')).toHaveLength(1);
    expect(html).not.toContain('class="gap"');
  });

  it('a result lacking the quantity (underdetermined) breaks that quantity\'s line', () => {
    const rs = planeSeries('g', 10);
    rs[50] = result('g', rs[50].timeMs, { temperature_degC: 15 }, ['underdetermined']);
    expect(segmentsOf(rs, 'stress_xx_MPa', findGaps(rs.map((r) => r.timeMs), 3)).map((s) => s.t.length)).toEqual([50, 49]);
  });

  it('min/max per pixel keeps the extremes of a long series and bounds its length', () => {
    const n = 200_000;
    const t = Array.from({ length: n }, (_, i) => T0 + i * 10);
    const v = t.map((_, i) => Math.sin(i / 5000) + (i === 123_457 ? 50 : 0) - (i === 7 ? 30 : 0));
    const [d] = downsample([{ t, v }], T0, T0 + n * 10, 500);
    expect(d.t.length).toBeLessThanOrEqual(4 * 500);
    const max = (a: number[]) => a.reduce((x, y) => Math.max(x, y), -Infinity);
    const min = (a: number[]) => a.reduce((x, y) => Math.min(x, y), Infinity);
    expect(max(d.v)).toBe(max(v));
    expect(min(d.v)).toBe(min(v));
    expect(max(v)).toBeGreaterThan(48); // the spike, not the sine
    expect(d.t.indexOf(T0 + 123_457 * 10)).toBeGreaterThanOrEqual(0);
    for (let i = 1; i < d.t.length; i++) expect(d.t[i]).toBeGreaterThan(d.t[i - 1]);
  });
});

describe('periodic quantities', () => {
  it('breaks a principal direction where it wraps from +90 to -90 degrees, not elsewhere', () => {
    const mk = (t: number, a: number) => ({ structureId: 's', groupId: 'g', zone: 'z', loggerId: 'l', timeMs: t, seq: null, values: { principal_angle_deg: a }, elementStrainMicro: {}, flags: [] });
    const rs = [mk(0, 80), mk(1, 88), mk(2, -89), mk(3, -85), mk(4, -40)];
    expect(segmentsOf(rs, 'principal_angle_deg', [], 180).map((s) => s.v)).toEqual([[80, 88], [-89, -85, -40]]);
    expect(segmentsOf(rs, 'principal_angle_deg', []).map((s) => s.v)).toEqual([[80, 88, -89, -85, -40]]);
  });
});
