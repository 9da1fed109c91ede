import { esc, isoTime } from './format.js';
import { groupSection } from './group-section.js';
import { fatigueSection } from './fatigue-section.js';
import { timelineChart } from './health-timeline.js';
import { ReportBuilder } from './report-builder.js';
import { REPORT_CSS } from './style.js';
import { alarmsTable, flaggedExtremesTable, captureGapsTable, differencesTable, peaksTable } from './tables.js';
import type { ReportInput } from './types.js';

/** The statements every report opens with (also checked by the tests). */
export const REPORT_NOTICES = [
  'This report supports and does not replace qualified engineering judgement.',
  'Alarm limits are set by the responsible engineer under the local codes; the bands drawn here are those limits as configured.',
  'Missing data is itself an alarm: gaps in the data are shown as breaks in the lines and shaded on the plots.',
] as const;

/** What the report says about a run besides its data (a ReportInput without the arrays). */
export type ReportHeader = Omit<ReportInput, 'run' | 'alarms' | 'comparison' | 'gapFactor'> & { runLabel: string; comparisonLabel?: string };

/**
 * The diagnosis report: ONE self-contained HTML document (inline CSS and SVG; no script, no
 * external resource). Pure: the same input gives the same text; the inputs are not mutated.
 */
export function renderReport(input: ReportInput): string {
  const { run, alarms: _alarms, comparison, gapFactor: _gapFactor, ...rest } = input;
  return renderBuiltReport({ ...rest, runLabel: run.label, comparisonLabel: comparison?.label }, ReportBuilder.fromInput(input));
}

/** The report from what a ReportBuilder gathered while a replay streamed. Pure; the builder is not changed. */
export function renderBuiltReport(header: ReportHeader, data: ReportBuilder): string {
  const widthPx = header.plotWidthPx ?? 860;
  const limits = header.limits ?? {};
  let fromMs = data.fromMs, toMs = data.toMs;
  if (!(fromMs <= toMs)) fromMs = toMs = header.generatedAtMs;
  const comparing = data.comparer !== null && header.comparisonLabel !== undefined;

  const body: string[] = [];
  body.push(`<h1>${esc(header.title)}</h1>`);
  body.push(`<p class="meta">Structure ${esc(header.structureId)} · period ${esc(isoTime(fromMs))} – ${esc(isoTime(toMs))} UTC · generated ${esc(isoTime(header.generatedAtMs))} UTC · run “${esc(header.runLabel)}”${comparing ? ` compared with “${esc(header.comparisonLabel!)}”` : ''}</p>`);
  body.push(`<div class="notice" id="notice">${REPORT_NOTICES.map((n) => `<p>${esc(n)}</p>`).join('')}</div>`);
  body.push('<nav>' + (header.captureGaps !== undefined ? '<a href="#capture">Capture read</a> · ' : '') + '<a href="#peaks">Peaks</a> · <a href="#health">Instrument health</a> · <a href="#alarms">Alarms</a> · <a href="#groups">Groups</a>' + (header.fatigue ? ' · <a href="#fatigue">Fatigue</a>' : '') + (comparing ? ' · <a href="#differences">Differences</a>' : '') + '</nav>');

  // First: a replay with gaps misses results and alarms of those periods.
  if (header.captureGaps !== undefined) {
    body.push('<h2 id="capture">Capture read</h2>');
    body.push(captureGapsTable(header.captureGaps));
  }

  body.push('<h2 id="peaks">Peaks</h2>');
  const peaks = [...data.groups.values()].map((g) => g.peaks!.peaks());
  body.push(peaksTable(peaks));
  body.push(flaggedExtremesTable(peaks));

  body.push('<h2 id="health">Instrument health</h2>');
  body.push(timelineChart(data.health.sorted(), fromMs, toMs, widthPx, 'Health alarms active', header.levels));
  const structural = data.structural.sorted();
  if (structural.length) body.push(timelineChart(structural, fromMs, toMs, widthPx, 'Structural alarms active', header.levels));

  body.push('<h2 id="alarms">Alarms</h2>');
  body.push(alarmsTable(data.alarmRows, data.alarmRowsNotListed));

  body.push('<h2 id="groups">Groups</h2>');
  if (data.groups.size === 0) body.push('<p>No result in this period: that is itself an alarm condition.</p>');
  for (const [id, g] of data.groups) {
    const cmp = comparing ? data.comparisonGroups.get(id) : undefined;
    body.push(groupSection(g, {
      fromMs, toMs, widthPx, limits, runLabel: header.runLabel,
      comparison: cmp ? { label: header.comparisonLabel!, group: cmp } : undefined,
    }));
  }
  // Further sections go here, each an <h2 id> and its content, before the comparison.
  if (header.fatigue !== undefined) body.push(fatigueSection(header.fatigue, widthPx, header.runLabel, header.comparisonLabel));
  if (comparing) {
    body.push('<h2 id="differences">Differences between the runs</h2>');
    body.push(differencesTable(data.comparer!.differences(), header.runLabel, header.comparisonLabel!));
  }
  return `<!DOCTYPE html>\n<html lang="en"><head><meta charset="utf-8"/><meta name="viewport" content="width=device-width, initial-scale=1"/><title>${esc(header.title)}</title><style>${REPORT_CSS}</style></head><body><main>\n${body.join('\n')}\n</main></body></html>\n`;
}
