import type { GroupResult } from '../model/result.js';
import { compareRuns } from './compare.js';
import { esc, isoTime } from './format.js';
import { groupSection } from './group-section.js';
import { fatigueSection } from './fatigue-section.js';
import { activeSpans, timelineChart } from './health-timeline.js';
import { peaksByGroup } from './peaks.js';
import { REPORT_CSS } from './style.js';
import { alarmsTable, flaggedExtremesTable, captureGapsTable, differencesTable, peaksTable } from './tables.js';
import type { ReportInput } from './types.js';

/** The statements every report opens with (also checked by the tests). */
export const REPORT_NOTICES = [
  'This report supports and does not replace qualified engineering judgement.',
  'Alarm limits are set by the responsible engineer under the local codes; the bands drawn here are those limits as configured.',
  'Missing data is itself an alarm: gaps in the data are shown as breaks in the lines and shaded on the plots.',
] as const;

function byGroup(results: readonly GroupResult[]): Map<string, GroupResult[]> {
  const m = new Map<string, GroupResult[]>();
  for (const r of results) { const a = m.get(r.groupId); if (a) a.push(r); else m.set(r.groupId, [r]); }
  for (const a of m.values()) a.sort((x, y) => x.timeMs - y.timeMs);
  return m;
}

/**
 * The diagnosis report: ONE self-contained HTML document (inline CSS and SVG; no script, no
 * external resource). Pure: the same input gives the same text; the inputs are not mutated.
 */
export function renderReport(input: ReportInput): string {
  const widthPx = input.plotWidthPx ?? 860;
  const gapFactor = input.gapFactor ?? 3;
  const limits = input.limits ?? {};
  const groups = byGroup(input.run.results);
  const other = input.comparison ? byGroup(input.comparison.results) : null;
  const times = [...input.run.results.map((r) => r.timeMs), ...(input.comparison?.results.map((r) => r.timeMs) ?? []), ...input.alarms.map((a) => a.time_ms)];
  let fromMs = Infinity, toMs = -Infinity;
  for (const t of times) { if (t < fromMs) fromMs = t; if (t > toMs) toMs = t; }
  if (!(fromMs <= toMs)) fromMs = toMs = input.generatedAtMs;

  const body: string[] = [];
  body.push(`<h1>${esc(input.title)}</h1>`);
  body.push(`<p class="meta">Structure ${esc(input.structureId)} · period ${esc(isoTime(fromMs))} – ${esc(isoTime(toMs))} UTC · generated ${esc(isoTime(input.generatedAtMs))} UTC · run “${esc(input.run.label)}”${input.comparison ? ` compared with “${esc(input.comparison.label)}”` : ''}</p>`);
  body.push(`<div class="notice" id="notice">${REPORT_NOTICES.map((n) => `<p>${esc(n)}</p>`).join('')}</div>`);
  body.push('<nav>' + (input.captureGaps !== undefined ? '<a href="#capture">Capture read</a> · ' : '') + '<a href="#peaks">Peaks</a> · <a href="#health">Instrument health</a> · <a href="#alarms">Alarms</a> · <a href="#groups">Groups</a>' + (input.fatigue ? ' · <a href="#fatigue">Fatigue</a>' : '') + (input.comparison ? ' · <a href="#differences">Differences</a>' : '') + '</nav>');

  // First: a replay with gaps misses results and alarms of those periods.
  if (input.captureGaps !== undefined) {
    body.push('<h2 id="capture">Capture read</h2>');
    body.push(captureGapsTable(input.captureGaps));
  }

  body.push('<h2 id="peaks">Peaks</h2>');
  const peaks = peaksByGroup(input.run.results);
  body.push(peaksTable(peaks));
  body.push(flaggedExtremesTable(peaks));

  body.push('<h2 id="health">Instrument health</h2>');
  body.push(timelineChart(activeSpans(input.alarms, 'health'), fromMs, toMs, widthPx, 'Health alarms active', input.levels));
  const structural = activeSpans(input.alarms, 'structural');
  if (structural.length) body.push(timelineChart(structural, fromMs, toMs, widthPx, 'Structural alarms active', input.levels));

  body.push('<h2 id="alarms">Alarms</h2>');
  body.push(alarmsTable(input.alarms));

  body.push('<h2 id="groups">Groups</h2>');
  if (groups.size === 0) body.push('<p>No result in this period: that is itself an alarm condition.</p>');
  for (const [id, rs] of groups) {
    const cmp = other?.get(id);
    body.push(groupSection(id, rs, {
      fromMs, toMs, widthPx, gapFactor, limits, runLabel: input.run.label,
      comparison: cmp && input.comparison ? { label: input.comparison.label, results: cmp } : undefined,
    }));
  }
  // Further sections go here, each an <h2 id> and its content, before the comparison.
  if (input.fatigue !== undefined) body.push(fatigueSection(input.fatigue, widthPx, input.run.label, input.comparison?.label));
  if (input.comparison) {
    body.push('<h2 id="differences">Differences between the runs</h2>');
    body.push(differencesTable(compareRuns(input.run.results, input.comparison.results), input.run.label, input.comparison.label));
  }
  return `<!DOCTYPE html>\n<html lang="en"><head><meta charset="utf-8"/><meta name="viewport" content="width=device-width, initial-scale=1"/><title>${esc(input.title)}</title><style>${REPORT_CSS}</style></head><body><main>\n${body.join('\n')}\n</main></body></html>\n`;
}
