import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import * as bits from '../../src/mechanics/evaluate-group.js';
import { qualityBit } from '../../src/model/quality.js';

describe('core boundaries', () => {
  it('src/mechanics imports nothing from RxJS, Node I/O, adapters or the pipeline', () => {
    const dir = 'src/mechanics';
    for (const file of readdirSync(dir)) {
      const text = readFileSync(join(dir, file), 'utf8');
      const imports = [...text.matchAll(/from '([^']+)'/g)].map((m) => m[1]);
      for (const spec of imports) {
        const allowed = spec.startsWith('./') || spec === 'ml-matrix' || spec.startsWith('../model/');
        expect(allowed, `${file} imports ${spec}`).toBe(true);
      }
    }
  });

  it('src/fatigue imports nothing but its own files (pure maths: no RxJS, Node I/O, adapters or pipeline)', () => {
    const dir = 'src/fatigue';
    for (const file of readdirSync(dir)) {
      const text = readFileSync(join(dir, file), 'utf8');
      for (const m of text.matchAll(/(?:from|import)\s*\(?\s*'([^']+)'/g)) {
        expect(m[1].startsWith('./'), `${file} imports ${m[1]}`).toBe(true);
      }
    }
  });

  it('the evaluator quality bits follow QUALITY_FLAGS', () => {
    expect(bits.BIT_TEMPERATURE_STALE).toBe(qualityBit('temperature_stale'));
    expect(bits.BIT_TEMPERATURE_MISSING).toBe(qualityBit('temperature_missing'));
    expect(bits.BIT_ELEMENT_MISSING).toBe(qualityBit('element_missing'));
    expect(bits.BIT_ELEMENT_OUT_OF_RANGE).toBe(qualityBit('element_out_of_range'));
    expect(bits.BIT_RESIDUAL_HIGH).toBe(qualityBit('residual_high'));
    expect(bits.BIT_COMPANION_MISSING).toBe(qualityBit('companion_missing'));
    expect(bits.BIT_UNDERDETERMINED).toBe(qualityBit('underdetermined'));
  });
});
