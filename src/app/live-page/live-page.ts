import { readFile } from 'node:fs/promises';
import { resolve } from 'node:path';
import type { Observable, Subscription } from 'rxjs';
import { inScope } from '../../alarms/engine/structural.js';
import type { AlarmBatch } from '../../alarms/operator.js';
import type { Alarm, AlarmLookups } from '../../alarms/types.js';
import { startLivePageServer, type PageAckAnswer, type LivePageServer } from '../../adapters/http/live-page-server.js';
import { tokenProblem } from '../../adapters/http/page-access.js';
import { loadToken } from '../../adapters/secret.js';
import type { CompiledStructure } from '../../config/compile.js';
import type { RuntimeConfig } from '../../config/runtime-schema.js';
import type { RawMessage } from '../../model/raw-message.js';
import type { FrameOutput } from '../../pipeline/process-frames.js';
import { initialPageState, pageView, reducePage, type PageEvent, type ProcessorSample } from './page-state.js';
import { pageFatigue } from './fatigue-view.js';
import type { CompiledFatigue } from '../../config/compile-fatigue.js';
import type { FatigueSnapshot } from '../../pipeline/fatigue-stage.js';

export type LivePageConfig = NonNullable<RuntimeConfig['live_page']>;

export interface LivePageDeps {
  structure: CompiledStructure;
  lookups: AlarmLookups;
  /** Wall clock, epoch ms: acknowledgement times and processor samples. */
  now: () => number;
  log: (event: string, detail?: Record<string, unknown>) => void;
  /** The ack command topic of a user; null when the structure has no alarms. */
  commandTopic: ((user: string) => string) | null;
  /** Hands a command to the processor's own acknowledgement path, exactly as if it came from the ack topic. */
  submitCommand(raw: RawMessage): void;
  sample(): ProcessorSample;
  /** The fatigue figures now (`FatigueWiring.current`), with the compiled section; absent without fatigue. */
  fatigue?: { cfg: CompiledFatigue; current(): FatigueSnapshot | null };
}

export interface LivePage {
  url: string;
  /** Feeds the page from the processed stream (subscribe before it is connected). */
  attach(processed$: Observable<FrameOutput<unknown>>): Subscription;
  /** Every alarm batch, after it was persisted and delivered. */
  onAlarmBatch(batch: AlarmBatch): void;
  /** The engine's alarms restored at start. */
  seedAlarms(alarms: readonly Alarm[]): void;
  close(): Promise<void>;
}

/** The page's processor figures from the live job's counters. Pure. */
export function processorSample(
  decode: { accepted: number; rejected: number }, frames: { frames: number; results: number }, heldAcks: number, writeErrors: number,
  database: { dbReachable: boolean | null; spoolFillRatio: number } | null,
): ProcessorSample {
  return {
    messages: decode.accepted + decode.rejected, frames: frames.frames, results: frames.results, rejected: decode.rejected, writeErrors, heldAcks,
    databaseConfigured: database !== null, databaseReachable: database?.dbReachable ?? null, spoolFillRatio: database?.spoolFillRatio ?? null,
  };
}

/** The thresholds a group's von Mises stress is watched against (limit rules, above), lowest first. Pure. */
export function vonMisesLimits(structure: CompiledStructure, groupId: string, zone: string): Array<{ level: string; value: number }> {
  const out: Array<{ level: string; value: number }> = [];
  for (const rule of structure.alarms?.rules ?? []) {
    if (rule.kind !== 'limit' || rule.quantity !== 'von_mises_MPa' || rule.direction !== 'above' || !inScope(rule, groupId, zone)) continue;
    for (const t of rule.thresholds) out.push({ level: t.level, value: t.value });
  }
  return out.sort((a, b) => a.value - b.value);
}

/** How long the page waits for the processor's verdict on an acknowledgement. */
const VERDICT_TIMEOUT_MS = 15_000;

async function loadAssets(): Promise<{ html: string; script: string; style: string }> {
  const dir = new URL('./assets/', import.meta.url);
  const [html, script, style] = await Promise.all(['index.html', 'page.js', 'page.css'].map((f) => readFile(new URL(f, dir), 'utf8')));
  return { html, script, style };
}

interface Pending { alarmId: string; user: string; atMs: number; settle: (v: PageAckAnswer) => void }

/**
 * The live page of the live job: a state built by the page reducer from the processed stream and
 * the alarm batches, pushed to every open page each `push_every_ms`, and acknowledgements handed
 * to the processor's command path (same schema, same authorisation, same capture) whose verdict is
 * read back from the alarm batches. Memory is bounded by the configuration (see PageState).
 */
