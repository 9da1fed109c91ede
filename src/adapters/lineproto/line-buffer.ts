/**
 * A growable byte buffer that line-protocol text is written into directly: escaped names are
 * prepared once as bytes, numbers are written digit by digit. A 32-channel scan's ten results
 * came to ~500 us/frame as Point objects and strings; this path allocates one small view per block.
 * Pure: no I/O.
 */
import type { LineBlock } from '../../model/point.js';

const POW10 = [1, 10, 100, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9];
/** Below 2^53: integers up to here are exact, so fixed-point digits can be taken by arithmetic. */
const EXACT_LIMIT = 9e15;
const MINUS = 0x2d;
const DOT = 0x2e;
const ZERO = 0x30;
const NEWLINE = 0x0a;
/**
 * Bytes of one slab: blocks are views into it, so it lives until the last of its blocks is written.
 * About 160 frames of 32 channels; outside the garbage collector's young generation.
 */
const SLAB_BYTES = 1 << 20;
const EMPTY_BLOCK: LineBlock = { bytes: new Uint8Array(0), lines: 0 };
/** Longest copy done byte by byte (see bytes()). */
const SHORT_COPY = 16;
/** Sign, 16 integer digits (below 9e15), point, 9 decimals. */
const MAX_FIXED_BYTES = 27;

export class LineBuffer {
  /** The slab being written: [start, pos) is the block not yet taken, bytes before start belong to blocks handed out. */
  private buf = Buffer.allocUnsafeSlow(SLAB_BYTES);
  private start = 0;
  private pos = 0;
  private lineCount = 0;

  /**
   * Copies prepared bytes (an escaped series key, `,field=`...). A plain loop up to SHORT_COPY bytes:
   * for a 15-byte key it took 22-28 ns where Buffer#copy took 30-33 ns; for a 23-byte field key
   * TypedArray#set took 28-36 ns where the loop took 45-49 (measured on the project machine).
   */
  bytes(b: Uint8Array): void {
    const n = b.length;
    this.ensure(n);
    const buf = this.buf;
    const pos = this.pos;
    if (n > SHORT_COPY) buf.set(b, pos);
    else for (let i = 0; i < n; i++) buf[pos + i] = b[i];
    this.pos = pos + n;
  }

  /** One ASCII byte. */
  byte(code: number): void {
    this.ensure(1);
    this.buf[this.pos++] = code;
  }

  /**
   * `value` (finite) as a decimal with at most `decimals` (0..9) digits after the point, trailing
   * zeros dropped; -0 and values that round to zero are written `0`. Magnitudes whose scaled value
   * is not an exact integer any more fall back to the shortest round-trip form.
   */
  fixed(value: number, decimals: number): void {
    const scale = POW10[decimals];
    const scaled = Math.round(Math.abs(value) * scale);
    if (!(scaled < EXACT_LIMIT)) return this.shortest(value);
    if (scaled === 0) return this.byte(ZERO);
    let whole = Math.floor(scaled / scale);
    let frac = scaled - whole * scale;
    // The division can round across an integer near 2^53 / scale: put the parts back in range.
    if (frac < 0) { whole -= 1; frac += scale; } else if (frac >= scale) { whole += 1; frac -= scale; }
    this.ensure(MAX_FIXED_BYTES);
    const buf = this.buf;
    let pos = this.pos;
    if (value < 0) buf[pos++] = MINUS;
    pos = writeUnsigned(buf, pos, whole);
    if (frac !== 0) {
      // frac < 10^9 < 2^31: int32 arithmetic (a double's % is a library call), two digits per division.
      let digits = decimals;
      let f = frac | 0;
      for (let q = (f / 10) | 0; f === q * 10; q = (f / 10) | 0) { f = q; digits--; }
      buf[pos] = DOT;
      writeDigits(buf, pos + 1, f, digits);
      pos += digits + 1;
    }
    this.pos = pos;
  }

