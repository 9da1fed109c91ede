import { stat, writeFile } from 'node:fs/promises';
import { resolve } from 'node:path';
import { Command } from 'commander';
import { z } from 'zod';
import { readCapture, type CaptureGap } from '../../adapters/capture/capture-reader.js';
import { readCaptureIndex } from '../../adapters/capture/capture-index.js';
import { NdjsonFileDeadLetterSink } from '../../adapters/deadletter/ndjson-file-sink.js';
import { LineFileSink } from '../../adapters/lineproto/file-sink.js';
import { loadStructureFile } from '../../config/load.js';
import { loadRuntimeFile } from '../../config/load-runtime.js';
import { ProgressBar } from '../../app/progress.js';
import { replay, type ReplaySummary } from '../../app/replay.js';
import { ensureParent, openPointSink } from '../../app/sinks.js';
import { DiscardSink } from '../../adapters/discard-sink.js';
import { renderBuiltReport } from '../../report/render-report.js';
import { ReportBuilder } from '../../report/report-builder.js';
import { teeAsync } from '../../app/tee-messages.js';
import { reportAlarm, reportFatigue, reportLimits } from '../../app/report-inputs.js';
import type { CompiledStructure } from '../../config/compile.js';
import type { PointSink } from '../../model/point.js';
import type { RawMessage } from '../../model/raw-message.js';
import type { GroupResult } from '../../model/result.js';
import { parseOptions } from '../options.js';
import { readAuditRecords } from '../../app/rezero-files.js';
import { remainingLifeYears } from '../../fatigue/detail.js';
import type { FatigueSnapshot } from '../../pipeline/fatigue-stage.js';
import { CaptureGapsError, EmptyWindowError, UsageError } from '../errors.js';

const isoTime = z.string().refine((s) => Number.isFinite(Date.parse(s)), 'expected an ISO 8601 time, e.g. 2026-11-30T06:00:00Z');

export const ReplayOptionsSchema = z.strictObject({
  capture: z.string().min(1),
  config: z.string().min(1).optional(),
  structure: z.string().min(1).optional(),
  from: isoTime.optional(),
  to: isoTime.optional(),
  speed: z.coerce.number().min(0).default(0),
  out: z.string().min(1).default('var/replay'),
  database: z.boolean().default(false),
  runTag: z.string().regex(/^[A-Za-z0-9_.-]+$/, 'letters, digits, "_", "-" or "." only').default('replay'),
  report: z.string().min(1).optional(),
  reportPdf: z.string().min(1).optional(),
  compareStructure: z.string().min(1).optional(),
  tickMs: z.coerce.number().int().positive().default(1000),
  progress: z.boolean().optional(),
  acceptGaps: z.boolean().default(false),
  fatigueState: z.string().min(1).optional(),
}).refine((o) => o.config !== undefined || o.structure !== undefined, { message: 'give --config (runtime file) or --structure', path: ['structure'] })
  .refine((o) => !o.database || o.config !== undefined, { message: '--database needs --config (it names the database)', path: ['database'] })
  .refine((o) => o.reportPdf === undefined || o.report !== undefined, { message: '--report-pdf goes with --report', path: ['reportPdf'] })
  .refine((o) => o.compareStructure === undefined || o.report !== undefined, { message: '--compare-structure goes with --report (the comparison is a section of the report)', path: ['compareStructure'] });

