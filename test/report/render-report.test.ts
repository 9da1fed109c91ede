import { describe, expect, it } from 'vitest';
import { renderReport, REPORT_NOTICES } from '../../src/report/render-report.js';
import type { ReportAlarmTransition, ReportInput } from '../../src/report/types.js';
import { planeSeries, result, T0 } from './fixtures.js';
import { markupProblems, svgElements } from './xml-check.js';

const alarms: ReportAlarmTransition[] = [
  { time_ms: T0 + 20_000, alarm_id: 'bm:out_of_range:lg-span1/ch02:1', class: 'health', state: 'active_unacknowledged', level: 'notice', group_id: 'flange-north-mid1', channel: 'ch02', quantity: 'reading', value: 15000, limit: 5000, message: 'reading outside the valid range' },
  { time_ms: T0 + 40_000, alarm_id: 'bm:out_of_range:lg-span1/ch02:1', class: 'health', state: 'cleared_unacknowledged', level: 'notice', group_id: 'flange-north-mid1', channel: 'ch02', message: 'back in range' },
  { time_ms: T0 + 50_000, alarm_id: 'bm:no_data:lg-thermal:1', class: 'health', state: 'active_unacknowledged', level: 'notice', channel: 'lg-thermal', message: 'logger silent' },
  { time_ms: T0 + 30_000, alarm_id: 'bm:vm-high:flange-north-mid1:1', class: 'structural', state: 'active_unacknowledged', level: 'warning', group_id: 'flange-north-mid1', quantity: 'von_mises_MPa', value: 101.2, limit: 90, message: 'von Mises above the warning limit <check>' },
];

function input(extra: Partial<ReportInput> = {}): ReportInput {
  return {
    title: 'Brannock Mere Crossing – diagnosis', structureId: 'brannock-mere', generatedAtMs: T0 + 3_600_000,
    run: { label: 'live', results: [...planeSeries('flange-north-mid1', 200), ...planeSeries('web-south-pier', 200, [60, 120])] },
    alarms, limits: { von_mises_MPa: [{ level: 'warning', upper: 90 }, { level: 'alarm', upper: 150 }], stress_xx_MPa: [{ level: 'warning', lower: -80, groups: ['web-south-pier'] }] },
    ...extra,
  };
}

