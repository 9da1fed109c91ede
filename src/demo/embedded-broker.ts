import { createServer, type Server } from 'node:net';
import { Aedes } from 'aedes';

export interface EmbeddedBroker {
  url: string;
  port: number;
  /** Resolves true at the first message a client with this id publishes, false after `ms`. */
  firstPublishFrom(clientId: string, ms: number): Promise<boolean>;
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
    firstPublishFrom: (clientId, ms) => new Promise<boolean>((done) => {
      const seen = (_packet: unknown, client: { id: string } | null) => {
        if (client?.id !== clientId) return;
        broker.off('publish', seen);
        clearTimeout(timer);
        done(true);
      };
      const timer = setTimeout(() => { broker.off('publish', seen); done(false); }, ms);
      broker.on('publish', seen);
    }),
    stop: async () => {
      await new Promise<void>((done) => broker.close(() => done()));
      await new Promise<void>((done) => server.close(() => done()));
    },
  };
}
