/**
 * A CPU profile of this process over one span (node:inspector, in process): the benchmark profiles
 * only its saturated runs, not the set-up, the bare subscriber or the database-alone phase.
 * The file is a `.cpuprofile` (Chrome DevTools, or `node bench/support/profile-top.mjs FILE`).
 */
import { Session } from 'node:inspector/promises';
import { mkdir, writeFile } from 'node:fs/promises';
import { join } from 'node:path';

export interface CpuProfileSpan {
  /** Stops profiling and writes `<dir>/<name>.cpuprofile`; returns the path. */
  stop(): Promise<string>;
}

export async function startCpuProfile(dir: string, name: string): Promise<CpuProfileSpan> {
  const session = new Session();
  session.connect();
  await session.post('Profiler.enable');
  await session.post('Profiler.setSamplingInterval', { interval: 200 });
  await session.post('Profiler.start');
  return {
    async stop() {
      const { profile } = await session.post('Profiler.stop');
      session.disconnect();
      await mkdir(dir, { recursive: true });
      const path = join(dir, `${name}.cpuprofile`);
      await writeFile(path, JSON.stringify(profile));
      return path;
    },
  };
}