describe('renderReport', () => {
  const html = renderReport(input());

  it('opens with the three notices and has every section', () => {
    const top = html.slice(0, html.indexOf('<h2'));
    for (const n of REPORT_NOTICES) expect(top).toContain(n);
    for (const id of ['peaks', 'health', 'alarms', 'groups']) expect(html).toContain(`<h2 id="${id}">`);
    expect(html).not.toContain('id="differences"');
    expect(html).toContain('id="group-flange-north-mid1"');
    expect(html).toContain('Principal direction (angle from x to principal 1)');
    expect(html).toContain('Least-squares residual (redundant group)');
    expect(html).toContain('Temperature used');
  });

  it('is self-contained: no script, no external stylesheet, font or image, only the SVG namespace URL', () => {
    expect(html).not.toMatch(/<script|<link|<img|@import|url\(/i);
    expect(html.match(/https?:\/\/[^"\s]+/g)!.every((u) => u === 'http://www.w3.org/2000/svg')).toBe(true);
  });

  it('the document and every SVG are well-formed (balanced tags, quoted attributes, escaped text)', () => {
    const svgs = svgElements(html);
    expect(svgs.length).toBe(2 + 2 * 5); // health + structural timelines, five charts per group
    for (const svg of svgs) expect(markupProblems(svg)).toEqual([]);
    expect(markupProblems(html)).toEqual([]);
    expect(html).toContain('&lt;check&gt;'); // the alarm message's markup characters were escaped
    // The checker itself catches what it should (guards against a vacuous pass).
    expect(markupProblems('<svg><g></svg>')).not.toEqual([]);
    expect(markupProblems('<svg><text>a & b</text></svg>')).not.toEqual([]);
  });

  it('draws the alarm bands of the configured limits', () => {
    expect(html).toContain('data-level="von_mises warning"');
    // The 150 MPa alarm limit lies beyond the data (peak about 145 MPa plus 5 % of the range): named at the top edge, the axis not stretched.
    expect(html).not.toContain('data-level="von_mises alarm"');
    expect(html).toMatch(/data-edge="top"[^>]*>▲ above the plot: von_mises alarm 150</);
    // A group-scoped limit appears on that group's chart only.
    // (its -80 MPa lies below that group's data, so it is named at the bottom edge).
    expect(html.match(/▼ below the plot: xx warning −80/g)).toHaveLength(1);
  });

  it('scales a stress plot to its data: a 70 MPa event fills the plot under a 250 MPa limit, which is named at the edge', () => {
    const rs = Array.from({ length: 600 }, (_, k) => result('g', T0 + k * 100, { von_mises_MPa: k === 300 ? 70 : 5 + (k % 10) * 0.1 }));
    const one = renderReport(input({ run: { label: 'a', results: rs }, alarms: [], limits: { von_mises_MPa: [{ level: 'advisory', upper: 55 }, { level: 'action', upper: 250 }] } }));
    const chart = svgElements(one).find((s) => s.includes('Equivalent and principal stresses'))!;
    const ticks = [...chart.matchAll(/<text class="tick" x="57" y="[\d.]+" text-anchor="end">([^<]+)</g)].map((m) => Number(m[1].replace('−', '-')));
    expect(Math.max(...ticks)).toBeLessThanOrEqual(80); // 70 MPa data, 5 % headroom, ticks every 10 or 20
    expect(chart).toContain('data-level="von_mises advisory"'); // 55 lies within the data: drawn as a band
    expect(chart).toContain('▲ above the plot: von_mises action 250');
  });

  it('tells the levels apart in the timeline by pattern and by name, not colour alone', () => {
    const two: ReportAlarmTransition[] = [
      { ...alarms[0], level: 'advisory' },
      { ...alarms[2], level: 'alert' },
    ];
    const h = svgElements(renderReport(input({ alarms: two, levels: ['advisory', 'alert', 'action'] })))[0];
    expect(h).toMatch(/data-level="advisory"[^>]*fill="#ffffff"[^>]*stroke-dasharray/);
    expect(h).toMatch(/data-level="alert"[^>]*fill="url\(#health-alarms-active-hatch\)"/);
    expect(h).toContain('○ advisory');
    expect(h).toContain('△ alert');
  });

  it('shows the health timeline with one bar per active span, open spans running to the end', () => {
    const health = svgElements(html)[0];
    expect(health).toContain('Health alarms active');
    expect(health.match(/<rect class="span"/g)).toHaveLength(2);
    expect(health).toContain('still active');
  });

  it('lists every alarm transition in time order', () => {
    const table = html.slice(html.indexOf('<table class="alarms"'), html.indexOf('</table>', html.indexOf('<table class="alarms"')));
    expect(table.match(/<tr class=/g)).toHaveLength(4);
    expect(table.indexOf('<td>structural</td><td>warning</td><td>active unacknowledged')).toBeGreaterThan(table.indexOf('12:00:20'));
    expect(table).toContain('data-value="101.2"');
  });

  it('with a second run, reports the mean and max difference per group and quantity', () => {
    const a = planeSeries('flange-north-mid1', 20);
    const b = a.map((r, i) => result(r.groupId, r.timeMs, { ...r.values, von_mises_MPa: r.values.von_mises_MPa! + (i % 2 === 0 ? 1 : 2) }));
    const two = renderReport(input({ run: { label: 'live', results: a }, comparison: { label: 'replay-b', results: b } }));
    expect(two).toContain('<h2 id="differences">');
    const row = /<tr data-group="flange-north-mid1" data-quantity="von_mises_MPa">(.*?)<\/tr>/.exec(two)![1];
    const values = [...row.matchAll(/data-value="([^"]+)"/g)].map((m) => Number(m[1]));
    expect(values[0]).toBeCloseTo(1.5, 12); // mean of alternating +1 and +2 over 200 results
    expect(values[1]).toBeCloseTo(2, 12);
    expect(row).toContain('<td class="n">200</td>');
    const same = /<tr data-group="flange-north-mid1" data-quantity="stress_xx_MPa">(.*?)<\/tr>/.exec(two)![1];
    expect([...same.matchAll(/data-value="([^"]+)"/g)].map((m) => Number(m[1]))).toEqual([0, 0]);
    expect(two).toContain('von_mises (replay-b)'); // drawn dashed beside the first run
    expect(markupProblems(two)).toEqual([]);
  });

  it('says so when there are no results at all', () => {
    const empty = renderReport(input({ run: { label: 'live', results: [] }, alarms: [] }));
    expect(empty).toContain('No result in this period');
    expect(markupProblems(empty)).toEqual([]);
  });
});
