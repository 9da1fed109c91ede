import type { Point } from '../model/point.js';
import { QUALITY_FLAGS, qualityBits } from '../model/quality.js';
import type { GroupResult } from '../model/result.js';
import type { ProcessedFrame } from './frame-processor.js';

/**
 * The database layout (documented in the README). Identifiers are tags; everything numeric is a
 * field, because the time-series server keeps numeric fields only.
 *
 * - sw_result  tags structure, group, zone, logger, [run]   fields: every result quantity (names carry
 *   units), quality_bits, good (1/0), one flag_<name> per quality flag (1/0), el_<gauge>_micro, seq
 * - sw_raw     tags structure, logger, [run]                fields: one per channel (raw unit), seq,
 *   missing_channels (count of nulls), arrival_lag_ms (arrival minus logger time)
 */
export interface PointOptions {
  /** Extra tags on every point, e.g. {run: 'replay-2026-11-30'} so replays never overwrite live data. */
  extraTags?: Readonly<Record<string, string>>;
  /** Write raw readings (the archive for diagnosis). Default true. */
  raw?: boolean;
}

// Field names are built once, not per point: every frame writes the same few dozen names.
const FLAG_FIELDS = QUALITY_FLAGS.map((f) => `flag_${f}`);
const elementFieldNames = new Map<string, string>();
/** `el_<gauge>_micro`, remembered per gauge id (ids come from the configuration, so the map stays small). */
function elementField(gaugeId: string): string {
  let name = elementFieldNames.get(gaugeId);
  if (name === undefined) {
    name = `el_${gaugeId}_micro`;
    if (elementFieldNames.size < 65_536) elementFieldNames.set(gaugeId, name);
  }
  return name;
}

export function resultPoint(r: GroupResult, extraTags: Readonly<Record<string, string>> = {}): Point {
  const fields: Record<string, number> = { ...(r.values as Record<string, number>) };
  const bits = qualityBits(r.flags);
  fields.quality_bits = bits;
  fields.good = bits === 0 ? 1 : 0;
  for (let i = 0; i < FLAG_FIELDS.length; i++) fields[FLAG_FIELDS[i]] = (bits >> i) & 1;
  const strains = r.elementStrainMicro;
  for (const gauge in strains) fields[elementField(gauge)] = strains[gauge];
  if (r.seq !== null) fields.seq = r.seq;
  return {
    measurement: 'sw_result',
    tags: { structure: r.structureId, group: r.groupId, zone: r.zone, logger: r.loggerId, ...extraTags },
    fields,
    timeMs: r.timeMs,
  };
}

export function framePoints<M>(p: ProcessedFrame<M>, options: PointOptions = {}): Point[] {
  const tags = options.extraTags ?? {};
  const points = p.results.map((r) => resultPoint(r, tags));
  if (options.raw !== false) {
    const f = p.frame;
    const fields: Record<string, number> = {};
    let missing = 0;
    for (const [ch, v] of f.values) {
      if (v === null) missing++;
      else fields[ch] = v;
    }
    fields.missing_channels = missing;
    fields.arrival_lag_ms = f.arrivalMs - f.timeMs;
    if (f.seq !== null) fields.seq = f.seq;
    points.push({ measurement: 'sw_raw', tags: { structure: f.structureId, logger: f.loggerId, ...tags }, fields, timeMs: f.timeMs });
  }
  return points;
}
