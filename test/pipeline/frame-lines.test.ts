import { lineBlockText } from '../../src/model/point.js';
import { describe, expect, it } from 'vitest';
import { decodeLines } from '../../src/adapters/lineproto/decode.js';
import type { LoggerFrame } from '../../src/model/raw-message.js';
import { FrameProcessor } from '../../src/pipeline/frame-processor.js';
import { frameLineEncoder, RESULT_DECIMALS } from '../../src/pipeline/frame-lines.js';
import { compileOrThrow, planeRosetteDoc } from '../support/structures.js';

const structure = compileOrThrow({ ...planeRosetteDoc([0, 45, 90], { valid_range: [-3000, 3000] }), structure: { id: 'deck-a', name: 'x', location: 'y' } });
const frame = (seq: number, values: Record<string, number | null>): LoggerFrame => ({
  structureId: 'deck-a', loggerId: 'lg', timeMs: 1_793_491_200_000 + seq * 100, seq, values: new Map(Object.entries(values)), arrivalMs: 1_793_491_200_025 + seq * 100,
});
const processed = (f: LoggerFrame) => new FrameProcessor<null>(structure).onFrame(f, null, f.arrivalMs)[0];

describe('frameLineEncoder: the database layout of a processed frame', () => {
  it('writes one sw_result line per group, every value within half a unit of its last decimal, and the raw readings exactly', () => {
    const p = processed(frame(7, { ch0: 412.37, ch1: -61.2, ch2: 0.01 }));
    const block = frameLineEncoder()(p);
    expect(block.lines).toBe(2);
    const [result, raw] = decodeLines(lineBlockText(block));
    expect(result.measurement).toBe('sw_result');
    expect(result.tags).toEqual({ structure: 'deck-a', group: 'r1', zone: 'z', logger: 'lg' });
    expect(result.timeMs).toBe(1_793_491_200_700);
    const values = p.results[0].values as Record<string, number>;
    expect(Object.keys(values).length).toBeGreaterThan(10);
    for (const [name, v] of Object.entries(values)) {
      expect(Math.abs(result.fields[name] - v), name).toBeLessThanOrEqual(0.5 * 10 ** -RESULT_DECIMALS + 1e-12 * Math.abs(v));
    }
    // No thermocouple in this structure: every result says its temperature is missing (bit 1).
    expect(p.results[0].flags).toEqual(['temperature_missing']);
    expect(result.fields.quality_bits).toBe(2);
    expect(result.fields.seq).toBe(7);
    expect(Object.keys(result.fields).filter((k) => k.startsWith('flag_') || k.startsWith('el_'))).toEqual(['flag_temperature_missing']);
    expect(raw).toEqual({
      measurement: 'sw_raw', tags: { structure: 'deck-a', logger: 'lg' }, timeMs: 1_793_491_200_700,
      fields: { ch0: 412.37, ch1: -61.2, ch2: 0.01, missing_channels: 0, arrival_lag_ms: 25, seq: 7 },
    });
    expect(lineBlockText(block).split('\n')[0]).toMatch(/^sw_result,group=r1,logger=lg,structure=deck-a,zone=z quality_bits=2,flag_temperature_missing=1,/);
  });

  it('writes a flag field only on a result that carries the flag, with quality_bits holding them all', () => {
    const p = processed(frame(1, { ch0: 9000, ch1: 10, ch2: null }));
    const [result, raw] = decodeLines(lineBlockText(frameLineEncoder()(p)));
    expect(p.results[0].flags).toEqual(['temperature_missing', 'element_missing', 'element_out_of_range', 'underdetermined']);
    expect(result.fields.quality_bits).toBe(2 + 4 + 8 + 64);
    const flagFields = Object.entries(result.fields).filter(([k]) => k.startsWith('flag_'));
    expect(flagFields.sort()).toEqual([['flag_element_missing', 1], ['flag_element_out_of_range', 1], ['flag_temperature_missing', 1], ['flag_underdetermined', 1]]);
    expect(raw.fields).toMatchObject({ ch0: 9000, ch1: 10, missing_channels: 1 });
    expect(raw.fields.ch2).toBeUndefined();
  });

  it('adds the run tag, element strains when asked, and leaves raw readings out when asked', () => {
    const p = processed(frame(2, { ch0: 100, ch1: 50, ch2: -30 }));
    const block = frameLineEncoder({ extraTags: { run: 'night run' }, elementStrains: true, raw: false })(p);
    const lines = decodeLines(lineBlockText(block));
    expect(lines).toHaveLength(1);
    expect(lines[0].tags.run).toBe('night run');
    // Tags sorted by key; the space escaped (line protocol reference, "Special characters").
    expect(lineBlockText(block)).toMatch(/^sw_result,group=r1,logger=lg,run=night\\ run,structure=deck-a,zone=z /);
    // No thermal output and no transverse sensitivity here: mechanical strain = reading.
    expect([lines[0].fields.el_g0_micro, lines[0].fields.el_g1_micro, lines[0].fields.el_g2_micro]).toEqual([100, 50, -30]);
  });

  it('gives the same text for the same frame, frame after frame (names prepared once)', () => {
    const encode = frameLineEncoder();
    const p = processed(frame(3, { ch0: 1, ch1: 2, ch2: 3 }));
    const first = lineBlockText(encode(p));
    expect(lineBlockText(encode(p))).toBe(first);
    expect(lineBlockText(encode(processed(frame(4, { ch0: 1, ch1: 2, ch2: 3 }))))).not.toBe(first);
  });
});

describe('frameLineEncoder: names cannot inject line protocol', () => {
  it('channel ids with spaces, commas, equals signs, quotes and backslashes stay one field each, on their own line', () => {
    const channels = ['ch 0', 'ch,1 seq=9', 'ch=2 "x"\\'];
    const doc = planeRosetteDoc([0, 45, 90]);
    const gauges = (doc.gauges as Array<{ channel: { channel: string } }>).map((g, i) => ({ ...g, channel: { ...g.channel, channel: channels[i] } }));
    const s = compileOrThrow({ ...doc, gauges, structure: { id: 'deck-a', name: 'x', location: 'y' } });
    const f: LoggerFrame = { ...frame(1, {}), values: new Map([[channels[0], 1.5], [channels[1], 2.5], [channels[2], 3.5]]) };
    const block = frameLineEncoder()(new FrameProcessor<null>(s).onFrame(f, null, f.arrivalMs)[0]);
    expect(lineBlockText(block).trimEnd().split('\n')).toHaveLength(2);
    const [, raw] = decodeLines(lineBlockText(block));
    // The reference escaping (line protocol "Special characters"): each name comes back whole, no extra field or tag.
    expect(raw.tags).toEqual({ structure: 'deck-a', logger: 'lg' });
    expect(raw.fields).toEqual({ 'ch 0': 1.5, 'ch,1 seq=9': 2.5, 'ch=2 "x"\\': 3.5, missing_channels: 0, arrival_lag_ms: 25, seq: 1 });
  });
});
