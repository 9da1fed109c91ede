import { LineBuffer } from '../adapters/lineproto/line-buffer.js';
import { escapeKey, escapeMeasurement } from '../adapters/lineproto/encode.js';
import type { LineBlock } from '../model/point.js';
import { QUALITY_FLAGS, qualityBits } from '../model/quality.js';
import type { LoggerFrame } from '../model/raw-message.js';
import type { GroupResult } from '../model/result.js';
import { FieldPlaces } from '../results/field-places.js';
import type { ProcessedFrame } from './frame-processor.js';

/**
 * The database layout of a processed frame (documented in the README). Identifiers are tags;
 * everything numeric is a field, because the time-series server keeps numeric fields only.
 *
 * - sw_result  tags structure, group, zone, logger, [run]   fields: every result quantity that applies
 *   (names carry units), written with RESULT_DECIMALS decimals; quality_bits (0 = good); flag_<name>=1
 *   for each flag the result carries (absent otherwise); seq; el_<gauge>_micro when asked for
 * - sw_raw     tags structure, logger, [run]                fields: one per channel as received (raw
 *   unit, never rounded), missing_channels (count of nulls), arrival_lag_ms (arrival minus logger time), seq
 *
 * Flags are sparse because they repeat `quality_bits` (bit i = QUALITY_FLAGS[i]): a dense 0/1 field
 * per flag was 70 of the 325 values a 32-channel scan wrote, for the few results that carry one.
 */
export interface FrameLineOptions {
  /** Extra tags on every line, e.g. {run: 'replay-2026-11-30'} so replays never overwrite live data. */
  extraTags?: Readonly<Record<string, string>>;
  /** Write raw readings (the archive for diagnosis). Default true. */
  raw?: boolean;
  /** Write each element's mechanical strain (`el_<gauge>_micro`). Default false: a replay of the raw archive gives them. */
  elementStrains?: boolean;
}

/**
 * Decimals of every sw_result value in its own unit: 1e-6 MPa is 1 Pa, 1e-6 microstrain is
 * 1e-12; both far below what any gauge resolves, and half the digits of a full double.
 */
export const RESULT_DECIMALS = 6;

/** Encodes processed frames into line blocks; keeps the escaped names it has prepared. Not shared across threads. */
export type FrameLineEncoder = <M>(p: ProcessedFrame<M>) => LineBlock;

const ascii = (text: string) => Buffer.from(text, 'utf8');
const FLAG_KEYS = QUALITY_FLAGS.map((f) => ascii(`,flag_${f}=1`));
const QUALITY_KEY = ascii(' quality_bits=');
const SEQ_KEY = ascii(',seq=');
const MISSING_KEY = ascii('missing_channels=');
const LAG_KEY = ascii(',arrival_lag_ms=');
const SPACE = 0x20;
const COMMA = 0x2c;
/** A group's sw_result series: its tags as last seen, its escaped key, its field keys by position. */
interface ResultSeries { structure: string; zone: string; logger: string; key: Buffer; fields: FieldPlaces<Buffer> }
/** Bounds on the name caches: names come from the configuration, so they stay far below. */
const CACHE_LIMIT = 100_000;

/**
 * The parts of the encoder: a result's sw_result line, a frame's sw_raw line, and the buffer they
 * are written into (the storage stage writes its summary lines there too), taken as one block.
 */
export interface FrameLineWriter {
  result(r: GroupResult): void;
  raw(frame: LoggerFrame): void;
  /** The escaped `measurement,tags` of a series of this encoder (its extra tags added), prepared once by the caller. */
  seriesKey(measurement: string, tags: Array<[string, string]>): Buffer;
  readonly out: LineBuffer;
  take(): LineBlock;
}

export function frameLineEncoder(options: FrameLineOptions = {}): FrameLineEncoder {
  const w = frameLineWriter(options);
  return (p) => {
    for (const r of p.results) w.result(r);
    if (options.raw !== false) w.raw(p.frame);
    return w.take();
  };
}

