import type { CompiledGroup, CompiledStructure } from '../config/compile.js';
import { flagsFromBits, qualityBit } from '../model/quality.js';
import type { GroupReadings } from '../pipeline/frame-processor.js';
import type { ZeroStep } from '../pipeline/zero-steps.js';
import { RezeroCommandSchema, type RezeroConfig, type RezeroRecord, type RezeroRefusalCode } from './schema.js';

/** A rezero request as decoded at the MQTT boundary: the user from the topic, the time of arrival. */
export interface RezeroRequest {
  user: string;
  groupId: string;
  reason: string;
  requestId: string | null;
  atMs: number;
}

export interface RezeroRefusal {
  code: RezeroRefusalCode;
  /** Why, in words. */
  reason: string;
  user: string;
  groupId: string;
  requestId: string | null;
  atMs: number;
}

/** Decodes a request payload; bad input is an `invalid_command` refusal naming the field (never throws). */
export function parseRezeroPayload(payload: Uint8Array | string, atMs: number, topicUser: string): { ok: true; request: RezeroRequest } | { ok: false; refusal: RezeroRefusal } {
  const text = typeof payload === 'string' ? payload : Buffer.from(payload).toString('utf8');
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch {
    json = undefined;
  }
  const raw = typeof json === 'object' && json !== null ? (json as Record<string, unknown>) : {};
  const refuse = (code: RezeroRefusalCode, reason: string) => ({
    ok: false as const,
    refusal: {
      code, reason, user: topicUser, atMs,
      groupId: typeof raw.group_id === 'string' ? raw.group_id : '', requestId: typeof raw.request_id === 'string' ? raw.request_id : null,
    },
  });
  if (json === undefined) return refuse('invalid_command', 'payload is not JSON');
  const parsed = RezeroCommandSchema.safeParse(json);
  if (!parsed.success) {
    const i = parsed.error.issues[0];
    return refuse('invalid_command', `${i.path.join('.') || '(root)'}: ${i.message}`);
  }
  const c = parsed.data;
  if (c.user !== undefined && c.user !== topicUser) {
    return refuse('identity_mismatch', `the payload names user "${c.user}" but the request came on the topic of "${topicUser}"`);
  }
  return { ok: true, request: { user: topicUser, groupId: c.group_id, reason: c.reason, requestId: c.request_id ?? null, atMs } };
}

/** Whether `user` may rezero `group` (`rezero.allowed`: by group id or by zone). */
export function mayRezero(cfg: RezeroConfig, group: CompiledGroup, user: string): boolean {
  return cfg.allowed.some((a) => a.user === user && (a.groups.includes(group.config.id) || a.zones.includes(group.config.zone)));
}

const BIT_TEMPERATURE_STALE = qualityBit('temperature_stale');
const SUSPECT = qualityBit('reading_spike') | qualityBit('reading_suspect') | qualityBit('reading_flatline');

/** The zeros in effect for a group: the latest rezero's, else the configured ones (the signal's unit). */
export function zerosInEffect(structure: CompiledStructure, g: CompiledGroup, step: ZeroStep | null): { elements: readonly number[]; companion: number; zeroTempC: number } {
  if (step !== null) return { elements: step.elementZeros, companion: step.companionZero, zeroTempC: step.zeroTempC };
  const gauges = new Map(structure.config.gauges.map((x) => [x.id, x]));
  const companionId = 'companion_gauge' in g.config ? g.config.companion_gauge : undefined;
  return {
    elements: g.config.elements.map((e) => gauges.get(e.gauge)!.zero_reading),
    companion: companionId === undefined ? Number.NaN : gauges.get(companionId)!.zero_reading,
    zeroTempC: g.model.zeroTempC,
  };
}

/**
 * Decides a request against the group's latest readings: the user must be allowed for the group,
 * and the readings must be fit to be a zero (every element and the companion present and in range,
 * none a spike, flat or unjudged, recent, at a known and current temperature when the group has
 * sensors). Accepted: the audit record (old and new zeros). Pure.
 */
