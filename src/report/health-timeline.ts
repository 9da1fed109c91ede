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
 * Active spans of alarms as their transitions come in time order: an alarm is active from a
 * transition into an `active_*` state until one into `cleared_*` or `closed`. Memory: the spans.
 */
export class SpanTracker {
  private readonly open = new Map<string, ActiveSpan>();
  readonly spans: ActiveSpan[] = [];

  add(t: ReportAlarmTransition): void {
    const active = t.state.startsWith('active');
    const cur = this.open.get(t.alarm_id);
    if (active && cur === undefined) {
      const span: ActiveSpan = { alarm_id: t.alarm_id, label: alarmLabel(t), level: t.level, fromMs: t.time_ms, toMs: null };
      this.open.set(t.alarm_id, span);
      this.spans.push(span);
    } else if (active && cur) cur.level = t.level;
    else if (!active && cur) { cur.toMs = t.time_ms; this.open.delete(t.alarm_id); }
  }

  /** The spans by start (new array). */
  sorted(): ActiveSpan[] {
    return [...this.spans].sort((a, b) => a.fromMs - b.fromMs);
  }
}

/** Active spans of the alarms of one class from their transitions (any order). New array, by start. */
export function activeSpans(transitions: readonly ReportAlarmTransition[], cls: 'structural' | 'health'): ActiveSpan[] {
  const tracker = new SpanTracker();
  for (const t of transitions.filter((x) => x.class === cls).sort((a, b) => a.time_ms - b.time_ms)) tracker.add(t);
  return tracker.sorted();
}

const ROW = 18;

/**
 * How a level's bar looks, lowest level first (the configuration's order): outlined and dashed,
 * hatched, solid; each also carries its symbol and name in words beside the bar.
 */
const LEVEL_LOOKS: readonly { fill: (id: string) => string; stroke: number; dash: boolean; symbol: string }[] = [
  { fill: () => '#ffffff', stroke: 1.2, dash: true, symbol: '○' },
  { fill: (id) => `url(#${id}-hatch)`, stroke: 1, dash: false, symbol: '△' },
  { fill: () => '#333333', stroke: 1, dash: false, symbol: '■' },
];
/** Width of one character of the 11 px label font, px (generous, so labels are never cut). */
const CHAR_PX = 6.6;

/** Timeline of active spans as SVG, one row per label; a span still open runs to toMs. Pure. */
export function timelineChart(spans: readonly ActiveSpan[], fromMs: number, toMs: number, widthPx: number, title: string, levels: readonly string[] = []): string {
  const id = title.toLowerCase().replace(/[^a-z0-9]+/g, '-');
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
  parts.push(`<defs><pattern id="${id}-hatch" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)"><rect width="6" height="6" fill="#fff"/><line x1="0" y1="0" x2="0" y2="6" stroke="#333" stroke-width="2.5"/></pattern></defs>`);
  parts.push(`<rect class="plot" x="${LEFT}" y="10" width="${pw}" height="${H - 40}"/>`);
  labels.forEach((label, i) => {
    const y = 10 + i * ROW;
    parts.push(`<text class="tick" x="${LEFT - 6}" y="${y + 13}" text-anchor="end"><title>${esc(label)}</title>${esc(shown(label))}</text>`);
    for (const s of spans.filter((x) => x.label === label)) {
      const xa = X(s.fromMs), xb = X(s.toMs ?? toMs);
      const rank = levels.indexOf(s.level);
      const look = LEVEL_LOOKS[Math.min(Math.max(rank, 0), LEVEL_LOOKS.length - 1)];
      const w = Math.max(2, xb - xa);
      parts.push(`<rect class="span" data-alarm="${esc(s.alarm_id)}" data-level="${esc(s.level)}" x="${r1(xa)}" y="${y + 3}" width="${r1(w)}" height="${ROW - 6}" fill="${look.fill(id)}" stroke="#333" stroke-width="${look.stroke}"${look.dash ? ' stroke-dasharray="3 2"' : ''}><title>${esc(`${s.label}: ${s.level}, ${clockLabel(s.fromMs, 1)} – ${s.toMs === null ? 'still active' : clockLabel(s.toMs, 1)}`)}</title></rect>`);
      // The level in words (and its symbol) beside the bar: never told by colour or pattern alone.
      const after = xb + 3 + 7 * (s.level.length + 2) < LEFT + pw;
      parts.push(`<text class="span-level" x="${r1(after ? xb + 3 : xa - 3)}" y="${y + 13}"${after ? '' : ' text-anchor="end"'}>${look.symbol} ${esc(s.level)}</text>`);
    }
  });
  if (labels.length === 0) parts.push(`<text class="empty" x="${LEFT + pw / 2}" y="25" text-anchor="middle">no alarm in this period</text>`);
  const tt = timeTicks(fromMs, toMs, Math.max(2, Math.floor(pw / 110)));
  for (const t of tt.ticks) parts.push(`<text class="tick" x="${r1(X(t))}" y="${H - 14}" text-anchor="middle">${clockLabel(t, tt.step)}</text>`);
  parts.push('</svg>');
  return parts.join('');
}