/** `strainward replay`: a capture, or a window of it, through the live pipeline with any configuration. */
export function replayCommand(): Command {
  return new Command('replay')
    .description('feed a raw capture through exactly the live pipeline, with the same or a corrected configuration')
    .requiredOption('--capture <dir>', 'capture directory (written by `run` or `record`)')
    .option('-c, --config <file>', 'runtime configuration: structure, topic layout, tick, database')
    .option('-s, --structure <file>', 'structure configuration to use instead of the runtime one (corrected zeros, new limits...)')
    .option('--from <iso>', 'start of the window (arrival time, inclusive)')
    .option('--to <iso>', 'end of the window (arrival time, exclusive)')
    .option('--speed <factor>', '0 = as fast as possible, 1 = real time, 10 = ten times faster', '0')
    .option('--out <dir>', 'line-protocol output directory', 'var/replay')
    .option('--database', 'write to the runtime configuration\'s database instead, tagged run=<run-tag>')
    .option('--run-tag <name>', 'tag on every point so live data is never overwritten', 'replay')
    .option('--report <file>', 'write a diagnosis report (HTML) of the replay')
    .option('--report-pdf <file>', 'also print the report to PDF (needs Debian\'s chromium)')
    .option('--compare-structure <file>', 'replay again with this structure configuration and compare in the report')
    .option('--tick-ms <ms>', 'pipeline clock tick on the arrival-time grid', '1000')
    .option('--progress', 'show a progress bar (default when stderr is a terminal)')
    .option('--fatigue-state <file>', 'continue fatigue counting from this state file (when it exists) and leave the end state in it (default: count from nothing, keep no state)')
    .option('--accept-gaps', 'a capture with gaps (damaged members, missing files) still exits 0; the gaps are reported all the same')
    .action(async (raw: unknown) => {
      const o = parseOptions(ReplayOptionsSchema, raw);
      const loaded = o.config ? await loadRuntimeFile(o.config, o.structure) : null;
      const structure = loaded?.structure ?? await loadStructureFile(o.structure!);
      const window = { fromMs: o.from ? Date.parse(o.from) : undefined, toMs: o.to ? Date.parse(o.to) : undefined };
      const total = await countInWindow(o.capture, window);
      // The runtime file's rezero audit: the zeros taken live apply in the replay from the same logger times.
      const auditFile = loaded === null ? null : resolve(loaded.baseDir, loaded.runtime.rezero.audit_file);
      const audit = auditFile === null ? { records: [], unreadable: 0 } : await readAuditRecords(auditFile);
      if (audit.records.length > 0 || audit.unreadable > 0) process.stderr.write(`rezero audit ${auditFile}: ${audit.records.length} recorded rezeros${audit.unreadable > 0 ? `, ${audit.unreadable} unreadable lines skipped` : ''}\n`);
      const showProgress = o.progress ?? Boolean(process.stderr.isTTY);
      let clockMs = 0; // output files are named by data time, so a replay's output is the same run after run
      const gaps: CaptureGap[] = []; // of the first run (a comparison reads the same capture)
      // The report is gathered as the replay streams (ReportBuilder): nothing of the run is kept whole.
      const builder = o.report ? new ReportBuilder({ comparison: o.compareStructure !== undefined }) : null;
      const run = async (s: CompiledStructure, tag: string, sink: PointSink, messages: AsyncIterable<RawMessage>, feed: ((r: GroupResult) => void) | null, bar: ProgressBar | null): Promise<ReplaySummary> => {
        const deadLetters = new NdjsonFileDeadLetterSink(await ensureParent(resolve(o.out, `${tag}-deadletters.ndjson`)));
        const summary = await replay({
          structure: s, messages, sink, runTag: tag, tickMs: o.tickMs, speed: o.speed, deadLetters,
          topicPattern: loaded?.runtime.mqtt.topic_pattern, elementStrains: loaded?.runtime.results.element_strains,
          maxFutureMs: loaded === null ? undefined : loaded.runtime.ingest.max_future_s * 1000, alarms: true, keepTransitions: false, zeroRecords: audit.records,
          fatigueStatePath: tag === o.runTag && o.fatigueState !== undefined ? resolve(o.fatigueState) : undefined,
          warn: (event, detail) => process.stderr.write(`${event}: ${String(detail.message ?? '')}\n`),
          onTransitions: feed === null || tag !== o.runTag ? undefined : (ts) => { for (const t of ts) builder!.addAlarm(reportAlarm(t)); },
          attach: feed === null ? undefined : (processed$) => { processed$.subscribe((p) => { if (p.kind === 'frame') for (const r of p.results) feed(r); }); },
          sleep: (ms) => new Promise((r) => setTimeout(r, ms)),
          onMessage: (n, m) => { if (tag === o.runTag) { clockMs = m.arrivalMs; bar?.update(n); } },
        });
        await deadLetters.close();
        bar?.finish(summary.messages);
        for (const k of summary.rezero.skipped) process.stderr.write(`rezero ${k.id} not applied (${tag}): ${k.reason}\n`);
        return summary;
      };
      if (o.database && !loaded?.runtime.database) throw new UsageError(`--database: ${o.config} configures no database`);
      // A replay into the database has its own spool, never the live processor's.
      const replayRuntime = o.database && loaded?.runtime.database
        ? { ...loaded.runtime, database: { ...loaded.runtime.database, spool: { ...loaded.runtime.database.spool, dir: `${loaded.runtime.database.spool.dir}-replay-${o.runTag}` } } }
        : null;
      const sink = replayRuntime
        ? (await openPointSink(replayRuntime, loaded!.baseDir, Date.now)).sink
        : new LineFileSink({ dir: resolve(o.out), prefix: o.runTag, maxFileBytes: 1024 ** 4, maxFileAge_ms: Number.MAX_SAFE_INTEGER, now: () => clockMs });
      const capture = readCapture(o.capture, window, (g) => { gaps.push(g); process.stderr.write(`${gapLine(g)}\n`); });
      const bar = showProgress ? new ProgressBar(total, process.stderr, Date.now, o.runTag) : null;
      // A comparison replays the same read of the capture side by side (teeAsync), so the two runs'
      // results meet in the report's comparer within a bounded wait.
      const [mine, theirs] = o.compareStructure ? teeAsync(capture, 2) : [capture];
      const compareStructure = o.compareStructure ? await loadStructureFile(o.compareStructure) : null;
      const [first, second] = await Promise.all([
        run(structure, o.runTag, sink, mine, builder && ((r) => builder.addResult(r)), bar),
        compareStructure ? run(compareStructure, `${o.runTag}-compare`, new DiscardSink(), theirs, (r) => builder!.addComparisonResult(r), null) : null,
      ]);
      process.stderr.write(`replayed ${first.messages} messages: ${first.frames} frames, ${first.results} results, ${first.rejected} refused, ${first.transitionCount} alarm transitions\n`);
      for (const line of fatigueLines(first.fatigue)) process.stderr.write(`${line}\n`);
      if (first.messages === 0) {
        const span = `${o.from ?? 'its start'} to ${o.to ?? 'its end'}`;
        throw new EmptyWindowError(`no data to replay: the capture at ${o.capture} holds no message from ${span}; nothing was written`);
      }
      const lost = gaps.reduce((n, g) => n + (g.messages ?? 0), 0);
      const gapSummary = `${gaps.length} capture gap${gaps.length === 1 ? '' : 's'}, ${lost} messages lost${gaps.some((g) => g.messages === null) ? ' (and some of unknown size)' : ''}`;
      if (gaps.length > 0) process.stderr.write(`${gapSummary}: results and alarms of those periods are missing\n`);
      if (o.report && builder) {
        const fatigue = structure.fatigue && first.fatigue
          ? reportFatigue(structure.fatigue, first.fatigue, compareStructure?.fatigue && second?.fatigue ? { cfg: compareStructure.fatigue, snapshot: second.fatigue } : undefined)
          : undefined;
        const html = renderBuiltReport({
          title: `${structure.config.structure.name} – diagnosis report of a replay`, structureId: structure.structureId, generatedAtMs: Date.now(),
          runLabel: `run tag ${o.runTag}, configuration ${o.structure ?? o.config}`,
          limits: reportLimits(structure.alarms), captureGaps: gaps, levels: structure.alarms?.levels,
          comparisonLabel: second ? o.compareStructure! : undefined, fatigue,
        }, builder);
        await writeFile(await ensureParent(o.report), html);
        process.stderr.write(`report written to ${o.report}\n`);
        if (o.reportPdf) {
          // Loaded only when asked for: the browser driver is large.
          const { htmlToPdf } = await import('../../adapters/pdf/html-to-pdf.js');
          await htmlToPdf(html, await ensureParent(o.reportPdf));
          process.stderr.write(`PDF written to ${o.reportPdf}\n`);
        }
      }
      if (gaps.length > 0 && !o.acceptGaps) throw new CaptureGapsError(`${gapSummary}; the output is written; --accept-gaps to accept them`);
    });
}

