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

const NO_TAGS: Readonly<Record<string, string>> = Object.freeze({});
// One frozen tags object per series, so the encoder can keep its escaped series key with it.
const seriesTags = new WeakMap<object, Map<string, Readonly<Record<string, string>>>>();
function tagsFor(extra: Readonly<Record<string, string>>, key: string, make: () => Record<string, string>): Readonly<Record<string, string>> {
  let byKey = seriesTags.get(extra);
  if (byKey === undefined) seriesTags.set(extra, (byKey = new Map()));
  let tags = byKey.get(key);
  if (tags === undefined) {
    tags = Object.freeze({ ...make(), ...extra });
    if (byKey.size < 100_000) byKey.set(key, tags);
  }
  return tags;
}

export function resultPoint(r: GroupResult, extraTags: Readonly<Record<string, string>> = NO_TAGS): Point {
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
    tags: tagsFor(extraTags, `r\u0000${r.structureId}\u0000${r.groupId}\u0000${r.zone}\u0000${r.loggerId}`,
      () => ({ structure: r.structureId, group: r.groupId, zone: r.zone, logger: r.loggerId })),
    fields,
    timeMs: r.timeMs,
  };
}

export function framePoints<M>(p: ProcessedFrame<M>, options: PointOptions = {}): Point[] {
  const tags = options.extraTags ?? NO_TAGS;
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
    const rawTags = tagsFor(tags, `w\u0000${f.structureId}\u0000${f.loggerId}`, () => ({ structure: f.structureId, logger: f.loggerId }));
    points.push({ measurement: 'sw_raw', tags: rawTags, fields, timeMs: f.timeMs });
  }
  return points;
}