export async function openLivePage(cfg: LivePageConfig, baseDir: string, deps: LivePageDeps): Promise<LivePage> {
  const token = await loadToken({ env: cfg.token_env, file: cfg.token_file === undefined ? undefined : resolve(baseDir, cfg.token_file) });
  const problem = tokenProblem(cfg.host, token);
  if (problem !== null) throw new Error(problem);
  const c = deps.structure.config;
  const state = initialPageState({
    structureId: deps.structure.structureId, name: c.structure.name,
    groups: c.groups.map((g) => ({ id: g.id, zone: g.zone, location: g.location, kind: g.kind, material: g.material, vonMisesLimits: vonMisesLimits(deps.structure, g.id, g.zone) })),
  }, deps.lookups, cfg.trend_s, 1000, cfg.notice ?? null);
  const apply = (e: PageEvent) => { reducePage(state, e); };
  const sentTrend = new Map<string, number>();
  const pending = new Set<Pending>();

  const server: LivePageServer = await startLivePageServer({
    host: cfg.host, port: cfg.port, token, assets: await loadAssets(), log: deps.log,
    snapshot: () => pageView(state, () => Number.NEGATIVE_INFINITY),
    acknowledge: (cmd) => new Promise<PageAckAnswer>((settle) => {
      const commandTopic = deps.commandTopic;
      if (commandTopic === null) { settle({ outcome: 'refused', code: 'no_alarms', reason: 'the structure file has no alarms section' }); return; }
      const atMs = deps.now();
      const p: Pending = { alarmId: cmd.alarm_id, user: cmd.user, atMs, settle: (v) => { clearTimeout(timer); pending.delete(p); settle(v); } };
      const timer = setTimeout(() => p.settle({ outcome: 'no_verdict', reason: `no verdict from the processor within ${VERDICT_TIMEOUT_MS / 1000} s; look at the alarm list` }), VERDICT_TIMEOUT_MS);
      pending.add(p);
      deps.submitCommand({ topic: commandTopic(cmd.user), payload: Buffer.from(JSON.stringify(cmd), 'utf8'), arrivalMs: atMs });
    }),
  });

  let fatigueAtMs = Number.NaN;
  const push = () => {
    apply({ type: 'processor', atMs: deps.now(), sample: deps.sample() });
    const f = deps.fatigue?.current() ?? null;
    // Only when something new was counted (the figures copy every histogram).
    if (f !== null && f.nowMs !== fatigueAtMs) { fatigueAtMs = f.nowMs; apply({ type: 'fatigue', fatigue: pageFatigue(deps.fatigue!.cfg, f) }); }
    if (server.clients() === 0) return;
    const view = pageView(state, (id) => sentTrend.get(id) ?? Number.NEGATIVE_INFINITY);
    for (const g of view.groups) if (g.trend.length > 0) sentTrend.set(g.id, g.trend[g.trend.length - 1][0]);
    server.broadcast('update', view);
  };
  const timer = setInterval(push, cfg.push_every_ms);

  return {
    url: server.url,
    attach: (processed$) => processed$.subscribe((o) => {
      if (o.kind === 'tick') apply({ type: 'tick', nowMs: o.nowMs });
      else if (o.kind === 'received') apply({ type: 'frame', frame: o.frame });
      else if (o.kind === 'frame') for (const result of o.results) apply({ type: 'result', result });
    }),
    onAlarmBatch(batch) {
      if (batch.transitions.length > 0) apply({ type: 'alarm_transitions', transitions: batch.transitions });
      for (const refusal of batch.refusals) apply({ type: 'refusal', refusal });
      const input = batch.input;
      if (input.type !== 'ack') return;
      for (const p of pending) {
        if (p.atMs !== input.atMs || p.alarmId !== input.alarmId || p.user !== input.user) continue;
        const refusal = batch.refusals[0];
        p.settle(refusal === undefined ? { outcome: 'acknowledged', alarmId: p.alarmId, user: p.user } : { outcome: 'refused', code: refusal.code, reason: refusal.reason });
      }
    },
    seedAlarms: (alarms) => apply({ type: 'alarms_restored', alarms }),
    async close() {
      clearInterval(timer);
      for (const p of pending) p.settle({ outcome: 'no_verdict', reason: 'the processor is stopping; acknowledge again once it is back' });
      await server.close();
    },
  };
}
