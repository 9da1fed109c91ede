import { Writable } from 'node:stream';
import pino, { type Logger } from 'pino';
import { formatLogChunk } from './line-format.js';

/** Levels a person may ask for: `warn` keeps only the lines to act on (alarms, losses, refusals). */
export const LOG_LEVELS = ['info', 'warn'] as const;
export type LogLevel = (typeof LOG_LEVELS)[number];

/**
 * The processor's logger on stderr: JSON lines (pino) when stderr is a file or a pipe, for
 * machines; readable lines (`formatLogLine`) when it is a terminal, for the person on duty.
 * `readable` overrides the terminal test (tests, `--log-format`); `level` defaults to info.
 */
export function makeLogger(o: { readable?: boolean; fd?: number; write?: (line: string) => void; level?: LogLevel } = {}): Logger {
  const options = { name: 'strainward', level: o.level ?? 'info' };
  const fd = o.fd ?? 2;
  const readable = o.readable ?? Boolean(fd === 2 ? process.stderr.isTTY : process.stdout.isTTY);
  if (!readable && o.write === undefined) return pino(options, pino.destination(fd));
  const write = o.write ?? ((line: string) => { (fd === 2 ? process.stderr : process.stdout).write(line); });
  let pending = '';
  const stream = new Writable({
    write(chunk: Buffer, _encoding, done) {
      pending += chunk.toString('utf8');
      const lines = pending.split('\n');
      pending = lines.pop() ?? '';
      for (const l of lines) {
        const text = readable ? formatLogChunk(l) : l;
        if (text !== '') write(`${text}\n`);
      }
      done();
    },
  });
  return pino(options, stream);
}
