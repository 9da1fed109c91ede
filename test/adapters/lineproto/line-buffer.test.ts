import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { LineBuffer } from '../../../src/adapters/lineproto/line-buffer.js';

const text = (write: (b: LineBuffer) => void): string => {
  const b = new LineBuffer();
  write(b);
  return b.take().text;
};

describe('LineBuffer.fixed: a value to at most d decimals', () => {
  it('writes the digits, drops trailing zeros, and rounds half away from zero', () => {
    expect(text((b) => b.fixed(79.9116552, 6))).toBe('79.911655');
    expect(text((b) => b.fixed(-12.5, 6))).toBe('-12.5');
    expect(text((b) => b.fixed(3, 6))).toBe('3');
    expect(text((b) => b.fixed(0.0000004, 6))).toBe('0'); // rounds to zero: no "-0", no dangling point
    expect(text((b) => b.fixed(-0.0000004, 6))).toBe('0');
    expect(text((b) => b.fixed(-0, 6))).toBe('0');
    expect(text((b) => b.fixed(0.0000125, 6))).toBe('0.000013');
    expect(text((b) => b.fixed(-1.0000005, 6))).toBe('-1.000001');
    expect(text((b) => b.fixed(12.34, 0))).toBe('12');
  });

  it('falls back to the shortest round-trip form where fixed digits would not be exact', () => {
    expect(text((b) => b.fixed(1e300, 6))).toBe('1e+300');
    expect(text((b) => b.fixed(-2.5e10, 6))).toBe('-25000000000');
  });

  it('is within half a unit of the last decimal of the value, for any double (property)', () => {
    fc.assert(fc.property(fc.double({ noNaN: true, noDefaultInfinity: true, min: -1e9, max: 1e9 }), fc.integer({ min: 0, max: 9 }), (v, d) => {
      const t = text((b) => b.fixed(v, d));
      expect(t).toMatch(/^-?\d+(\.\d*[1-9])?$/);
      // Half a unit, plus the rounding of v * 10^d itself (a few ulps of the scaled value).
      expect(Math.abs(Number(t) - v)).toBeLessThanOrEqual(0.5 * 10 ** -d + 4 * Number.EPSILON * Math.abs(v));
    }), { numRuns: 5000 });
  });
});

describe('LineBuffer.exact: a value that reads back unchanged', () => {
  it('reads back to the same float64 for any finite double (property)', () => {
    fc.assert(fc.property(fc.double({ noNaN: true, noDefaultInfinity: true }), (v) => {
      const t = text((b) => b.exact(v));
      expect(Object.is(Number(t), v) || (v === 0 && Number(t) === 0)).toBe(true);
    }), { numRuns: 20000 });
  });

  it('writes a logger reading the way the logger sent it (hundredths, as JSON would)', () => {
    fc.assert(fc.property(fc.integer({ min: -1e9, max: 1e9 }), (n) => {
      const v = n / 100;
      expect(text((b) => b.exact(v))).toBe(String(v));
    }), { numRuns: 5000 });
  });

  it('writes integers digit by digit', () => {
    expect(text((b) => b.exact(1_793_491_200_050))).toBe('1793491200050');
    expect(text((b) => b.exact(-42))).toBe('-42');
    expect(text((b) => b.exact(0))).toBe('0');
  });
});

describe('LineBuffer blocks', () => {
  it('counts lines, leaves out the final newline, grows past its first 64 KiB and starts over after take', () => {
    const b = new LineBuffer();
    const name = Buffer.from('m f=');
    for (let i = 0; i < 20_000; i++) {
      b.bytes(name);
      b.exact(i);
      b.endLine();
    }
    const block = b.take();
    expect(block.lines).toBe(20_000);
    const lines = block.text.split('\n');
    expect(lines).toHaveLength(20_000);
    expect(lines[19_999]).toBe('m f=19999');
    expect(b.take()).toEqual({ text: '', lines: 0 });
  });
});
