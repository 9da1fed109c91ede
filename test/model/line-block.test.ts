import { describe, expect, it } from 'vitest';
import { joinLineBlocks, lineBlockOf, lineBlockText } from '../../src/model/point.js';

describe('line blocks', () => {
  it('join with one newline between blocks, or after each, keeping UTF-8 as is', () => {
    const blocks = [lineBlockOf('a f=1\na f=2', 2), lineBlockOf('b,zone=n\u00e4he f=3', 1), lineBlockOf('c f=4', 1)];
    expect(joinLineBlocks(blocks, false).toString('utf8')).toBe('a f=1\na f=2\nb,zone=n\u00e4he f=3\nc f=4');
    expect(joinLineBlocks(blocks, true).toString('utf8')).toBe('a f=1\na f=2\nb,zone=n\u00e4he f=3\nc f=4\n');
    expect(joinLineBlocks([], false).byteLength).toBe(0);
    expect(lineBlockText(blocks[1])).toBe('b,zone=n\u00e4he f=3');
    expect(blocks[1].bytes.byteLength).toBe(Buffer.byteLength('b,zone=n\u00e4he f=3'));
  });
});
