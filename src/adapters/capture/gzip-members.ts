import { crc32, deflateRawSync, inflateRawSync } from 'node:zlib';

const FHCRC = 0x02;
const FEXTRA = 0x04;
const FNAME = 0x08;
const FCOMMENT = 0x10;
/** Subfield id of strainward's member figures in the gzip extra field (RFC 1952 section 2.3.1.1). */
const SI1 = 0x53; // 'S'
const SI2 = 0x77; // 'w'
const FIGURES_BYTES = 20;

/** What a member holds, written in its header so a reader can count what a damaged member lost. */
export interface MemberFigures {
  messages: number;
  firstArrivalMs: number;
  lastArrivalMs: number;
}

/**
 * One gzip member (RFC 1952) of `text`, its figures in the header's extra field and the header
 * protected by its own CRC (FHCRC), so the figures of a member whose data is damaged can still be
 * trusted. Any gunzip reads it. Pure.
 */
export function encodeGzipMember(text: string, figures: MemberFigures): Buffer {
  const data = Buffer.from(text, 'utf8');
  const head = Buffer.alloc(12 + 4 + FIGURES_BYTES);
  head.set([0x1f, 0x8b, 8, FEXTRA | FHCRC, 0, 0, 0, 0, 0, 255]); // no mtime, OS unknown
  head.writeUInt16LE(4 + FIGURES_BYTES, 10);
  head.set([SI1, SI2], 12);
  head.writeUInt16LE(FIGURES_BYTES, 14);
  head.writeUInt32LE(figures.messages, 16);
  head.writeDoubleLE(figures.firstArrivalMs, 20);
  head.writeDoubleLE(figures.lastArrivalMs, 28);
  const headCrc = Buffer.alloc(2);
  headCrc.writeUInt16LE(crc32(head) & 0xffff);
  const trailer = Buffer.alloc(8);
  trailer.writeUInt32LE(crc32(data), 0);
  trailer.writeUInt32LE(data.length >>> 0, 4);
  return Buffer.concat([head, headCrc, deflateRawSync(data), trailer]);
}

/** A member read back: intact, or a damaged byte range (figures from its header when that is intact). */
export type MemberRead =
  | { kind: 'intact'; fromByte: number; toByte: number; data: Buffer; figures: MemberFigures | null }
  | {
    kind: 'damaged';
    fromByte: number;
    toByte: number;
    figures: MemberFigures | null;
    /** Nothing intact follows and the data simply stops: a write cut by a crash (never reported durable). */
    torn: boolean;
  };

type Attempt = { ok: true; data: Buffer; end: number; figures: MemberFigures | null } | { ok: false; figures: MemberFigures | null; cut: boolean };

/** The member starting at `at`, checked (header CRC when present, data CRC-32 and length). */
function tryMember(buf: Buffer, at: number): Attempt {
  if (at + 18 > buf.length) return { ok: false, figures: null, cut: true };
  if (buf[at] !== 0x1f || buf[at + 1] !== 0x8b || buf[at + 2] !== 8) return { ok: false, figures: null, cut: false };
  const flags = buf[at + 3];
  let p = at + 10;
  let figures: MemberFigures | null = null;
  if (flags & FEXTRA) {
    if (p + 2 > buf.length) return { ok: false, figures: null, cut: true };
    const xlen = buf.readUInt16LE(p);
    figures = xlen >= 4 + FIGURES_BYTES && p + 2 + xlen <= buf.length ? figuresOf(buf, p + 2, xlen) : null;
    p += 2 + xlen;
  }
  for (const flag of [FNAME, FCOMMENT]) {
    if (flags & flag) {
      const end = buf.indexOf(0, p);
      if (end < 0) return { ok: false, figures: null, cut: true };
      p = end + 1;
    }
  }
  if (flags & FHCRC) {
    if (p + 2 > buf.length) return { ok: false, figures: null, cut: true };
    if (buf.readUInt16LE(p) !== (crc32(buf.subarray(at, p)) & 0xffff)) figures = null; // a damaged header says nothing
    p += 2;
  } else figures = null; // figures are trusted only under a header CRC
  if (p >= buf.length) return { ok: false, figures, cut: true };
  let data: Buffer;
  let used: number;
  try {
    const r = inflateRawSync(buf.subarray(p), { info: true }) as unknown as { buffer: Buffer; engine: { bytesWritten: number } };
    data = r.buffer;
    used = r.engine.bytesWritten;
  } catch (err) {
    return { ok: false, figures, cut: (err as { code?: string }).code === 'Z_BUF_ERROR' }; // Z_BUF_ERROR: the data stops
  }
  const trailer = p + used;
  if (trailer + 8 > buf.length) return { ok: false, figures, cut: true };
  if (buf.readUInt32LE(trailer) !== crc32(data) || buf.readUInt32LE(trailer + 4) !== (data.length >>> 0)) return { ok: false, figures, cut: false };
  return { ok: true, data, end: trailer + 8, figures };
}

function figuresOf(buf: Buffer, from: number, xlen: number): MemberFigures | null {
  for (let q = from; q + 4 <= from + xlen;) {
    const len = buf.readUInt16LE(q + 2);
    if (buf[q] === SI1 && buf[q + 1] === SI2 && len === FIGURES_BYTES && q + 4 + len <= from + xlen) {
      return { messages: buf.readUInt32LE(q + 4), firstArrivalMs: buf.readDoubleLE(q + 8), lastArrivalMs: buf.readDoubleLE(q + 16) };
    }
    q += 4 + len;
  }
  return null;
}

/** The first offset from `from` where an intact member starts, or null. */
function nextIntact(buf: Buffer, from: number): number | null {
  for (let at = buf.indexOf(0x1f, from); at >= 0; at = buf.indexOf(0x1f, at + 1)) {
    if (buf[at + 1] === 0x8b && buf[at + 2] === 8 && tryMember(buf, at).ok) return at;
  }
  return null;
}

/**
 * Every member of a buffer of gzip members, in order: intact ones with their data, and each
 * damaged stretch (bad CRC, bad header, garbage) as one byte range, after which reading resumes at
 * the next intact member header. A file torn by a crash ends with a `torn` stretch. Pure; copies.
 */
export function* readGzipMembers(file: Uint8Array): Generator<MemberRead> {
  const buf = Buffer.from(file.buffer, file.byteOffset, file.byteLength);
  let at = 0;
  while (at < buf.length) {
    const m = tryMember(buf, at);
    if (m.ok) {
      yield { kind: 'intact', fromByte: at, toByte: m.end, data: m.data, figures: m.figures };
      at = m.end;
      continue;
    }
    const next = nextIntact(buf, at + 1);
    yield { kind: 'damaged', fromByte: at, toByte: next ?? buf.length, figures: m.figures, torn: next === null && m.cut };
    if (next === null) return;
    at = next;
  }
}

/** The decompressed contents of each intact member, in order (damaged stretches skipped). Pure. */
export function* intactGzipMembers(file: Uint8Array): Generator<Buffer> {
  for (const m of readGzipMembers(file)) if (m.kind === 'intact') yield m.data;
}
