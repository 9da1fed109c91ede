import type { AlarmsConfig, RuleScope, StructuralRule } from '../alarms/schema.js';
import { redactUrl } from '../adapters/secret.js';
import type { CompiledStructure } from '../config/compile.js';

/**
 * What a structure file makes the processor watch, as plain data (`strainward validate` prints it,
 * `--json` as is): loggers, groups with their channels and temperature joins, every channel read,
 * alarm rules, health checks, routes and recipients. Webhook URLs are redacted (a token may sit in
 * a query). Pure.
 */
export interface StructureSummary {
  structure: { id: string; name: string; location: string };
  loggers: Array<{ id: string; expected_interval_s: number; channels: number }>;
  groups: Array<{
    id: string; kind: string; zone: string; material: string; location: string; logger: string;
    elements: Array<{ gauge: string; channel: string; unit: string }>;
    companion: { gauge: string; channel: string } | null;
    temperature: { sensors: Array<{ id: string; channel: string }>; mode: string; max_age_s: number; max_wait_s: number; withhold_when_missing: boolean };
  }>;
  /** Every channel the processor reads, per logger: a gauge (its unit) or a temperature sensor (degC). */
  channels: Array<{ logger: string; channel: string; reads: 'gauge' | 'temperature'; id: string; unit: string; groups: string[] }>;
  alarms: null | {
    levels: string[];
    rules: Array<{ id: string; kind: string; quantity: string; scope: string; thresholds: string[]; on_delay_s: number; off_delay_s: number }>;
    health: { level: string; checks: Array<{ check: string; enabled: boolean; level: string }> };
    recipients: Array<{ id: string; kind: string; channels: string[] }>;
    routes: Array<{ match: string; tiers: string[][] }>;
    acknowledgement: { structural: string[]; health: string[] };
  };
  fatigue_details: Array<{ id: string; group: string }>;
  /** Who may take which groups' current readings as their new zero; null: nobody (no `rezero` section). */
  rezero: null | { allowed: Array<{ user: string; groups: string[] }>; max_reading_age_s: number; request_topic: string; verdict_topic: string };
}

const channelOf = (logger: string, channel: string) => `${logger}/${channel}`;

export function structureSummary(s: CompiledStructure): StructureSummary {
  const c = s.config;
  const gaugeById = new Map(c.gauges.map((g) => [g.id, g]));
  const groupsOfChannel = new Map<string, string[]>();
  const note = (key: string, group: string) => {
    const list = groupsOfChannel.get(key) ?? [];
    if (!list.includes(group)) list.push(group);
    groupsOfChannel.set(key, list);
  };
  const groups = s.groups.map((g) => {
    const cfg = g.config;
    const companionId = 'companion_gauge' in cfg ? cfg.companion_gauge : undefined;
    const elements = cfg.elements.map((e) => {
      const gauge = gaugeById.get(e.gauge)!;
      note(channelOf(gauge.channel.logger, gauge.channel.channel), cfg.id);
      return { gauge: gauge.id, channel: channelOf(gauge.channel.logger, gauge.channel.channel), unit: gauge.signal.unit };
    });
    if (g.companion !== null) note(channelOf(g.companion.loggerId, g.companion.channelId), cfg.id);
    for (const t of g.temperatures) note(channelOf(t.loggerId, t.channelId), cfg.id);
    return {
      id: cfg.id, kind: cfg.kind, zone: cfg.zone, material: cfg.material, location: cfg.location, logger: g.loggerId, elements,
      companion: companionId === undefined || g.companion === null ? null : { gauge: companionId, channel: channelOf(g.companion.loggerId, g.companion.channelId) },
      temperature: {
        sensors: g.temperatures.map((t) => ({ id: t.sensorId, channel: channelOf(t.loggerId, t.channelId) })),
        mode: cfg.temperature.mode, max_age_s: cfg.temperature.max_age_s, max_wait_s: cfg.temperature.max_wait_s,
        withhold_when_missing: cfg.temperature.withhold_when_missing,
      },
    };
  });
  const channels: StructureSummary['channels'] = [
    ...c.gauges.map((g) => ({ logger: g.channel.logger, channel: g.channel.channel, reads: 'gauge' as const, id: g.id, unit: g.signal.unit })),
    ...c.temperature_sensors.map((t) => ({ logger: t.channel.logger, channel: t.channel.channel, reads: 'temperature' as const, id: t.id, unit: 'degC' })),
  ].map((ch) => ({ ...ch, groups: groupsOfChannel.get(channelOf(ch.logger, ch.channel)) ?? [] }))
    .sort((a, b) => a.logger.localeCompare(b.logger) || a.channel.localeCompare(b.channel));
  return {
    structure: { id: s.structureId, name: c.structure.name, location: c.structure.location },
    loggers: c.loggers.map((l) => ({ id: l.id, expected_interval_s: l.expected_interval_s, channels: channels.filter((ch) => ch.logger === l.id).length })),
    groups,
    channels,
    alarms: s.alarms === null ? null : alarmsSummary(s.alarms, s.structureId),
    fatigue_details: (s.fatigue?.details ?? []).map((d) => ({ id: d.id, group: d.groupId })),
    rezero: c.rezero === undefined ? null : {
      allowed: c.rezero.allowed.map((a) => ({ user: a.user, groups: s.groups.filter((g) => a.groups.includes(g.config.id) || a.zones.includes(g.config.zone)).map((g) => g.config.id) })),
      max_reading_age_s: c.rezero.max_reading_age_s,
      request_topic: c.rezero.command_topic.replaceAll('{structure}', s.structureId), verdict_topic: c.rezero.verdict_topic.replaceAll('{structure}', s.structureId),
    },
  };
}

