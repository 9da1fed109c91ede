import { describe, expect, it } from 'vitest';
import { scanMessageSchema, parseLoggerTimestamp } from '../../src/ingest/payload-schema.js';
import { compileTopicPattern, parseTopic } from '../../src/ingest/topic.js';
import { defaultScenario } from '../../simulators/default-scenario.js';
import { createSimulation } from '../../simulators/run.js';
import { brannock, START_MS } from './support.js';

describe('simulated messages follow the logger message contract', () => {
  it('every payload passes the ingest schema, on a topic naming a configured logger, with every configured channel', async () => {
    const s = await brannock();
    const pattern = compileTopicPattern();
    const seqs = new Map<string, number>();
    let n = 0;
    for (const scan of createSimulation(s, defaultScenario({ seed: 2, start_ms: START_MS, duration_s: 120, day_s: 120 })).scans()) {
      const topic = parseTopic(pattern, scan.topic);
      expect(topic.ok && topic.structureId === 'brannock-mere' && s.directory.hasLogger(topic.loggerId)).toBe(true);
      const msg = scanMessageSchema.parse(JSON.parse(scan.payload));
      expect(msg.synthetic).toBe(true); // every simulated message says so: the processor warns about it
      expect(parseLoggerTimestamp(msg.ts)).toEqual({ ok: true, timeMs: scan.loggerMs });
      for (const ch of Object.keys(msg.values)) expect(s.directory.hasChannel(scan.loggerId, ch)).toBe(true);
      // seq increases per logger (a silent logger leaves a gap, never a repeat)
      expect(msg.seq!).toBeGreaterThan(seqs.get(scan.loggerId) ?? -1);
      seqs.set(scan.loggerId, msg.seq!);
      n++;
    }
    expect(n).toBeGreaterThan(2000);
    expect([...seqs.keys()].sort()).toEqual(['lg-pier', 'lg-slab', 'lg-span1', 'lg-thermal']);
  });
});
