import { esc, isoTime, num } from './format.js';
import { fatigueChart } from './fatigue-chart.js';
import type { ReportFatigue, ReportFatigueDetail } from './types.js';

const cell = (v: number | null, text: string) => (v === null || !Number.isFinite(v) ? `<td class="n">${esc(text)}</td>` : `<td class="n" data-value="${v}">${esc(text)}</td>`);
const sci = (v: number) => (v === 0 ? '0' : Math.abs(v) < 1e-3 ? v.toExponential(2) : v.toPrecision(3));
/** A duration in the unit that reads best: s, min, h or days. */
const span = (s: number) => (s < 120 ? `${num(s, 1)} s` : s < 7200 ? `${num(s / 60, 1)} min` : s < 172_800 ? `${num(s / 3600, 1)} h` : `${num(s / 86_400, 1)} days`);

function life(d: ReportFatigueDetail): string {
  if (d.remainingLifeYears === null) return 'not known';
  if (d.remainingLifeYears === Infinity) return 'no damage in the window';
  return `${d.remainingLifeYears >= 100 ? d.remainingLifeYears.toFixed(0) : d.remainingLifeYears.toPrecision(3)} years`;
}

/**
 * The fatigue section of the report: per detail the damage so far, its rate and the remaining
 * life extrapolated from it, with the time not monitored and the assumptions printed beside; the
 * histogram against the S-N curve; and, with a comparison run, the difference in damage. Pure.
 */
export function fatigueSection(f: ReportFatigue, widthPx: number, runLabel: string, comparisonLabel?: string): string {
  const out: string[] = [];
  out.push('<h2 id="fatigue">Fatigue</h2>');
  out.push(`<p>Figures at ${esc(isoTime(f.atMs))} UTC (logger time), from results without a quality flag only: rainflow counting (ASTM E1049-85, three-point method, the residue as half cycles), Miner's rule on the EN 1993-1-9 S-N curve of each detail's category with its partial factors, at the hot spot (measured range times the stress concentration factor).</p>`);
  const unmonitored = f.details.filter((d) => d.notMonitoredS > 0);
  if (unmonitored.length > 0) {
    out.push(`<p class="warning">Not monitored: ${unmonitored.map((d) => `${esc(d.id)} ${span(d.notMonitoredS)}`).join(', ')} (gaps and flagged results). No damage is counted for that time: the damage shown is what was measured, not all there was.</p>`);
  }
  const rows = f.details.map((d) => `<tr data-detail="${esc(d.id)}"><td>${esc(d.id)}<br/><small>${esc(d.location)}</small></td>${cell(d.damage, sci(d.damage))}${cell(d.damagePerDay, d.damagePerDay === null ? 'not known' : sci(d.damagePerDay))}<td class="n">${span(d.rateWindowS)}</td>${cell(d.remainingLifeYears, life(d))}<td class="n">${num(d.cycles, 1)}</td><td class="n" data-value="${d.monitoredS}">${span(d.monitoredS)}</td><td class="n" data-value="${d.notMonitoredS}">${span(d.notMonitoredS)}</td><td class="n">${d.breaks}</td></tr>`);
  out.push(`<table class="fatigue"><colgroup><col style="width:24%"/><col style="width:10%"/><col style="width:10%"/><col style="width:9%"/><col style="width:12%"/><col style="width:8%"/><col style="width:10%"/><col style="width:10%"/><col style="width:7%"/></colgroup><thead><tr><th>detail</th><th>damage (Miner)</th><th>damage per day</th><th>rate over</th><th>remaining life at that rate</th><th>cycles</th><th>monitored</th><th>not monitored</th><th>breaks</th></tr></thead><tbody>${rows.join('')}</tbody></table>`);
  out.push(`<p>The remaining life is (1 - damage) / damage per monitored day, assuming:</p><ul class="assumptions">${f.assumptions.map((a) => `<li>${esc(a)}</li>`).join('')}</ul>`);
  if (f.comparison !== undefined) {
    const other = new Map(f.comparison.map((d) => [d.id, d]));
    const diff = f.details.map((d) => {
      const o = other.get(d.id);
      if (o === undefined) return `<tr data-detail="${esc(d.id)}"><td>${esc(d.id)}</td>${cell(d.damage, sci(d.damage))}<td class="n">not counted</td><td class="n">–</td><td class="n">–</td></tr>`;
      const rel = d.damage > 0 ? (o.damage / d.damage - 1) * 100 : null;
      return `<tr data-detail="${esc(d.id)}"><td>${esc(d.id)}</td>${cell(d.damage, sci(d.damage))}${cell(o.damage, sci(o.damage))}${cell(o.damage - d.damage, sci(o.damage - d.damage))}${cell(rel, rel === null ? '–' : `${rel >= 0 ? '+' : ''}${rel.toFixed(2)} %`)}</tr>`;
    });
    out.push(`<h3>Damage compared</h3><p>${esc(comparisonLabel ?? 'comparison')} against ${esc(runLabel)}, each counted from the same capture.</p><table class="fatigue-differences"><thead><tr><th>detail</th><th>${esc(runLabel)}</th><th>${esc(comparisonLabel ?? 'comparison')}</th><th>difference</th><th>relative</th></tr></thead><tbody>${diff.join('')}</tbody></table>`);
  }
  for (const d of f.details) {
    out.push(`<h3 id="fatigue-${esc(d.id)}">${esc(d.id)}</h3><p>${esc(d.describe)}. ${esc(d.location)}.</p>`);
    out.push(fatigueChart({ title: `${d.id}: stress-range histogram against the S-N curve`, binWidthMPa: d.binWidthMPa, counts: d.counts, curve: d.curve, widthPx }));
  }
  return out.join('\n');
}
