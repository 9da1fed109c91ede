import { lineBlockText } from '../../../src/model/point.js';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { LineBuffer } from '../../../src/adapters/lineproto/line-buffer.js';

const text = (write: (b: LineBuffer) => void): string => {
  const b = new LineBuffer();
  write(b);
  return lineBlockText(b.take());
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
  it('counts lines, leaves out the final newline, and is empty after take', () => {
    const b = new LineBuffer();
    const name = Buffer.from('m f=');
    for (let i = 0; i < 20_000; i++) {
      b.bytes(name);
      b.exact(i);
      b.endLine();
    }
    const block = b.take();
    expect(block.lines).toBe(20_000);
    const lines = lineBlockText(block).split('\n');
    expect(lines).toHaveLength(20_000);
    expect(lines[19_999]).toBe('m f=19999');
    const empty = b.take();
    expect([empty.lines, empty.bytes.byteLength]).toEqual([0, 0]);
  });

  it('never writes again where a block it handed out lies: 3 MiB in blocks across slabs, and one block larger than a slab', () => {
    const b = new LineBuffer();
    const name = Buffer.from('sw_result,group=r1 stress_xx_MPa=');
    const kept: Array<{ block: ReturnType<LineBuffer['take']>; first: number; last: number }> = [];
    let i = 0;
    while (i < 80_000) {
      const first = i;
      for (const end = i + 1 + (i % 977); i < end; i++) { b.bytes(name); b.fixed(i / 7, 6); b.endLine(); }
      kept.push({ block: b.take(), first, last: i - 1 });
    }
    const expected = (k: number) => `sw_result,group=r1 stress_xx_MPa=${Number((k / 7).toFixed(6))}`;
    for (const { block, first, last } of kept) {
      const lines = lineBlockText(block).split('\n');
      expect(lines.length).toBe(block.lines);
      expect(lines.length).toBe(last - first + 1);
      expect([lines[0], lines[lines.length - 1]]).toEqual([expected(first), expected(last)]);
    }
    const total = kept.reduce((n, k) => n + k.block.bytes.byteLength, 0);
    expect(total).toBeGreaterThan(3 * 1024 * 1024);
    // One block of 100,000 lines (about 4 MiB) moves to ever larger slabs as it grows.
    for (let k = 0; k < 100_000; k++) { b.bytes(name); b.fixed(k / 7, 6); b.endLine(); }
    const big = lineBlockText(b.take()).split('\n');
    expect([big.length, big[0], big[99_999]]).toEqual([100_000, expected(0), expected(99_999)]);
    // The first blocks still read as they did.
    expect(lineBlockText(kept[0].block).split('\n')[0]).toBe(expected(0));
  });
});
