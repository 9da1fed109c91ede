import { mkdir, open, type FileHandle } from 'node:fs/promises';
import { dirname } from 'node:path';
import type { AckRefusal, AlarmTransition } from '../types.js';
import type { DeliveryRecord } from './delivery-record.js';
import { alarmMessage } from './format.js';

/** One line of the alarm log. */
export type AlarmLogLine =
  | { type: 'transition'; at: string; message: ReturnType<typeof alarmMessage> }
  | { type: 'refusal'; at: string; refusal: AckRefusal }
  | { type: 'delivery'; at: string; delivery: DeliveryRecord };

/** Append-only alarm log: one JSON object per line (NDJSON). Writes are serialised in call order. */
export interface AlarmLog {
  transition(t: AlarmTransition): Promise<void>;
  refusal(r: AckRefusal): Promise<void>;
  delivery(d: DeliveryRecord): Promise<void>;
  close(): Promise<void>;
}

/** Open (creating folders) the NDJSON alarm log at `path` for appending; a new log is created 0600. */
export async function openAlarmLog(path: string): Promise<AlarmLog> {
  await mkdir(dirname(path), { recursive: true });
  const fh: FileHandle = await open(path, 'a', 0o600);
  let chain: Promise<void> = Promise.resolve();
  const append = (line: AlarmLogLine): Promise<void> => {
    chain = chain.then(() => fh.appendFile(`${JSON.stringify(line)}\n`, 'utf8'));
    return chain;
  };
  const iso = (ms: number): string => new Date(ms).toISOString();
  return {
    transition: (t) => append({ type: 'transition', at: iso(t.atMs), message: alarmMessage(t) }),
    refusal: (r) => append({ type: 'refusal', at: iso(r.atMs), refusal: r }),
    delivery: (d) => append({ type: 'delivery', at: iso(d.startedMs), delivery: d }),
    close: async () => {
      await chain;
      await fh.close();
    },
  };
}