  /**
   * `value` exactly: the fewest decimals (up to 9) whose text reads back to the same float64, else
   * ECMAScript's shortest round-trip form. n / 10^d is correctly rounded from exact operands, so
   * it equals what a parser makes of the decimal n * 10^-d: the equality test proves the round trip.
   * Readings as loggers send them (0.01 microstrain...) take the first few tries.
   */
  exact(value: number): void {
    const magnitude = Math.abs(value);
    for (let d = 0; d <= 9; d++) {
      const scale = POW10[d];
      const scaled = Math.round(magnitude * scale);
      if (!(scaled < EXACT_LIMIT)) break;
      if (scaled / scale === magnitude) return this.fixed(value, d);
    }
    this.shortest(value);
  }

  /** Ends the current line. */
  endLine(): void {
    this.byte(NEWLINE);
    this.lineCount++;
  }

  /**
   * The lines written since the last `take`, without the final newline: a view of the slab, which
   * is never written there again (the next block follows it; a full slab is left to the blocks that
   * view it, and the unfinished block moves to a new one).
   */
  take(): LineBlock {
    if (this.pos === this.start) return EMPTY_BLOCK;
    const end = this.buf[this.pos - 1] === NEWLINE ? this.pos - 1 : this.pos;
    const block = { bytes: this.buf.subarray(this.start, end), lines: this.lineCount };
    this.start = this.pos;
    this.lineCount = 0;
    return block;
  }

  private shortest(value: number): void {
    const text = Object.is(value, -0) ? '0' : String(value);
    this.ensure(text.length);
    this.pos += this.buf.write(text, this.pos, 'latin1');
  }

  private unsigned(n: number): void {
    this.ensure(MAX_FIXED_BYTES);
    this.pos = writeUnsigned(this.buf, this.pos, n);
  }

  private ensure(extra: number): void {
    if (this.pos + extra <= this.buf.length) return;
    const open = this.pos - this.start;
    const next = Buffer.allocUnsafeSlow(Math.max(SLAB_BYTES, 2 * (open + extra)));
    this.buf.copy(next, 0, this.start, this.pos);
    this.buf = next;
    this.start = 0;
    this.pos = open;
  }
}

/** "00" "01" ... "99" as ASCII: two digits per division by 100. */
const PAIRS = Buffer.from(Array.from({ length: 100 }, (_, i) => String(i).padStart(2, '0')).join(''), 'latin1');

/** Decimal digits of an integer in [0, 2^31). */
function digitCount(n: number): number {
  if (n < 100_000) return n < 10 ? 1 : n < 100 ? 2 : n < 1000 ? 3 : n < 10_000 ? 4 : 5;
  return n < 1e6 ? 6 : n < 1e7 ? 7 : n < 1e8 ? 8 : n < 1e9 ? 9 : 10;
}

/** Writes `n` (an integer in [0, 2^31)) as exactly `len` digits ending before pos + len, zero-padded on the left. */
function writeDigits(buf: Buffer, pos: number, n: number, len: number): void {
  let p = pos + len;
  while (p - pos >= 2) {
    const q = (n / 100) | 0;
    const r = (n - q * 100) << 1;
    buf[--p] = PAIRS[r + 1];
    buf[--p] = PAIRS[r];
    n = q;
  }
  if (p > pos) buf[--p] = ZERO + n;
}

/** Writes the digits of a non-negative integer below 9e15 at `pos`; returns the position after them. */
function writeUnsigned(buf: Buffer, pos: number, n: number): number {
  if (n < 2_147_483_648) {
    const len = digitCount(n);
    writeDigits(buf, pos, n, len);
    return pos + len;
  }
  // Above int32: the part above 10^9 first, then nine digits (both below 2^31).
  const high = Math.floor(n / 1e9);
  const low = n - high * 1e9;
  const at = writeUnsigned(buf, pos, high);
  writeDigits(buf, at, low, 9);
  return at + 9;
}
