/** One try at sending. */
export interface DeliveryAttempt {
  attempt: number;
  /** HTTP status, or null when no response came (network error, timeout) or for MQTT. */
  httpStatus: number | null;
  error: string | null;
  latencyMs: number;
}

/** What happened to one delivery: every attempt, the outcome and the total latency. */
export interface DeliveryRecord {
  recipientId: string;
  channel: 'mqtt' | 'webhook' | 'log';
  /** Topic, URL or `log`. */
  target: string;
  alarmId: string;
  transition: string;
  status: 'delivered' | 'failed';
  attemptCount: number;
  attempts: DeliveryAttempt[];
  /** From the first attempt's start to the outcome, ms. */
  latencyMs: number;
  /** When the delivery started, epoch ms (injected clock). */
  startedMs: number;
}
