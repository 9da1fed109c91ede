import { writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { userInfo } from 'node:os';
import { startMosquittoWithConfig, type MosquittoServer } from '../../test/support/servers.js';

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
  let server: MosquittoServer | null = await startMosquittoWithConfig(conf, port);
  const stop = async () => { await server?.stop(); server = null; };
  return {
    url: `mqtt://127.0.0.1:${port}`, port, stop,
    restart: async (pauseMs) => {
      await stop();
      await new Promise((r) => setTimeout(r, pauseMs));
      server = await startMosquittoWithConfig(conf, port);
    },
  };
}