export function decideRezero(
  structure: CompiledStructure, cfg: RezeroConfig, request: RezeroRequest, readings: GroupReadings | null, inEffect: ZeroStep | null,
): { ok: true; record: RezeroRecord } | { ok: false; refusal: RezeroRefusal } {
  const refuse = (code: RezeroRefusalCode, reason: string) => ({
    ok: false as const, refusal: { code, reason, user: request.user, groupId: request.groupId, requestId: request.requestId, atMs: request.atMs },
  });
  const g = structure.groupsById.get(request.groupId);
  if (g === undefined) return refuse('unknown_group', `no group "${request.groupId}" in structure ${structure.structureId}`);
  if (!mayRezero(cfg, g, request.user)) return refuse('user_not_allowed', `user "${request.user}" may not rezero group "${g.config.id}" (zone ${g.config.zone}; rezero.allowed)`);
  if (readings === null) return refuse('no_readings', `no readings of group "${g.config.id}" computed since the processor started: nothing to take as the zero`);
  const ageS = (request.atMs - readings.arrivalMs) / 1000;
  if (ageS > cfg.max_reading_age_s) {
    return refuse('readings_stale', `the latest readings of group "${g.config.id}" arrived ${ageS.toFixed(1)} s before the request (rezero.max_reading_age_s ${cfg.max_reading_age_s}): is its logger silent?`);
  }
  const els = g.model.elements;
  const missing = els.filter((_, i) => !(readings.raw[i] === readings.raw[i])).map((el) => `${el.loggerId}/${el.channelId}`);
  const comp = g.model.companion;
  if (comp !== null && !(readings.companionRaw === readings.companionRaw)) missing.push(`${comp.loggerId}/${comp.channelId} (companion)`);
  if (missing.length > 0) return refuse('readings_incomplete', `no reading of ${missing.join(', ')} in the latest frame`);
  const outside = els.filter((el, i) => readings.raw[i] < el.validMin || readings.raw[i] > el.validMax).map((el) => `${el.loggerId}/${el.channelId}`);
  if (comp !== null && (readings.companionRaw < comp.validMin || readings.companionRaw > comp.validMax)) outside.push(`${comp.loggerId}/${comp.channelId} (companion)`);
  if (outside.length > 0) return refuse('readings_out_of_range', `${outside.join(', ')} outside the valid range`);
  if ((readings.flags & SUSPECT) !== 0) {
    return refuse('readings_suspect', `the latest readings are flagged ${flagsFromBits(readings.flags & SUSPECT).join(', ')}: not a zero to keep`);
  }
  const hasSensors = g.temperatures.length > 0;
  if (hasSensors && !(readings.temperatureC === readings.temperatureC)) return refuse('temperature_missing', `no temperature for group "${g.config.id}": the zero-reading temperature would be unknown`);
  if (hasSensors && (readings.flags & BIT_TEMPERATURE_STALE) !== 0) return refuse('temperature_stale', `the temperature of group "${g.config.id}" is stale: the zero-reading temperature would be wrong`);
  const old = zerosInEffect(structure, g, inEffect);
  const unitOf = new Map(structure.config.gauges.map((x) => [x.id, x.signal.unit as string]));
  const change = (el: typeof els[number], oldZero: number, newZero: number) => ({
    gauge: el.gaugeId, channel: `${el.loggerId}/${el.channelId}`, unit: unitOf.get(el.gaugeId) ?? '', old_zero: oldZero, new_zero: newZero,
  });
  const iso = (ms: number) => new Date(ms).toISOString();
  return {
    ok: true,
    record: {
      id: `${g.config.id}@${iso(request.atMs)}`, structure: structure.structureId, group_id: g.config.id,
      user: request.user, reason: request.reason, at: iso(request.atMs), at_ms: request.atMs,
      readings_time: iso(readings.timeMs), readings_time_ms: readings.timeMs,
      elements: els.map((el, i) => change(el, old.elements[i], readings.raw[i])),
      companion: comp === null ? null : change(comp, old.companion, readings.companionRaw),
      zero_temperature_degC: { old: old.zeroTempC, new: hasSensors ? readings.temperatureC : old.zeroTempC },
    },
  };
}
