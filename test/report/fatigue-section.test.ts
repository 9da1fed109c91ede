import { describe, expect, it } from 'vitest';
import { snCurve } from '../../src/fatigue/sn-curve.js';
import { renderReport } from '../../src/report/render-report.js';
import type { ReportFatigueDetail, ReportInput } from '../../src/report/types.js';
import { planeSeries, T0 } from './fixtures.js';
import { markupProblems, svgElements } from './xml-check.js';

/** Invented figures of two details (report layout only; the counting is tested in test/fatigue). */
const weld: ReportFatigueDetail = {
  id: 'weld-1', groupId: 'flange-north-mid1', location: 'north girder flange butt weld', describe: 'direction stress at 0 deg of group flange-north-mid1, category 71',
  curve: snCurve('direct', 71, 1, 1.35), damage: 0.0123, damagePerDay: 0.0004, rateWindowS: 86_400, remainingLifeYears: (1 - 0.0123) / 0.0004 / 365.25,
  cycles: 1234.5, monitoredS: 80_000, notMonitoredS: 6_400, breaks: 3, binWidthMPa: 5, counts: [900, 200, 80, 30, 20, 4, 0.5, 0, 1],
};
const quiet: ReportFatigueDetail = { ...weld, id: 'stiffener-1', damage: 0, damagePerDay: 0, remainingLifeYears: Infinity, notMonitoredS: 0, breaks: 0, counts: [50, 0, 0, 0, 0, 0, 0, 0, 0] };

function input(extra: Partial<ReportInput> = {}): ReportInput {
  return {
    title: 'Brannock Mere Crossing – diagnosis', structureId: 'brannock-mere', generatedAtMs: T0 + 3_600_000,
    run: { label: 'live', results: planeSeries('flange-north-mid1', 20) }, alarms: [],
    fatigue: { atMs: T0 + 20_000, details: [weld, quiet], assumptions: ['loading stays as measured', 'Miner\'s rule'] },
    ...extra,
  };
}

describe('report: fatigue section', () => {
  const html = renderReport(input());

  it('shows damage, rate and remaining life per detail with the assumptions, and warns of time not monitored', () => {
    expect(markupProblems(html)).toEqual([]);
    expect(html).toContain('<h2 id="fatigue">Fatigue</h2>');
    expect(html).toContain('<a href="#fatigue">Fatigue</a>');
    const row = html.match(/<tr data-detail="weld-1">.*?<\/tr>/)![0];
    expect(row).toContain('data-value="0.0123">0.0123<');
    expect(row).toContain('>4.00e-4<');
    expect(row).toContain(`>${((1 - 0.0123) / 0.0004 / 365.25).toPrecision(3)} years<`);
    expect(row).toContain('>106.7 min<'); // 6400 s not monitored
    expect(html.match(/<tr data-detail="stiffener-1">.*?<\/tr>/)![0]).toContain('no damage in the window');
    expect(html).toMatch(/<p class="warning">Not monitored: weld-1 106\.7 min/);
    expect(html).toContain('<li>loading stays as measured</li>');
    expect(html).not.toContain('Damage compared');
  });

  it('draws each histogram against its S-N curve, the cut-off where EN 1993-1-9 puts it', () => {
    const charts = svgElements(html).filter((s) => s.includes('fatigue-chart'));
    expect(charts).toHaveLength(2);
    expect(charts[0].match(/class="bin" data-bin="\d+"/g)).toHaveLength(8); // the non-empty bins
    expect(charts[0]).toContain('data-bin="8" data-cycles="1"'); // the overflow bin
    // Source: EN 1993-1-9:2005 7.1: delta_sigma_L = 0.549 x 0.737 x 71 = 28.7 MPa; with gamma_Mf 1.35 the range at the
    // detail doing no damage is below 28.7 / 1.35 = 21.3 MPa.
    expect(charts[0]).toContain('cut-off 21.3 MPa');
    expect(charts[0]).toMatch(/<polyline class="sn-curve" points="[\d., ]+"/);
  });

  it('with a comparison run, the difference in damage per detail', () => {
    const other = renderReport(input({
      comparison: { label: 'corrected.yaml', results: planeSeries('flange-north-mid1', 20) },
      fatigue: { atMs: T0, details: [weld, quiet], assumptions: [], comparison: [{ ...weld, damage: 0.0246 }] },
    }));
    expect(markupProblems(other)).toEqual([]);
    const t = other.match(/<table class="fatigue-differences">.*?<\/table>/)![0];
    expect(t).toContain('>+100.00 %<');
    expect(t.match(/<tr data-detail="stiffener-1">.*?<\/tr>/)![0]).toContain('not counted');
  });
});