function scopeText(scope: RuleScope | { kind: 'details'; detail_ids: string[] }): string {
  if (scope.kind === 'structure') return 'the whole structure';
  if (scope.kind === 'details') return `fatigue details ${scope.detail_ids.join(', ')}`;
  if (scope.kind === 'zone') return `zone ${scope.zone}`;
  return `groups ${scope.group_ids.join(', ')}`;
}

function thresholdTexts(rule: StructuralRule): string[] {
  if (rule.kind === 'rate') return rule.thresholds.map((t) => `${t.level}: ${rule.direction} faster than ${t.rate_per_s} per s`);
  if (rule.kind === 'fatigue_damage_rate') return rule.thresholds.map((t) => `${t.level}: damage above ${t.damage_per_day} per day`);
  if (rule.kind === 'fatigue_damage') return rule.thresholds.map((t) => `${t.level}: accumulated damage above ${t.fraction}`);
  return rule.thresholds.map((t) => `${t.level}: ${rule.direction === 'above' ? '>' : '<'} ${t.value}`);
}

function alarmsSummary(a: AlarmsConfig, structureId: string): NonNullable<StructureSummary['alarms']> {
  const checks = Object.entries(a.health)
    .filter(([, v]) => typeof v === 'object' && v !== null && 'enabled' in v)
    .map(([check, v]) => {
      const h = v as { enabled: boolean; level?: string };
      return { check, enabled: h.enabled, level: h.level ?? a.health.level };
    });
  return {
    levels: [...a.levels],
    rules: a.rules.map((r) => ({
      id: r.id, kind: r.kind, quantity: 'quantity' in r ? r.quantity : r.kind === 'fatigue_damage' ? 'damage' : 'damage_per_day', scope: scopeText(r.scope), thresholds: thresholdTexts(r), on_delay_s: r.on_delay_s, off_delay_s: r.off_delay_s,
    })),
    health: { level: a.health.level, checks },
    recipients: a.recipients.map((r) => ({
      id: r.id, kind: r.kind,
      channels: r.channels.map((ch) => (ch.kind === 'mqtt' ? `mqtt ${ch.topic.replaceAll('{structure}', structureId)}` : ch.kind === 'webhook'
        ? `webhook ${redactUrl(ch.url)}${ch.auth ? ` (header ${ch.auth.header}, secret from ${ch.auth.secret_env ? `environment variable ${ch.auth.secret_env}` : `file ${ch.auth.secret_file}`})` : ''}`
        : 'the application log')),
    })),
    routes: a.routes.map((r) => {
      const m = Object.entries(r.match).filter(([, v]) => v !== undefined).map(([k, v]) => `${k} ${(v as string[]).join('|')}`);
      return { match: m.length === 0 ? 'every alarm' : m.join(', '), tiers: r.tiers.map((t) => [...t]) };
    }),
    acknowledgement: { structural: [...a.acknowledgement.allowed_users.structural], health: [...a.acknowledgement.allowed_users.health] },
  };
}

