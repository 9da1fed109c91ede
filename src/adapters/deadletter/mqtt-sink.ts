import type { Publish } from '../mqtt/connection.js';
import type { DeadLetter } from '../../model/rejection.js';
import type { DeadLetterSink } from './sink.js';

export const DEFAULT_DEAD_LETTER_TOPIC = 'strainward/{structure}/deadletter';

/**
 * Publishes each dead letter as JSON on a topic (`{structure}` replaced), QoS 1, not retained.
 * Resolves on the broker's PUBACK.
 */
export class MqttDeadLetterSink implements DeadLetterSink {
  readonly topic: string;

  constructor(private readonly publish: Publish, structureId: string, topicTemplate = DEFAULT_DEAD_LETTER_TOPIC) {
    if (/[+#]/.test(topicTemplate) || /[+#/]/.test(structureId)) {
      throw new RangeError(`dead-letter topic "${topicTemplate}" / structure "${structureId}" must not contain wildcards`);
    }
    this.topic = topicTemplate.replaceAll('{structure}', structureId);
  }

  write(deadLetter: DeadLetter): Promise<void> {
    return this.publish(this.topic, JSON.stringify(deadLetter), { qos: 1, retain: false });
  }
}
