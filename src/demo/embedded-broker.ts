import { createServer, type Server } from 'node:net';
import { Aedes } from 'aedes';

export interface EmbeddedBroker {
  url: string;
  port: number;
  stop(): Promise<void>;
}

/**
 * The demo's MQTT broker: aedes in this process (MQTT 3.1.1 only, sessions in memory), listening on
 * `host` (loopback) and `port` (0: any free port). For a structure, run a broker of its own with
 * persistence instead; the processor only needs its URL in the runtime file.
 */
export async function startEmbeddedBroker(host: string, port: number): Promise<EmbeddedBroker> {
  const broker = await Aedes.createBroker();
  const server: Server = createServer(broker.handle);
  await new Promise<void>((resolveListen, reject) => {
    server.once('error', (err: NodeJS.ErrnoException) => {
      broker.close();
      reject(err.code === 'EADDRINUSE'
        ? new Error(`port ${port} on ${host} is taken (a broker already running?): choose another with --mqtt-port or STRAINWARD_DEMO_MQTT_PORT`)
        : err);
    });
    server.listen(port, host, () => resolveListen());
  });
  const bound = (server.address() as { port: number }).port;
  return {
    url: `mqtt://${host}:${bound}`,
    port: bound,
    stop: async () => {
      await new Promise<void>((done) => broker.close(() => done()));
      await new Promise<void>((done) => server.close(() => done()));
    },
  };
}
