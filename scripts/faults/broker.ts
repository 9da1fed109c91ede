import { spawn, type ChildProcess } from 'node:child_process';
import { writeFile } from 'node:fs/promises';
import { connect } from 'node:net';
import { join } from 'node:path';
import { userInfo } from 'node:os';

/**
 * A Mosquitto with persistence on, restartable on the same port and data, with the limits the
 * README asks for: a persistent session keeps its queue across a broker restart.
 */
export interface PersistentBroker {
  url: string;
  port: number;
  /** Orderly stop (SIGTERM: the broker saves its sessions and queues), then start again. */
  restart(pauseMs: number): Promise<void>;
  stop(): Promise<void>;
}

async function reachable(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const s = connect({ host: '127.0.0.1', port });
    s.once('connect', () => { s.destroy(); resolve(true); });
    s.once('error', () => resolve(false));
  });
}

export async function startPersistentBroker(dir: string, port: number, maxInflight: number): Promise<PersistentBroker> {
  const conf = join(dir, 'mosquitto.conf');
  await writeFile(conf, [
    `listener ${port} 127.0.0.1`,
    'allow_anonymous true',
    'persistence true',
    `persistence_location ${dir}/`,
    'autosave_interval 5',
    `max_inflight_messages ${maxInflight}`,
    'max_queued_messages 1000000',
    'max_queued_bytes 0',
    'log_dest none',
    `user ${userInfo().username}`,
  ].join('\n') + '\n');
  let child: ChildProcess | null = null;
  const start = async () => {
    child = spawn('/usr/sbin/mosquitto', ['-c', conf], { stdio: 'ignore' });
    const deadline = Date.now() + 15_000;
    while (!(await reachable(port))) {
      if (Date.now() > deadline) throw new Error('mosquitto did not start');
      await new Promise((r) => setTimeout(r, 50));
    }
  };
  const stop = async () => {
    const c = child;
    if (c === null || c.exitCode !== null) return;
    await new Promise<void>((resolve) => { c.once('exit', () => resolve()); c.kill('SIGTERM'); });
    child = null;
  };
  await start();
  return {
    url: `mqtt://127.0.0.1:${port}`, port, stop,
    restart: async (pauseMs) => { await stop(); await new Promise((r) => setTimeout(r, pauseMs)); await start(); },
  };
}
