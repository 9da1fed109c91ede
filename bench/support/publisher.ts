/**
 * Parent-side handle of the publishing child process (publisher-child.ts): connect it to the
 * broker, run publish jobs, stop it. The child is killed on `stop()` whatever state it is in.
 */
import { fork, type ChildProcess } from 'node:child_process';
import { fileURLToPath } from 'node:url';

/** One publishing run: `count` scans on `topic`; `rate_per_s` 0 = as fast as the broker acknowledges. */
export interface PublishJob {
  topic: string;
  count: number;
  /** Most QoS 1 publishes awaiting PUBACK at once. */
  window: number;
  rate_per_s: number;
  seqStart: number;
  /** JSON texts of `values` objects, used in turn. */
  bodies: string[];
}

/** Wall-clock span of a job (epoch ms, the same clock as the payload `ts`). */
export interface PublishReport {
  startMs: number;
  endMs: number;
  published: number;
  /** Distinct `ts` values among them (scans published in the same millisecond share one). */
  distinctTimestamps: number;
  /** Paced jobs: most scans the publisher ever fell behind its schedule (0 = pacing held). */
  maxBehindSchedule: number;
}

export interface Publisher {
  /** Process id of the child (benchmarks read its CPU time). */
  pid: number;
  publish(job: PublishJob): Promise<PublishReport>;
  stop(): Promise<void>;
}

/** Forks the child (TypeScript through tsx's loader) and connects it to `url`. */
export async function startPublisher(url: string): Promise<Publisher> {
  const script = fileURLToPath(new URL('./publisher-child.ts', import.meta.url));
  const child: ChildProcess = fork(script, [], { execArgv: ['--import', 'tsx'], stdio: ['ignore', 'inherit', 'inherit', 'ipc'] });
  const request = <T>(msg: unknown): Promise<T> => new Promise((resolve, reject) => {
    const onExit = (code: number | null) => reject(new Error(`publisher exited (code ${code})`));
    child.once('exit', onExit);
    child.once('message', (reply: { ok: boolean; error?: string } & T) => {
      child.off('exit', onExit);
      if (reply.ok) resolve(reply);
      else reject(new Error(`publisher: ${reply.error}`));
    });
    child.send(msg as object);
  });
  const stop = async () => {
    if (child.exitCode !== null || child.signalCode !== null) return;
    const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));
    const killer = setTimeout(() => child.kill('SIGKILL'), 3000);
    if (child.connected) child.send({ cmd: 'exit' });
    else child.kill('SIGTERM');
    await exited;
    clearTimeout(killer);
  };
  try {
    await request({ cmd: 'connect', url });
  } catch (err) {
    await stop();
    throw err;
  }
  return {
    pid: child.pid!,
    publish: async (job) => (await request<{ report: PublishReport }>({ cmd: 'publish', job })).report,
    stop,
  };
}
