/** The PointSink contract on the sinks that need no server: memory and line-protocol files. */
import { mkdtemp, readdir, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { decodeLines } from '../../src/adapters/lineproto/decode.js';
import { LineFileSink } from '../../src/adapters/lineproto/file-sink.js';
import { MemorySink } from '../../src/adapters/memory-sink.js';
import { describeSinkContract } from './sink-contract.js';

describeSinkContract('MemorySink', async () => {
  const sink = new MemorySink();
  return {
    sink,
    readBack: async (m) => sink.points.filter((p) => p.measurement === m),
    cleanup: () => sink.close(),
  };
});

describeSinkContract('LineFileSink (small files, so the contract also crosses rotations)', async () => {
  const dir = await mkdtemp(join(tmpdir(), 'sw-contract-files-'));
  const sink = new LineFileSink({ dir, prefix: 'brannock-mere', maxFileBytes: 8_192, maxFileAge_ms: 3_600_000 });
  return {
    sink,
    async readBack(m) {
      const files = (await readdir(dir)).sort();
      const texts = await Promise.all(files.map((f) => readFile(join(dir, f), 'utf8')));
      return decodeLines(texts.join('')).filter((p) => p.measurement === m);
    },
    async cleanup() {
      await sink.close();
      await rm(dir, { recursive: true, force: true });
    },
  };
});