export function frameLineWriter(options: FrameLineOptions = {}): FrameLineWriter {
  const extra = Object.entries(options.extraTags ?? {});
  const out = new LineBuffer();
  const resultKeys = new Map<string, ResultSeries>();
  const rawKeys = new Map<string, { structure: string; key: Buffer }>();
  const fieldKeys = new Map<string, Buffer>();
  const channelKeys = new Map<string, Buffer>();
  const elementKeys = new Map<string, Buffer>();

  /** The escaped `measurement,tag=value,...` of a series, tags sorted by key (the reference's tip), empty values left out. */
  const seriesKey = (measurement: string, tags: Array<[string, string]>): Buffer => {
    let text = escapeMeasurement(measurement);
    for (const [k, v] of [...tags, ...extra].sort((a, b) => (a[0] < b[0] ? -1 : a[0] > b[0] ? 1 : 0))) {
      if (k !== '' && v !== '') text += `,${escapeKey(k)}=${escapeKey(v)}`;
    }
    return ascii(text);
  };
  const resultSeries = (r: GroupResult): ResultSeries => {
    const c = resultKeys.get(r.groupId);
    if (c !== undefined && c.structure === r.structureId && c.zone === r.zone && c.logger === r.loggerId) return c;
    const key = seriesKey('sw_result', [['structure', r.structureId], ['group', r.groupId], ['zone', r.zone], ['logger', r.loggerId]]);
    const series = { structure: r.structureId, zone: r.zone, logger: r.loggerId, key, fields: new FieldPlaces(fieldKey) };
    if (resultKeys.size < CACHE_LIMIT) resultKeys.set(r.groupId, series);
    return series;
  };
  const rawKey = (structure: string, logger: string): Buffer => {
    const c = rawKeys.get(logger);
    if (c !== undefined && c.structure === structure) return c.key;
    const key = seriesKey('sw_raw', [['structure', structure], ['logger', logger]]);
    if (rawKeys.size < CACHE_LIMIT) rawKeys.set(logger, { structure, key });
    return key;
  };
  /** `,name=` as bytes (result fields: quality_bits always comes first). */
  const fieldKey = (name: string): Buffer => cachedKey(fieldKeys, name, resultFieldText);
  /** `name=` as bytes (raw fields: the counts always come last). */
  const channelKey = (name: string): Buffer => cachedKey(channelKeys, name, rawFieldText);
  const elementKey = (gauge: string): Buffer => cachedKey(elementKeys, gauge, elementFieldText);

  const writeResult = (r: GroupResult): void => {
    const series = resultSeries(r);
    out.bytes(series.key);
    // quality_bits comes first: it is always there, so every other field follows a comma.
    const bits = qualityBits(r.flags);
    out.bytes(QUALITY_KEY);
    out.exact(bits);
    for (let i = 0; i < FLAG_KEYS.length; i++) if ((bits >> i) & 1) out.bytes(FLAG_KEYS[i]);
    const values = r.values as Record<string, number>;
    const fields = series.fields;
    let i = 0;
    for (const name in values) {
      const v = values[name];
      const key = fields.at(i++, name);
      if (!Number.isFinite(v)) continue;
      out.bytes(key);
      out.fixed(v, RESULT_DECIMALS);
    }
    if (options.elementStrains) {
      for (const gauge in r.elementStrainMicro) {
        const v = r.elementStrainMicro[gauge];
        if (!Number.isFinite(v)) continue;
        out.bytes(elementKey(gauge));
        out.fixed(v, RESULT_DECIMALS);
      }
    }
    if (r.seq !== null) { out.bytes(SEQ_KEY); out.exact(r.seq); }
    out.byte(SPACE);
    out.exact(Math.round(r.timeMs));
    out.endLine();
  };

  const writeRaw = (f: LoggerFrame): void => {
    out.bytes(rawKey(f.structureId, f.loggerId));
    out.byte(SPACE);
    let missing = 0;
    for (const ch of f.values.keys()) { // keys, not entries: no pair array per reading
      const v = f.values.get(ch);
      if (v === null || v === undefined || !Number.isFinite(v)) { missing++; continue; }
      out.bytes(channelKey(ch));
      out.exact(v);
      out.byte(COMMA);
    }
    out.bytes(MISSING_KEY);
    out.exact(missing);
    out.bytes(LAG_KEY);
    out.exact(f.arrivalMs - f.timeMs);
    if (f.seq !== null) { out.bytes(SEQ_KEY); out.exact(f.seq); }
    out.byte(SPACE);
    out.exact(Math.round(f.timeMs));
    out.endLine();
  };

  return { result: writeResult, raw: writeRaw, seriesKey, out, take: () => out.take() };
}

const resultFieldText = (name: string) => `,${escapeKey(name)}=`;
const rawFieldText = (name: string) => `${escapeKey(name)}=`;
const elementFieldText = (gauge: string) => `,${escapeKey(`el_${gauge}_micro`)}=`;

function cachedKey(cache: Map<string, Buffer>, name: string, text: (name: string) => string): Buffer {
  let key = cache.get(name);
  if (key === undefined) {
    key = ascii(text(name));
    if (cache.size < CACHE_LIMIT) cache.set(name, key);
  }
  return key;
}