/** One line per gap for the operator. */
function gapLine(g: CaptureGap): string {
  const count = g.messages === null ? 'an unknown number of messages' : `${g.messages} message${g.messages === 1 ? '' : 's'}`;
  return `capture gap: ${count} lost between ${new Date(g.fromMs).toISOString()} and ${new Date(g.toMs).toISOString()} in ${g.file} (${g.reason})`;
}

async function countInWindow(dir: string, w: { fromMs?: number; toMs?: number }): Promise<number> {
  try {
    if (!(await stat(dir)).isDirectory()) throw Object.assign(new Error('not a directory'), { code: 'ENOTDIR' });
    const index = await readCaptureIndex(dir);
    return index.files
      .filter((f) => (w.toMs === undefined || f.firstArrivalMs < w.toMs) && (w.fromMs === undefined || f.lastArrivalMs >= w.fromMs))
      .reduce((n, f) => n + f.count, 0);
  } catch (err) {
    const code = (err as { code?: string }).code;
    const why = code === 'ENOTDIR' ? 'it is not a directory' : code === 'ENOENT' ? 'the directory or its index file does not exist (a capture is written by `strainward run` or `strainward record`)'
      : code === 'EACCES' ? 'its index cannot be read (permission denied)' : 'its index cannot be read';
    throw new UsageError(`no capture at ${dir}: ${why}`);
  }
}

/** One line per fatigue detail at the end of the replay. */
function fatigueLines(s: FatigueSnapshot | null): string[] {
  if (s === null) return [];
  return s.details.map(({ id, figures: f }) => {
    const life = remainingLifeYears(f.damage, f.damagePerDay);
    const lifeText = life === Infinity ? 'no damage over the rate window' : Number.isNaN(life) ? 'not known' : `${life.toPrecision(3)} years at the recent rate`;
    return `fatigue ${id}: damage ${f.damage.toPrecision(4)}, ${f.cycles.toFixed(1)} cycles, ${(f.monitoredS / 3600).toFixed(2)} h monitored, ${(f.notMonitoredS / 3600).toFixed(2)} h not monitored; remaining life ${lifeText} (assumptions in the report and README)`;
  });
}
