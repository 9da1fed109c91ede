import { clockLabel, esc } from './format.js';
import { timeTicks } from './ticks.js';
import type { ActiveSpan, ReportAlarmTransition } from './types.js';

/**
 * Row label of an alarm: the instrument it is about (channel, else group) and the check or rule,
 * which is the second part of an alarm id `<structure>:<rule>:<subject>:<n>`; else the whole id.
 */
export function alarmLabel(a: ReportAlarmTransition): string {
  const rule = a.alarm_id.split(':')[1];
  const subject = a.channel ?? a.group_id;
  if (rule !== undefined && subject !== undefined) return `${subject} · ${rule}`;
  return [a.group_id, a.channel, a.quantity].filter((x) => x !== undefined && x !== '').join(' · ') || a.alarm_id;
}

/**
 * Active spans of the alarms of one class from their transitions: an alarm is active from a
 * transition into an `active_*` state until one into `cleared_*` or `closed`. New array, by start.
 */
export function activeSpans(transitions: readonly ReportAlarmTransition[], cls: 'structural' | 'health'): ActiveSpan[] {
  const open = new Map<string, ActiveSpan>();
  const spans: ActiveSpan[] = [];
  const sorted = transitions.filter((t) => t.class === cls).sort((a, b) => a.time_ms - b.time_ms);
  for (const t of sorted) {
    const active = t.state.startsWith('active');
    const cur = open.get(t.alarm_id);
    if (active && cur === undefined) {
      const span: ActiveSpan = { alarm_id: t.alarm_id, label: alarmLabel(t), level: t.level, fromMs: t.time_ms, toMs: null };
      open.set(t.alarm_id, span);
      spans.push(span);
    } else if (active && cur) cur.level = t.level;
    else if (!active && cur) { cur.toMs = t.time_ms; open.delete(t.alarm_id); }
  }
  return spans.sort((a, b) => a.fromMs - b.fromMs);
}

const ROW = 18;
/** Width of one character of the 11 px label font, px (generous, so labels are never cut). */
const CHAR_PX = 6.6;

/** Timeline of active spans as SVG, one row per label; a span still open runs to toMs. Pure. */
export function timelineChart(spans: readonly ActiveSpan[], fromMs: number, toMs: number, widthPx: number, title: string): string {
  const labels = [...new Set(spans.map((s) => s.label))];
  // Room for the longest label, up to 45 % of the width (longer ones are shortened, full text on hover).
  const maxChars = Math.floor((widthPx * 0.45 - 12) / CHAR_PX);
  const LEFT = Math.round(Math.min(Math.max(...labels.map((l) => l.length), 12) * CHAR_PX + 12, widthPx * 0.45));
  const shown = (l: string) => (l.length > maxChars ? `${l.slice(0, maxChars - 1)}…` : l);
  const H = 40 + Math.max(1, labels.length) * ROW;
  const pw = widthPx - LEFT - 14;
  const span = Math.max(toMs - fromMs, 1);
  const X = (t: number) => LEFT + ((Math.min(Math.max(t, fromMs), toMs) - fromMs) / span) * pw;
  const r1 = (v: number) => (Math.round(v * 10) / 10).toString();
  const parts = [`<svg xmlns="http://www.w3.org/2000/svg" class="chart timeline" width="${widthPx}" height="${H}" viewBox="0 0 ${widthPx} ${H}" role="img" aria-label="${esc(title)}">`, `<title>${esc(title)}</title>`];
  parts.push(`<rect class="plot" x="${LEFT}" y="10" width="${pw}" height="${H - 40}"/>`);
  labels.forEach((label, i) => {
    const y = 10 + i * ROW;
    parts.push(`<text class="tick" x="${LEFT - 6}" y="${y + 13}" text-anchor="end"><title>${esc(label)}</title>${esc(shown(label))}</text>`);
    for (const s of spans.filter((x) => x.label === label)) {
      const xa = X(s.fromMs), xb = X(s.toMs ?? toMs);
      parts.push(`<rect class="span" data-alarm="${esc(s.alarm_id)}" x="${r1(xa)}" y="${y + 3}" width="${r1(Math.max(2, xb - xa))}" height="${ROW - 6}"><title>${esc(`${s.label}: ${s.level}, ${clockLabel(s.fromMs, 1)} – ${s.toMs === null ? 'still active' : clockLabel(s.toMs, 1)}`)}</title></rect>`);
    }
  });
  if (labels.length === 0) parts.push(`<text class="empty" x="${LEFT + pw / 2}" y="25" text-anchor="middle">no alarm in this period</text>`);
  const tt = timeTicks(fromMs, toMs, Math.max(2, Math.floor(pw / 110)));
  for (const t of tt.ticks) parts.push(`<text class="tick" x="${r1(X(t))}" y="${H - 14}" text-anchor="middle">${clockLabel(t, tt.step)}</text>`);
  parts.push('</svg>');
  return parts.join('');
}
