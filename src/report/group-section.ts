import type { GroupResult, ResultQuantity } from '../model/result.js';
import { esc, isoTime } from './format.js';
import { downsample, findGaps, segmentsOf, type Gap } from './series.js';
import { lineChart, type ChartBand, type ChartSeries } from './svg-chart.js';
import type { QuantityLimits } from './types.js';

const PALETTE = ['#1f4e79', '#b35806', '#35978f', '#762a83', '#8c2d04', '#4d4d4d'];
const STRESS_QS: ResultQuantity[] = ['stress_xx_MPa', 'stress_yy_MPa', 'stress_zz_MPa', 'stress_yz_MPa', 'stress_xz_MPa', 'stress_xy_MPa', 'stress_axial_MPa'];

export interface GroupSectionContext {
  fromMs: number;
  toMs: number;
  widthPx: number;
  gapFactor: number;
  limits: QuantityLimits;
  /** Results of the second run for this group (drawn dashed), if any. */
  comparison?: { label: string; results: readonly GroupResult[] };
  runLabel: string;
}

const has = (rs: readonly GroupResult[], q: ResultQuantity) => rs.some((r) => r.values[q] !== undefined && Number.isFinite(r.values[q]!));
const short = (q: string) => q.replace(/^stress_/, '').replace(/_MPa$|_deg$|_degC$|_micro$/, '');

function bandsFor(limits: QuantityLimits, groupId: string, qs: readonly ResultQuantity[]): ChartBand[] {
  return qs.flatMap((q) => (limits[q] ?? []).filter((b) => !b.groups || b.groups.includes(groupId))
    .map((b) => ({ level: `${short(q)} ${b.level}`, upper: b.upper, lower: b.lower })));
}

/** Gaps of a group's data (time pauses), for shading and listing. */
export function groupGaps(results: readonly GroupResult[], gapFactor: number): Gap[] {
  return findGaps(results.map((r) => r.timeMs), gapFactor);
}

/** One group's plots: stresses, equivalent and principal stresses, temperature, angle (plane), residual (redundant). Pure. */
export function groupSection(groupId: string, results: readonly GroupResult[], ctx: GroupSectionContext): string {
  const gaps = groupGaps(results, ctx.gapFactor);
  const series = (q: ResultQuantity, i: number, rs: readonly GroupResult[] = results, dashed = false, label = short(q), periodDeg = 0): ChartSeries => ({
    id: `${groupId}:${q}${dashed ? ':b' : ''}`, label, color: PALETTE[i % PALETTE.length], dashed,
    segments: downsample(segmentsOf(rs, q, dashed ? findGaps(rs.map((r) => r.timeMs), ctx.gapFactor) : gaps, periodDeg), ctx.fromMs, ctx.toMs, ctx.widthPx),
  });
  const chart = (title: string, unit: string, qs: ResultQuantity[], extra: ChartSeries[] = []) => lineChart({
    title, unit, fromMs: ctx.fromMs, toMs: ctx.toMs, widthPx: ctx.widthPx, gaps,
    series: [...qs.map((q, i) => series(q, i)), ...extra], bands: bandsFor(ctx.limits, groupId, qs),
  });
  const first = results[0];
  const out: string[] = [`<section class="group" id="group-${esc(groupId)}">`, `<h3>${esc(groupId)}</h3>`];
  out.push(`<p class="meta">zone ${esc(first.zone)} · logger ${esc(first.loggerId)} · ${results.length} results</p>`);
  const stressQs = STRESS_QS.filter((q) => has(results, q));
  if (stressQs.length) out.push(chart('Stress components', 'MPa', stressQs));
  const eqQs = (['von_mises_MPa', 'principal_1_MPa', 'principal_2_MPa', 'principal_3_MPa'] as ResultQuantity[]).filter((q) => has(results, q));
  const cmp = ctx.comparison && has(ctx.comparison.results, 'von_mises_MPa')
    ? [series('von_mises_MPa', 5, ctx.comparison.results, true, `von_mises (${ctx.comparison.label})`)] : [];
  if (eqQs.length) out.push(chart('Equivalent and principal stresses', 'MPa', eqQs, cmp));
  if (has(results, 'temperature_degC')) out.push(chart('Temperature used', '°C', ['temperature_degC']));
  if (has(results, 'principal_angle_deg')) {
    // Where the in-plane stress is nearly equal in every direction the principal direction is not
    // defined by the data (noise swings it through 180 degrees): draw it only where it means something.
    const radius = (r: GroupResult) => ((r.values.principal_1_MPa ?? 0) - (r.values.principal_2_MPa ?? 0)) / 2;
    const floor = Math.max(0.5, 0.05 * results.reduce((m, r) => Math.max(m, radius(r)), 0));
    const masked = results.map((r) => (radius(r) >= floor ? r : { ...r, values: { ...r.values, principal_angle_deg: undefined } }));
    out.push(chart('Principal direction (angle from x to principal 1)', 'degrees', [], [series('principal_angle_deg', 0, masked, false, 'principal_angle', 180)]));
    out.push(`<p class="meta">Angle drawn where the in-plane maximum shear stress is at least ${floor.toFixed(2)} MPa.</p>`);
  }
  const residualQs = (['residual_rms_micro', 'fit_std_error_micro'] as ResultQuantity[]).filter((q) => has(results, q));
  if (residualQs.length) out.push(chart('Least-squares residual (redundant group): RMS, and the fit standard error the limit compares', 'microstrain', residualQs));
  if (gaps.length) {
    out.push(`<p class="gaps">Data gaps (missing data is itself an alarm): ${gaps.map((g) =>
      `${esc(isoTime(g.fromMs))} – ${esc(isoTime(g.toMs))} (${((g.toMs - g.fromMs) / 1000).toFixed(1)} s)`).join('; ')}</p>`);
  }
  const flagged = results.filter((r) => r.flags.length > 0).length;
  if (flagged) out.push(`<p class="meta">${flagged} of ${results.length} results carry quality flags.</p>`);
  out.push('</section>');
  return out.join('\n');
}
