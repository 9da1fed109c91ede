import type { ResultQuantity } from '../model/result.js';
import { esc, isoTime } from './format.js';
import type { GroupAccumulator } from './group-accumulator.js';
import { downsample } from './series.js';
import { lineChart, type ChartBand, type ChartSeries } from './svg-chart.js';
import type { QuantityLimits } from './types.js';

const PALETTE = ['#1f4e79', '#b35806', '#35978f', '#762a83', '#8c2d04', '#4d4d4d'];
const STRESS_QS: ResultQuantity[] = ['stress_xx_MPa', 'stress_yy_MPa', 'stress_zz_MPa', 'stress_yz_MPa', 'stress_xz_MPa', 'stress_xy_MPa', 'stress_axial_MPa'];

export interface GroupSectionContext {
  fromMs: number;
  toMs: number;
  widthPx: number;
  limits: QuantityLimits;
  /** The second run's accumulator for this group (its von Mises drawn dashed), if any. */
  comparison?: { label: string; group: GroupAccumulator };
  runLabel: string;
}

const short = (q: string) => q.replace(/^stress_/, '').replace(/_MPa$|_deg$|_degC$|_micro$/, '');

function bandsFor(limits: QuantityLimits, groupId: string, qs: readonly ResultQuantity[]): ChartBand[] {
  return qs.flatMap((q) => (limits[q] ?? []).filter((b) => !b.groups || b.groups.includes(groupId))
    .map((b) => ({ level: `${short(q)} ${b.level}`, upper: b.upper, lower: b.lower })));
}

/** One group's plots: stresses, equivalent and principal stresses, temperature, angle (plane), residual (redundant). Pure. */
export function groupSection(g: GroupAccumulator, ctx: GroupSectionContext): string {
  const groupId = g.groupId;
  const gaps = g.gaps();
  const series = (q: ResultQuantity, i: number, from: GroupAccumulator = g, dashed = false, label = short(q)): ChartSeries => ({
    id: `${groupId}:${q}${dashed ? ':b' : ''}`, label, color: PALETTE[i % PALETTE.length], dashed,
    segments: downsample(from.segments(q), ctx.fromMs, ctx.toMs, ctx.widthPx),
  });
  const chart = (title: string, unit: string, qs: ResultQuantity[], extra: ChartSeries[] = []) => lineChart({
    title, unit, fromMs: ctx.fromMs, toMs: ctx.toMs, widthPx: ctx.widthPx, gaps,
    series: [...qs.map((q, i) => series(q, i)), ...extra], bands: bandsFor(ctx.limits, groupId, qs),
  });
  const out: string[] = [`<section class="group" id="group-${esc(groupId)}">`, `<h3>${esc(groupId)}</h3>`];
  out.push(`<p class="meta">zone ${esc(g.zone)} · logger ${esc(g.loggerId)} · ${g.count} results</p>`);
  const stressQs = STRESS_QS.filter((q) => g.has(q));
  if (stressQs.length) out.push(chart('Stress components', 'MPa', stressQs));
  const eqQs = (['von_mises_MPa', 'principal_1_MPa', 'principal_2_MPa', 'principal_3_MPa'] as ResultQuantity[]).filter((q) => g.has(q));
  const cmp = ctx.comparison && ctx.comparison.group.has('von_mises_MPa')
    ? [series('von_mises_MPa', 5, ctx.comparison.group, true, `von_mises (${ctx.comparison.label})`)] : [];
  if (eqQs.length) out.push(chart('Equivalent and principal stresses', 'MPa', eqQs, cmp));
  if (g.has('temperature_degC')) out.push(chart('Temperature used', '°C', ['temperature_degC']));
  if (g.has('principal_angle_deg')) {
    // Drawn only where the in-plane stress is not nearly equal in every direction (angleFloorMPa).
    out.push(chart('Principal direction (angle from x to principal 1)', 'degrees', [], [series('principal_angle_deg', 0, g, false, 'principal_angle')]));
    out.push(`<p class="meta">Angle drawn where the in-plane maximum shear stress is at least ${g.angleFloor().toFixed(2)} MPa.</p>`);
  }
  const residualQs = (['residual_rms_micro', 'fit_std_error_micro'] as ResultQuantity[]).filter((q) => g.has(q));
  if (residualQs.length) out.push(chart('Least-squares residual (redundant group): RMS, and the fit standard error the limit compares', 'microstrain', residualQs));
  if (gaps.length || g.gapsNotListed) {
    out.push(`<p class="gaps">Data gaps (missing data is itself an alarm): ${gaps.map((x) =>
      `${esc(isoTime(x.fromMs))} – ${esc(isoTime(x.toMs))} (${((x.toMs - x.fromMs) / 1000).toFixed(1)} s)`).join('; ')}${g.gapsNotListed ? `; and ${g.gapsNotListed} further pauses not listed` : ''}</p>`);
  }
  if (g.flagged) out.push(`<p class="meta">${g.flagged} of ${g.count} results carry quality flags.</p>`);
  out.push('</section>');
  return out.join('\n');
}