/** The summary as lines a person reads. Pure. */
export function structureSummaryLines(s: StructureSummary): string[] {
  const out = [`structure ${s.structure.id}: ${s.structure.name} (${s.structure.location})`, '', `loggers (${s.loggers.length}):`];
  for (const l of s.loggers) out.push(`  ${l.id}: ${l.channels} channel${l.channels === 1 ? '' : 's'}, a scan expected every ${l.expected_interval_s} s`);
  out.push('', `groups (${s.groups.length}):`);
  for (const g of s.groups) {
    out.push(`  ${g.id} (${g.kind}, zone ${g.zone}, ${g.material}): ${g.location}`);
    out.push(`    elements: ${g.elements.map((e) => `${e.gauge} on ${e.channel} [${e.unit}]`).join('; ')}`);
    if (g.companion !== null) out.push(`    companion: ${g.companion.gauge} on ${g.companion.channel}`);
    const t = g.temperature;
    out.push(t.sensors.length === 0
      ? '    temperature: none (computed at the zero-reading temperature, flagged temperature_missing)'
      : `    temperature: ${t.sensors.map((x) => `${x.id} on ${x.channel}`).join(', ')}; ${t.mode}${t.mode === 'interpolate' ? `, waits up to ${t.max_wait_s} s` : ''}, stale after ${t.max_age_s} s${t.withhold_when_missing ? ', no result without it' : ''}`);
  }
  out.push('', `channels (${s.channels.length}):`);
  for (const ch of s.channels) {
    out.push(`  ${ch.logger}/${ch.channel}: ${ch.reads} ${ch.id} [${ch.unit}]${ch.groups.length === 0 ? ', in no group' : ` -> ${ch.groups.join(', ')}`}`);
  }
  const a = s.alarms;
  out.push('');
  if (a === null) out.push('alarms: none (no alarms section: nothing is raised, not even for missing data)');
  else {
    out.push(`alarm levels: ${a.levels.join(' < ')}`, `alarm rules (${a.rules.length}):`);
    for (const r of a.rules) out.push(`  ${r.id}: ${r.kind} on ${r.quantity}, ${r.scope}; ${r.thresholds.join('; ')}`);
    const off = a.health.checks.filter((h) => !h.enabled).map((h) => h.check);
    out.push(`health checks (default level ${a.health.level}): ${a.health.checks.filter((h) => h.enabled).map((h) => h.check).join(', ')}${off.length > 0 ? `; disabled: ${off.join(', ')}` : ''}`);
    out.push(`routes (${a.routes.length}):`);
    for (const r of a.routes) out.push(`  ${r.match} -> ${r.tiers.map((t, i) => `tier ${i}: ${t.join(', ')}`).join('; ')}`);
    out.push(`recipients (${a.recipients.length}):`);
    for (const r of a.recipients) out.push(`  ${r.id} (${r.kind}): ${r.channels.join('; ')}`);
    out.push(`acknowledge: structural ${a.acknowledgement.structural.join(', ') || 'nobody'}; health ${a.acknowledgement.health.join(', ') || 'nobody'}`);
  }
  out.push(s.rezero === null ? 'rezero: nobody (no rezero section)'
    : `rezero (requests on ${s.rezero.request_topic}, readings at most ${s.rezero.max_reading_age_s} s old): ${s.rezero.allowed.map((a) => `${a.user} for ${a.groups.join(', ')}`).join('; ')}`);
  if (s.fatigue_details.length > 0) out.push(`fatigue details (${s.fatigue_details.length}): ${s.fatigue_details.map((d) => `${d.id} (${d.group})`).join(', ')}`);
  return out;
}
