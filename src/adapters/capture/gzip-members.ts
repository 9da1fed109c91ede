import { crc32, inflateRawSync } from 'node:zlib';

const FHCRC = 0x02;
const FEXTRA = 0x04;
const FNAME = 0x08;
const FCOMMENT = 0x10;

/**
 * The decompressed contents of each complete gzip member of a buffer, in order (RFC 1952).
 * Stops at the first member that is cut short or fails its CRC-32 / length check, so a file torn
 * by a crash yields exactly its intact members and no guessed bytes. Pure; copies the data.
 */
export function* intactGzipMembers(file: Uint8Array): Generator<Buffer> {
  const buf = Buffer.from(file.buffer, file.byteOffset, file.byteLength);
  let at = 0;
  while (at + 18 <= buf.length) {
    if (buf[at] !== 0x1f || buf[at + 1] !== 0x8b || buf[at + 2] !== 8) return;
    const flags = buf[at + 3];
    let p = at + 10;
    if (flags & FEXTRA) {
      if (p + 2 > buf.length) return;
      p += 2 + buf.readUInt16LE(p);
    }
    for (const flag of [FNAME, FCOMMENT]) {
      if (flags & flag) {
        const end = buf.indexOf(0, p);
        if (end < 0) return;
        p = end + 1;
      }
    }
    if (flags & FHCRC) p += 2;
    if (p >= buf.length) return;
    let data: Buffer;
    let used: number;
    try {
      const r = inflateRawSync(buf.subarray(p), { info: true }) as unknown as { buffer: Buffer; engine: { bytesWritten: number } };
      data = r.buffer;
      used = r.engine.bytesWritten;
    } catch {
      return; // deflate data cut short
    }
    const trailer = p + used;
    if (trailer + 8 > buf.length) return;
    if (buf.readUInt32LE(trailer) !== crc32(data) || buf.readUInt32LE(trailer + 4) !== (data.length >>> 0)) return;
    yield data;
    at = trailer + 8;
  }
}
