import type { QuantityDifference } from './compare.js';
import { esc, isoTime, num } from './format.js';
import type { Extreme, GroupPeaks, PeakKind } from './peaks.js';
import type { ReportAlarmTransition, ReportCaptureGap } from './types.js';

/** A numeric cell: shown rounded, the exact value kept in data-value. */
const cell = (v: number | undefined | null, digits = 2) =>
  v === undefined || v === null || !Number.isFinite(v) ? '<td class="n">–</td>' : `<td class="n" data-value="${v}">${num(v, digits)}</td>`;
const ext = (e: Extreme | null) => (e ? `${cell(e.value)}<td>${esc(isoTime(e.timeMs))}</td>` : '<td class="n">–</td><td>–</td>');

/** Peak table: per group max von Mises, max and min principal stress, with times, from trusted results only. Pure. */
export function peaksTable(peaks: readonly GroupPeaks[]): string {
  const rows = peaks.map((p) => `<tr data-group="${esc(p.groupId)}"><td>${esc(p.groupId)}</td>${ext(p.maxVonMises)}${ext(p.maxPrincipal)}${ext(p.minPrincipal)}<td class="n">${p.trusted} of ${p.samples}</td></tr>`);
  return `<p>Peaks come from results without a quality flag only.</p><table class="peaks"><thead><tr><th>group</th><th>max von Mises, MPa</th><th>at (UTC)</th><th>max principal, MPa</th><th>at (UTC)</th><th>min principal, MPa</th><th>at (UTC)</th><th>results without a flag</th></tr></thead><tbody>${rows.join('')}</tbody></table>`;
}

const PEAK_LABELS: Readonly<Record<PeakKind, string>> = { maxVonMises: 'max von Mises', maxPrincipal: 'max principal', minPrincipal: 'min principal' };

/** Flagged results beyond the trusted peaks, with their flags: listed apart, never as peaks. Pure. */
export function flaggedExtremesTable(peaks: readonly GroupPeaks[]): string {
  const rows = peaks.flatMap((p) => p.flagged.map((f) => `<tr class="flagged" data-group="${esc(p.groupId)}" data-kind="${f.kind}"><td>${esc(p.groupId)}</td><td>${PEAK_LABELS[f.kind]}</td>${cell(f.value)}<td>${esc(isoTime(f.timeMs))}</td><td>${esc(f.flags.join(', '))}</td></tr>`));
  if (rows.length === 0) return '<p>No flagged result goes beyond these peaks.</p>';
  return `<p class="warning">Flagged results beyond these peaks: values computed from doubtful readings (see their flags and the instrument-health alarms). They are not the structure's peaks; check the instrument before reading anything into them.</p><table class="flagged-extremes"><thead><tr><th>group</th><th>quantity</th><th>value, MPa</th><th>at (UTC)</th><th>flags</th></tr></thead><tbody>${rows.join('')}</tbody></table>`;
}

/** Every alarm transition in time order, in columns that fit a printed page. Pure. */
export function alarmsTable(alarms: readonly ReportAlarmTransition[], notListed = 0): string {
  if (alarms.length === 0) return '<p>No alarm changed state in this period.</p>';
  const more = notListed > 0 ? `<p class="warning">${notListed} later transitions are not listed here (the table stops at ${alarms.length}); the alarm log and sw_alarm hold every one, and the timelines above draw them all.</p>` : '';
  const subject = (a: ReportAlarmTransition) => [a.group_id, a.channel, a.quantity].filter((x) => x !== undefined && x !== '').join(' · ');
  const rows = [...alarms].sort((a, b) => a.time_ms - b.time_ms).map((a) => `<tr class="${a.class}"><td>${esc(isoTime(a.time_ms))}</td><td>${esc(a.class)}</td><td>${esc(a.level)}</td><td>${esc(a.state.replace(/_/g, ' '))}</td><td>${esc(subject(a))}<br/><small>${esc(a.alarm_id)}</small></td>${cell(a.value, 3)}${cell(a.limit, 3)}<td>${esc(a.message)}</td></tr>`);
  return `<table class="alarms"><colgroup><col style="width:15%"/><col style="width:9%"/><col style="width:9%"/><col style="width:17%"/><col style="width:20%"/><col style="width:8%"/><col style="width:8%"/><col style="width:14%"/></colgroup><thead><tr><th>time (UTC)</th><th>class</th><th>level</th><th>state</th><th>subject and alarm</th><th>value</th><th>limit</th><th>message</th></tr></thead><tbody>${rows.join('')}</tbody></table>${more}`;
}

/** The capture's gaps: what the replay could not read, with where and how much. Pure. */
export function captureGapsTable(gaps: readonly ReportCaptureGap[]): string {
  if (gaps.length === 0) return '<p>The capture was read whole: every message the index lists was replayed.</p>';
  const lost = gaps.reduce((n, g) => n + (g.messages ?? 0), 0);
  const unknown = gaps.filter((g) => g.messages === null).length;
  const rows = gaps.map((g) => `<tr class="gap"><td>${esc(isoTime(g.fromMs))}</td><td>${esc(isoTime(g.toMs))}</td><td class="n">${g.messages === null ? 'unknown' : g.messages}</td><td>${esc(g.file)}</td><td>${esc(g.reason)}</td></tr>`);
  return `<p class="warning">The capture has ${gaps.length} gap${gaps.length === 1 ? '' : 's'}: ${lost} messages lost${unknown > 0 ? ` and ${unknown} gap${unknown === 1 ? '' : 's'} of unknown size` : ''}. Results and alarms of these periods are missing from this replay.</p><table class="gaps"><thead><tr><th>from (UTC)</th><th>to (UTC)</th><th>messages lost</th><th>file</th><th>reason</th></tr></thead><tbody>${rows.join('')}</tbody></table>`;
}

/** Differences between two runs per group and quantity. Pure. */
export function differencesTable(diffs: readonly QuantityDifference[], labelA: string, labelB: string): string {
  if (diffs.length === 0) return '<p>The two runs have no result in common (same group and logger time).</p>';
  const rows = diffs.map((d) => `<tr data-group="${esc(d.groupId)}" data-quantity="${esc(d.quantity)}"><td>${esc(d.groupId)}</td><td>${esc(d.quantity)}</td><td class="n">${d.matched}</td>${cell(d.meanDifference, 4)}${cell(d.maxAbsDifference, 4)}<td>${esc(isoTime(d.maxAtMs))}</td></tr>`);
  return `<p>Differences are ${esc(labelB)} minus ${esc(labelA)}, over results of the same group at the same logger time.</p><table class="differences"><thead><tr><th>group</th><th>quantity</th><th>matched</th><th>mean difference</th><th>max |difference|</th><th>at (UTC)</th></tr></thead><tbody>${rows.join('')}</tbody></table>`;
}
