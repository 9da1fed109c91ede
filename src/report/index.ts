/** Diagnosis report: public API. */
export { renderReport, REPORT_NOTICES } from './render-report.js';
export type { ReportInput, ReportRun, ReportAlarmTransition, LimitBand, QuantityLimits, ActiveSpan } from './types.js';
export { peaksByGroup, type GroupPeaks, type Extreme, type FlaggedExtreme, type PeakKind } from './peaks.js';
export { compareRuns, type QuantityDifference } from './compare.js';
export { downsample, segmentsOf, findGaps, type Segment, type Gap } from './series.js';
export { activeSpans, SpanTracker } from './health-timeline.js';
export { ReportBuilder, type ReportBuilderOptions } from './report-builder.js';
export { renderBuiltReport, type ReportHeader } from './render-report.js';
