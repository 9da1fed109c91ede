import type { ChannelDirectory } from '../../src/model/channel-directory.js';
import type { RawMessage } from '../../src/model/raw-message.js';

/** Invented directory for the Brannock Mere Crossing demo: two loggers. */
export const directory: ChannelDirectory = {
  structureId: 'brannock-mere',
  hasLogger: (l) => l === 'span1-north' || l === 'pier-temp',
  hasChannel: (l, c) =>
    (l === 'span1-north' && ['ch01', 'ch02', 'ch07'].includes(c)) || (l === 'pier-temp' && c === 't01'),
};

export const SCAN_TOPIC = 'strainward/brannock-mere/span1-north/scan';

export function raw(payload: string | Uint8Array, topic = SCAN_TOPIC, arrivalMs = 1_741_944_414_000): RawMessage {
  return { topic, payload: typeof payload === 'string' ? new TextEncoder().encode(payload) : payload, arrivalMs };
}
