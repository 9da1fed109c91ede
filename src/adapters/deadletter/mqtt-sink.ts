import type { Publish } from '../mqtt/connection.js';
import type { DeadLetter } from '../../model/rejection.js';
import { deadLetterCopy, MIN_COPY_BYTES } from './mqtt-copy.js';
import type { DeadLetterSink } from './sink.js';

export const DEFAULT_DEAD_LETTER_TOPIC = 'strainward/{structure}/deadletter';
/** Default limit of a copy's whole MQTT packet, bytes: far above a refused scan's notice, far below common broker limits. */
export const DEFAULT_DEAD_LETTER_PACKET_BYTES = 16_384;

/**
 * Publishes a capped copy of each dead letter as JSON on a topic (`{structure}` replaced), QoS 1,
 * not retained: reasons, size, SHA-256 and an excerpt, the whole PUBLISH packet at most
 * `maxPacketBytes` (set it no higher than the broker's max_packet_size, which would otherwise
 * drop the connection). The whole original goes to the dead-letter file. Resolves on the broker's PUBACK.
 */
export class MqttDeadLetterSink implements DeadLetterSink {
  readonly topic: string;
  private readonly maxPayloadBytes: number;

  constructor(private readonly publish: Publish, structureId: string, topicTemplate = DEFAULT_DEAD_LETTER_TOPIC, maxPacketBytes = DEFAULT_DEAD_LETTER_PACKET_BYTES) {
    if (/[+#]/.test(topicTemplate) || /[+#/]/.test(structureId)) {
      throw new RangeError(`dead-letter topic "${topicTemplate}" / structure "${structureId}" must not contain wildcards`);
    }
    this.topic = topicTemplate.replaceAll('{structure}', structureId);
    // PUBLISH overhead: fixed header (1 + up to 4 length bytes), topic (2 + its bytes), packet id (2), MQTT 5 properties length (1).
    this.maxPayloadBytes = maxPacketBytes - (10 + Buffer.byteLength(this.topic, 'utf8'));
    if (this.maxPayloadBytes < MIN_COPY_BYTES) {
      throw new RangeError(`dead-letter packet limit ${maxPacketBytes} bytes leaves less than ${MIN_COPY_BYTES} bytes for the copy on "${this.topic}"`);
    }
  }

  write(deadLetter: DeadLetter): Promise<void> {
    return this.publish(this.topic, JSON.stringify(deadLetterCopy(deadLetter, this.maxPayloadBytes)), { qos: 1, retain: false });
  }
}
